/**
 * Writes the demo files in matches/ from the invented scenario
 * (tools/demo-scenario.ts) with a seeded random source, so the output is the
 * same on every machine:
 *   matches/playtest-trials.csv   synthetic playtest, one row per round
 *   matches/*.lobby.json          example lobbies
 *   matches/cup-final.lobby-servers.json  one match's latencies to three candidate servers
 *   matches/league-rules.json     the league's rules
 * Run: npm run demo:generate   (then `lagparity fit` writes matches/model.json)
 */
import { createHash } from 'node:crypto';
import { writeFileSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { createRandomSource, standardNormalDraw } from '../src/random.js';
import { GROUND_TRUTH, HANDLES, TEAMS, groundTruthPredictor } from './demo-scenario.js';

const out = process.argv[2] ?? 'matches';
mkdirSync(out, { recursive: true });
const random = createRandomSource(20261201);
const logistic = (value: number) => 1 / (1 + Math.exp(-value));

function binomialDraw(attempts: number, probability: number): number {
  let hits = 0;
  for (let index = 0; index < attempts; index += 1) if (random() < probability) hits += 1;
  return hits;
}

// The playtest: 36 testers, each at their own home latency, with latency
// injected at six levels, five compensation scales and three difficulties;
// one round of 20 shots per condition.
const coefficients = GROUND_TRUTH.coefficients;
const lines = ['player,latency_ms,scale,difficulty,hits,attempts'];
const injected = [0, 40, 80, 120, 160, 200];
const scales = [1, 1.25, 1.5, 1.75, 2];
for (let tester = 0; tester < 36; tester += 1) {
  const id = `tester-${String(tester + 1).padStart(2, '0')}`;
  const home = 8 + 30 * random();
  const skill = GROUND_TRUTH.playerSkillSd * standardNormalDraw(random);
  for (const added of injected) {
    for (const scale of scales) {
      for (const difficulty of GROUND_TRUTH.difficultyLevels) {
        const latency = Math.round((home + added + 4 * Math.abs(standardNormalDraw(random))) * 10) / 10;
        const predictor = groundTruthPredictor(latency, scale, difficulty) + skill;
        const hits = binomialDraw(20, logistic(predictor));
        lines.push(`${id},${latency},${scale},${difficulty},${hits},20`);
      }
    }
  }
}
const trialsText = `${lines.join('\n')}\n`;
writeFileSync(join(out, 'playtest-trials.csv'), trialsText);


function samples(base: number, jitter: number, spikeChance: number, count = 32): number[] {
  const values: number[] = [];
  for (let index = 0; index < count; index += 1) {
    let value = base + jitter * Math.abs(standardNormalDraw(random));
    if (random() < spikeChance) value += 60 + 80 * random();
    values.push(Math.round(value * 10) / 10);
  }
  return values;
}

const writeJson = (name: string, value: unknown) => writeFileSync(join(out, name), `${JSON.stringify(value, null, 2)}\n`);
let handle = 0;
const nextHandle = () => HANDLES[handle++ % HANDLES.length] as string;
const team = (name: string, latencies: number[]) => latencies.map((latency) => ({ id: nextHandle(), team: name, latency_ms: latency }));

writeJson('even-5v5.lobby.json', {
  format: 'lagparity/lobby@1',
  match_id: 'harbourline-s3-w04-herons-foxes',
  attribute: 'hit_area',
  difficulty: 'veteran',
  players: [...team(TEAMS[0], [18, 24, 31, 42, 55]), ...team(TEAMS[1], [21, 27, 36, 48, 63])],
});
writeJson('far-player-5v5.lobby.json', {
  format: 'lagparity/lobby@1',
  match_id: 'harbourline-s3-w05-owls-stags',
  attribute: 'hit_area',
  difficulty: 'veteran',
  players: [...team(TEAMS[2], [16, 22, 29, 35, 44]), ...team(TEAMS[3], [19, 26, 33, 47, 205])],
});
writeJson('free-for-all-12.lobby.json', {
  format: 'lagparity/lobby@1',
  match_id: 'harbourline-open-ffa-0117',
  attribute: 'timing_window',
  difficulty: 'standard',
  players: Array.from({ length: 12 }, (_, index) => ({ id: nextHandle(), latency_ms: samples(12 + index * 14, 6, index % 4 === 3 ? 0.2 : 0.05) })),
});
writeJson('ineligible-player.lobby.json', {
  format: 'lagparity/lobby@1',
  match_id: 'harbourline-s3-w06-herons-stags',
  attribute: 'hit_area',
  difficulty: 'elite',
  players: [...team(TEAMS[0], [20, 28, 34, 51, 66]), ...team(TEAMS[3], [23, 30, 39, 58, 262])],
});
writeJson('sampled-3v3.lobby.json', {
  format: 'lagparity/lobby@1',
  match_id: 'harbourline-cup-r1-foxes-owls',
  attribute: 'timing_window',
  difficulty: 'standard',
  players: [
    ...[14, 25, 38].map((base) => ({ id: nextHandle(), team: TEAMS[1], latency_ms: samples(base, 5, 0.15) })),
    ...[18, 30, 52].map((base) => ({ id: nextHandle(), team: TEAMS[2], latency_ms: samples(base, 5, 0.15) })),
  ],
});
writeJson('league-rules.json', {
  format: 'lagparity/rules@1',
  scale_floor: 1,
  scale_cap: 1.5,
  max_scale_ratio: null,
  latency_limit_ms: 220,
  accepted_gap: 0.02,
  quantisation_step: null,
  soft_cap: { above: 1.35, fraction: 0.5 },
  latency_estimator: { percentile: 10 },
  accepted_duel_deviation: 0.05,
  accepted_team_gap: 0.02,
  accepted_exploit_gain: 0.01,
});
// The ground truth as a model file, labelled so: what a perfect fit would give.
const names = ['intercept', 'latency', 'log_scale', 'difficulty[veteran]', 'difficulty[elite]', 'latency_x_log_scale'];
writeJson('ground-truth.model.json', {
  format: 'lagparity/model@1',
  label: 'GROUND TRUTH of the synthetic demo playtest (not a fit): the model tools/generate-demo.ts draws from, without the player skill offsets',
  family: 'binomial',
  link: GROUND_TRUTH.link,
  terms: GROUND_TRUTH.terms,
  difficulty: { kind: 'levels', levels: GROUND_TRUTH.difficultyLevels, reference: GROUND_TRUTH.reference },
  coefficients: {
    names,
    estimates: names.map((name) => coefficients[name]),
    covariance: names.map(() => names.map(() => 0)),
    covariance_kind: 'assumed',
  },
  training: {
    latency_ms: { min: 0, max: 250 },
    scale: { min: 1, max: 2 },
    difficulty: [...GROUND_TRUTH.difficultyLevels],
    rows: lines.length - 1,
    attempts: (lines.length - 1) * 20,
    players: 36,
  },
  provenance: {
    file: 'playtest-trials.csv',
    rows: lines.length - 1,
    sha256: createHash('sha256').update(trialsText).digest('hex'),
    created_by: 'tools/generate-demo.ts',
  },
});
// The cup final: the same ten players, measured to the three servers the league can start a match on (no random
// draws, so the files above stay as they were). The Herons play from the coast, the Stags from the western reaches.
const herons = ['brinewick', 'tallowmere', 'quillfen', 'ashgrove', 'morrowlit'];
const stags = ['vellumcrest', 'wickerby', 'yarrowind', 'cinderfell', 'driftmoor'];
const toServers = (east: number, central: number, west: number) => ({ 'harbour-east': east, 'midland-central': central, 'reach-west': west });
writeJson('cup-final.lobby-servers.json', {
  format: 'lagparity/lobby-servers@1',
  match_id: 'harbourline-cup-final-herons-stags',
  attribute: 'hit_area',
  difficulty: 'elite',
  servers: ['harbour-east', 'midland-central', 'reach-west'],
  players: [
    ...herons.map((id, index) => ({ id, team: TEAMS[0], latency_ms: toServers(14 + 4 * index, 48 + 5 * index, 96 + 7 * index) })),
    ...stags.map((id, index) => ({ id, team: TEAMS[3], latency_ms: toServers(118 + 9 * index + (index === 4 ? 95 : 0), 52 + 6 * index, 17 + 5 * index) })),
  ],
});
console.error(`wrote the demo files to ${out}/`);
