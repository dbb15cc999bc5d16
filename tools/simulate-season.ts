/**
 * Simulated live play with a known truth, seeded: a season of rounds in
 * lobbies whose scales the solver computed from a model, with hits drawn
 * from a truth that may differ from it. The field check's simulation tests
 * (test/field/simulated-seasons.test.ts), the demo's live telemetry
 * (tools/generate-demo.ts) and `npm run bench:field` all draw from here.
 *
 * A season: `players` players, each with a home latency drawn uniformly from
 * `homeLatency` and a skill offset N(0, skillSd^2) on the logit scale (drawn
 * once). Each match day every player plays one round: the players are
 * shuffled (Fisher-Yates) into lobbies of `lobbySize`; a lobby gets a
 * difficulty uniformly from `difficulties`; each member's latency for the
 * round is their home latency plus |N(0, jitterMs^2)|, rounded to 0.1 ms; the
 * lobby is solved with `solveScalesInto` under the rules (one latency per
 * player); each member then makes `attemptsPerRound` attempts, each a hit
 * with probability g^-1(truth(latency, scale, difficulty) + skill) (the logit
 * link), drawn as one binomial count per round by inversion.
 */
import type { GroupedTrials } from '../src/model/collapsed-trials.js';
import type { CompiledModel } from '../src/model/compile.js';
import { createRandomSource, type RandomSource, standardNormalDraw } from '../src/random.js';
import type { CompiledRules } from '../src/solver/rules.js';
import { solveScalesInto } from '../src/solver/solve-scales-into.js';

export interface SeasonSpec {
  readonly players: number;
  readonly matchDays: number;
  readonly lobbySize: number;
  readonly attemptsPerRound: number;
  readonly homeLatency: { readonly min: number; readonly max: number };
  readonly jitterMs: number;
  readonly skillSd: number;
  /** Difficulty levels of the model the lobbies draw from. */
  readonly difficulties: readonly string[];
  /** The model the scales are computed from, and the rules. */
  readonly model: CompiledModel;
  readonly rules: CompiledRules;
  /** The true linear predictor (logit) of an average player. */
  readonly truth: (latency: number, scale: number, difficulty: string) => number;
  readonly seed: number;
  /** Player ids (default `p0001`, ...). */
  readonly id?: (index: number) => string;
}

/** One row per round, in columns. */
export interface Season {
  readonly players: readonly string[];
  readonly rounds: number;
  readonly player: Int32Array;
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  /** Index into the spec's `difficulties`. */
  readonly difficulty: Int32Array;
  readonly hits: Float64Array;
  readonly attempts: Float64Array;
}

/** A binomial count by inversion of its CDF (one uniform). */
export function binomialDraw(random: RandomSource, attempts: number, probability: number): number {
  const p = Math.min(1 - 1e-12, Math.max(1e-12, probability));
  const ratio = p / (1 - p);
  let mass = (1 - p) ** attempts;
  let cumulative = mass;
  const uniform = random();
  let hits = 0;
  while (uniform > cumulative && hits < attempts) {
    mass *= ((attempts - hits) / (hits + 1)) * ratio;
    hits += 1;
    cumulative += mass;
  }
  return hits;
}

export function simulateSeason(spec: SeasonSpec): Season {
  const random = createRandomSource(spec.seed);
  const id = spec.id ?? ((index: number) => `p${String(index + 1).padStart(4, '0')}`);
  const players = Array.from({ length: spec.players }, (_, index) => id(index));
  const home = Float64Array.from(players, () => spec.homeLatency.min + (spec.homeLatency.max - spec.homeLatency.min) * random());
  const skill = Float64Array.from(players, () => spec.skillSd * standardNormalDraw(random));
  const rounds = spec.players * spec.matchDays;
  const season = {
    players,
    rounds,
    player: new Int32Array(rounds),
    latency: new Float64Array(rounds),
    scale: new Float64Array(rounds),
    difficulty: new Int32Array(rounds),
    hits: new Float64Array(rounds),
    attempts: new Float64Array(rounds).fill(spec.attemptsPerRound),
  };
  const order = Int32Array.from(players, (_, index) => index);
  const latencies = new Float64Array(spec.lobbySize);
  const scales = new Float64Array(spec.lobbySize);
  let row = 0;
  for (let day = 0; day < spec.matchDays; day += 1) {
    for (let i = order.length - 1; i > 0; i -= 1) {
      const j = Math.floor(random() * (i + 1));
      const saved = order[i] as number;
      order[i] = order[j] as number;
      order[j] = saved;
    }
    for (let first = 0; first < order.length; first += spec.lobbySize) {
      const size = Math.min(spec.lobbySize, order.length - first);
      const difficulty = Math.floor(random() * spec.difficulties.length);
      const level = spec.difficulties[difficulty] as string;
      const lobbyLatencies = latencies.subarray(0, size);
      const lobbyScales = scales.subarray(0, size);
      for (let k = 0; k < size; k += 1) {
        const player = order[first + k] as number;
        lobbyLatencies[k] = Math.round(((home[player] as number) + spec.jitterMs * Math.abs(standardNormalDraw(random))) * 10) / 10;
      }
      const solved = solveScalesInto(spec.model, level, lobbyLatencies, spec.rules, lobbyScales);
      if (solved.status !== 'solved') throw new Error(`the season's lobby cannot be solved: ${solved.issues.map((issue) => issue.message).join('; ')}`);
      for (let k = 0; k < size; k += 1) {
        const player = order[first + k] as number;
        const latency = lobbyLatencies[k] as number;
        const scale = lobbyScales[k] as number;
        const eta = spec.truth(latency, scale, level) + (skill[player] as number);
        season.player[row] = player;
        season.latency[row] = latency;
        season.scale[row] = scale;
        season.difficulty[row] = difficulty;
        season.hits[row] = binomialDraw(random, spec.attemptsPerRound, 1 / (1 + Math.exp(-eta)));
        row += 1;
      }
    }
  }
  return season;
}

/** The season as a fit reads a per-round file with a player column: one group per round. */
export function seasonTrials(season: Season, difficulties: readonly string[], file = 'season.csv'): GroupedTrials {
  return {
    file,
    shape: 'per_round',
    difficulty: { kind: 'levels', levels: difficulties },
    players: season.players,
    groups: {
      rows: season.rounds,
      latency: season.latency,
      scale: season.scale,
      difficulty: Float64Array.from(season.difficulty),
      player: season.player,
      successes: season.hits,
      attempts: season.attempts,
      weight: new Float64Array(season.rounds).fill(1),
      sourceRows: season.rounds,
    },
  };
}

/** The model's linear predictor as a truth function (for levels models). */
export function modelTruth(model: CompiledModel): (latency: number, scale: number, difficulty: string) => number {
  const lines = new Map<string, { base: number; basePerMs: number; scaleSlope: number; scaleSlopePerMs: number }>();
  return (latency, scale, difficulty) => {
    let line = lines.get(difficulty);
    if (line === undefined) {
      const found = model.lineAt(difficulty);
      if (!found.ok) throw new Error(found.issues.map((issue) => issue.message).join('; '));
      line = found.value;
      lines.set(difficulty, line);
    }
    const term = model.scaleForm === 'log' ? Math.log(scale) : scale;
    return line.base + line.basePerMs * latency + (line.scaleSlope + line.scaleSlopePerMs * latency) * term;
  };
}
