/**
 * Writes matches/live-telemetry.csv: invented live telemetry of the
 * Harbourline Arena League's third season (tools/demo-scenario.ts), the
 * scales applied by the matchmaker from matches/model.json under
 * matches/league-rules.json, the hits drawn from the demo's ground truth
 * (docs/demo.md). Seeded: the same file on every machine.
 *
 * One row per player per match (five-a-side lobbies, 12 match days, 160
 * shots a match, the latency the server measured for the match). Run after
 * matches/model.json is fitted: npm run demo:live
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { compileModel } from '../src/model/compile.js';
import { compileRules } from '../src/solver/rules.js';
import { GROUND_TRUTH, HANDLES, groundTruthPredictor } from './demo-scenario.js';
import { simulateSeason } from './simulate-season.js';

const folder = process.argv[2] ?? 'matches';
const model = compileModel(JSON.parse(readFileSync(join(folder, 'model.json'), 'utf8')), 'model.json');
const rules = compileRules(JSON.parse(readFileSync(join(folder, 'league-rules.json'), 'utf8')), 'league-rules.json');
if (!model.ok || !rules.ok) throw new Error('matches/model.json and matches/league-rules.json must exist and be valid (run npm run demo:generate and lagparity fit first)');

const levels = GROUND_TRUTH.difficultyLevels;
const season = simulateSeason({
  players: 240,
  matchDays: 12,
  lobbySize: 10,
  attemptsPerRound: 160,
  homeLatency: { min: 8, max: 150 },
  jitterMs: 5,
  skillSd: GROUND_TRUTH.playerSkillSd,
  difficulties: levels,
  model: model.value,
  rules: rules.value,
  truth: groundTruthPredictor,
  seed: 20270301,
  id: (index) => `${HANDLES[index % HANDLES.length] as string}-${Math.floor(index / HANDLES.length) + 1}`,
});
const lines = ['player,latency_ms,scale,difficulty,hits,attempts'];
for (let row = 0; row < season.rounds; row += 1) {
  // Scales as the matchmaker applied them, to six decimals.
  lines.push(
    `${season.players[season.player[row] as number] as string},${season.latency[row]},${Number((season.scale[row] as number).toFixed(6))},${levels[season.difficulty[row] as number] as string},${season.hits[row]},${season.attempts[row]}`,
  );
}
writeFileSync(join(folder, 'live-telemetry.csv'), `${lines.join('\n')}\n`);
process.stderr.write(`wrote ${join(folder, 'live-telemetry.csv')}: ${season.rounds} matches of ${season.players.length} players\n`);
