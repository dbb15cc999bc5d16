/**
 * `npm run bench:solve`: how fast the lobby solver is.
 *
 * Prints, for lobbies of 10, 100 and 1,000 players with point latencies and
 * with 32 samples per player, views off and on: lobbies per second and the
 * median microseconds per lobby; then bulk player-solves per second with
 * `solveScalesInto` (point latencies) and `solveSampledScalesInto` (32
 * samples). Plain `process.hrtime.bigint()` loops after a warm-up; inputs
 * from a seeded source, so every run solves the same lobbies.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { compileModel } from '../../src/model/compile.js';
import { createRandomSource } from '../../src/random.js';
import { balanceLobby, type BalanceOptions } from '../../src/solver/balance-lobby.js';
import { compileRules } from '../../src/solver/rules.js';
import { solveSampledScalesInto, solveScalesInto } from '../../src/solver/solve-scales-into.js';
import type { LobbyFile } from '../../src/formats/lobby-file.js';
import { solveTargets } from './solve-targets.js';

const root = join(import.meta.dirname, '..', '..');
const modelResult = compileModel(JSON.parse(readFileSync(join(root, 'matches', 'model.json'), 'utf8')));
const leagueRules = JSON.parse(readFileSync(join(root, 'matches', 'league-rules.json'), 'utf8')) as Record<string, unknown>;
if (!modelResult.ok) throw new Error('matches/model.json does not compile');
const model = modelResult.value;
const rulesFor = (estimator: unknown) => {
  const result = compileRules({ ...leagueRules, latency_estimator: estimator });
  if (!result.ok) throw new Error('rules do not compile');
  return result.value;
};
const percentileRules = rulesFor({ percentile: 10 });
const pooledRules = rulesFor('all_samples');
/** The common case for a matchmaker: floor 1 and a cap, an eligibility limit, no soft cap or rounding. */
const plainRules = (() => {
  const result = compileRules({ format: 'lagparity/rules@1', scale_cap: 1.5, latency_limit_ms: 220, latency_estimator: { percentile: 10 } });
  if (!result.ok) throw new Error('rules do not compile');
  return result.value;
})();
const plainPooledRules = (() => {
  const result = compileRules({ format: 'lagparity/rules@1', scale_cap: 1.5, latency_limit_ms: 220, latency_estimator: 'all_samples' });
  if (!result.ok) throw new Error('rules do not compile');
  return result.value;
})();
const random = createRandomSource(2026);
const latency = () => 10 + 180 * random();

function lobbyOf(players: number, samples: number): LobbyFile {
  return {
    format: 'lagparity/lobby@1',
    match_id: `bench-${players}-${samples}`,
    attribute: 'hit_area',
    difficulty: 'veteran',
    players: Array.from({ length: players }, (_, index) => {
      const base = latency();
      return { id: `player-${index}`, team: index % 2 === 0 ? 'red' : 'blue', latency_ms: samples === 1 ? base : Array.from({ length: samples }, () => base + 25 * random() ** 3) };
    }),
  };
}

function time(run: () => void, minimumRuns: number, budgetMs: number): { perSecond: number; medianMicros: number; runs: number } {
  const warmUp = Math.max(3, Math.min(minimumRuns, 200));
  for (let index = 0; index < warmUp; index += 1) run();
  const durations: number[] = [];
  const start = process.hrtime.bigint();
  const deadline = start + BigInt(budgetMs) * 1_000_000n;
  for (;;) {
    const before = process.hrtime.bigint();
    run();
    const after = process.hrtime.bigint();
    durations.push(Number(after - before));
    if (durations.length >= minimumRuns && after >= deadline) break;
  }
  const total = Number(process.hrtime.bigint() - start);
  durations.sort((left, right) => left - right);
  return { perSecond: (durations.length * 1e9) / total, medianMicros: (durations[durations.length >> 1] as number) / 1000, runs: durations.length };
}

const allViews: BalanceOptions = { views: { duel: true, exploit: true, uncertainty: true } };
const format = (value: number, digits = 1) => value.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits });
const lines: string[] = solveTargets();
lines.push('');
if (process.argv.includes('--targets')) {
  process.stdout.write(`${lines.join('\n')}\n`);
  process.exit(0);
}
lines.push(`lagparity bench:solve on node ${process.version} (${process.arch}); model matches/model.json, rules matches/league-rules.json (soft cap) unless "plain" (floor 1, cap 1.5, limit 220 ms)`);
lines.push('');
lines.push('players  latencies              views   lobbies/s     median us   runs');
for (const players of [10, 100, 256]) {
  for (const [label, samples, rules] of [
    ['point, plain rules', 1, plainRules],
    ['point', 1, percentileRules],
    ['32 samples, p10', 32, percentileRules],
    ['32 samples, pooled', 32, pooledRules],
  ] as const) {
    const lobby = lobbyOf(players, samples);
    for (const views of [false, true]) {
      if (views && players === 256 && samples > 1) {
        lines.push(`${String(players).padStart(7)}  ${label.padEnd(21)}  on      (skipped: exploit view is O(players^2 x samples); npm run bench:limits times it at the lobby limit)`);
        continue;
      }
      const options = views ? allViews : {};
      const check = balanceLobby(lobby, model, rules, options);
      if (check.status === 'rejected') throw new Error(`bench lobby rejected: ${JSON.stringify(check.issues)}`);
      const figures = time(() => balanceLobby(lobby, model, rules, options), views ? 3 : 200, views ? 1500 : 1000);
      lines.push(`${String(players).padStart(7)}  ${label.padEnd(21)}  ${views ? 'on ' : 'off'}  ${format(figures.perSecond).padStart(12)}  ${format(figures.medianMicros).padStart(12)}  ${String(figures.runs).padStart(5)}`);
    }
  }
}
lines.push('');
lines.push('bulk (rules: "plain" = floor 1, cap 1.5, limit 220 ms; "league" = matches/league-rules.json, with its soft cap)');
lines.push('path                                              players/call  player-solves/s');
for (const [ruleLabel, rules] of [
  ['plain', plainRules],
  ['league', percentileRules],
] as const) {
  for (const players of [1000, 100_000]) {
    const latencies = Float64Array.from({ length: players }, latency);
    const out = new Float64Array(players);
    const figures = time(() => solveScalesInto(model, 'veteran', latencies, rules, out), 50, 1000);
    lines.push(`solveScalesInto, point latencies, ${ruleLabel.padEnd(6)}         ${String(players).padStart(12)}  ${format(figures.perSecond * players, 0).padStart(15)}`);
  }
}
for (const [label, rules] of [
  ['p10, plain', plainRules],
  ['pooled, plain', plainPooledRules],
  ['p10, league', percentileRules],
  ['pooled, league', pooledRules],
] as const) {
  const players = 10_000;
  const samples = Float64Array.from({ length: players * 32 }, (_, index) => 10 + (index >> 5) * 0.017 + 25 * random() ** 3);
  const out = new Float64Array(players);
  const figures = time(() => solveSampledScalesInto(model, 'veteran', samples, 32, rules, out), 5, 1000);
  lines.push(`solveSampledScalesInto, 32 samples, ${label.padEnd(14)} ${String(players).padStart(6)}  ${format(figures.perSecond * players, 0).padStart(15)}`);
}
process.stdout.write(`${lines.join('\n')}\n`);
