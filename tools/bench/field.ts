/**
 * `npm run bench:field`: whole-process time of `lagparity field-check` on
 * 1,000,000 live rows of 2,000 players, against one fit of the same rows
 * (`lagparity fit FILE --folds 0 --lr-tests none --no-baseline`, the fit
 * bench's "one fit with SEs", clustered by player and not) and the default
 * `lagparity fit FILE`, measured in the same run. The check runs four fits
 * (band offsets, calibration in the large, calibration slope, the refit;
 * the last three on worker threads, by default as many as the processors
 * available, at most 4) where the first reference runs one.
 *
 * The rows are per-attempt (`hit`), drawn with a seeded source by
 * tools/simulate-season.ts: 2,000 players (home latency 8-150 ms, skill
 * N(0, 0.15^2)) in random 10-player lobbies, the scales from matches/model.json
 * under matches/league-rules.json, hits from the demo's ground truth. Two shapes:
 *
 * - per-round latency: 25 rounds of 20 shots a player, every shot of a round at
 *   the round's latency (how servers usually log it): about 50,000 distinct
 *   points after grouping;
 * - per-shot latency: every shot its own round (its own latency and scale): about
 *   a million distinct points, the worst case for grouping.
 *
 * Each command runs `--runs` times (default 3) in alternation, the median is
 * judged, and every run is printed; a fixed CPU loop gauges the machine's speed
 * (this machine's speed varies by a third from minute to minute, and other work
 * shares its two cores). Usage: npm run bench:field [-- --runs 5] [--keep]
 */
import { spawnSync } from 'node:child_process';
import { createWriteStream, existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { once } from 'node:events';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { groundTruthPredictor, GROUND_TRUTH } from '../demo-scenario.js';
import { simulateSeason } from '../simulate-season.js';
import { calibrationLoop } from './gauge.js';

const root = join(import.meta.dirname, '..', '..');
const cli = join(root, 'dist', 'bin', 'lagparity.js');
const args = process.argv.slice(2);
const runsArgument = args[args.indexOf('--runs') + 1];
const runs = args.includes('--runs') && runsArgument !== undefined ? Math.max(1, Number(runsArgument)) : 3;
const keep = args.includes('--keep');
const ROWS = 1_000_000;
const PLAYERS = 2_000;


const model = compileModel(JSON.parse(readFileSync(join(root, 'matches', 'model.json'), 'utf8')));
const rules = compileRules(JSON.parse(readFileSync(join(root, 'matches', 'league-rules.json'), 'utf8')));
if (!model.ok || !rules.ok) throw new Error('matches/model.json and matches/league-rules.json must be valid');
const levels = GROUND_TRUTH.difficultyLevels;

/** Write the season as per-attempt rows (each round's hits first, then its misses). */
async function generate(path: string, shotsPerRound: number, seed: number): Promise<void> {
  const season = simulateSeason({
    players: PLAYERS,
    matchDays: ROWS / PLAYERS / shotsPerRound,
    lobbySize: 10,
    attemptsPerRound: shotsPerRound,
    homeLatency: { min: 8, max: 150 },
    jitterMs: 5,
    skillSd: GROUND_TRUTH.playerSkillSd,
    difficulties: levels,
    model: model.ok ? model.value : (undefined as never),
    rules: rules.ok ? rules.value : (undefined as never),
    truth: groundTruthPredictor,
    seed,
    id: (index) => `player-${String(index + 1).padStart(4, '0')}`,
  });
  const out = createWriteStream(path);
  out.write('player,latency_ms,scale,difficulty,hit\n');
  let chunk = '';
  for (let row = 0; row < season.rounds; row += 1) {
    const prefix = `${season.players[season.player[row] as number] as string},${season.latency[row]},${Number((season.scale[row] as number).toFixed(6))},${levels[season.difficulty[row] as number] as string},`;
    const hits = season.hits[row] as number;
    for (let shot = 0; shot < shotsPerRound; shot += 1) chunk += `${prefix}${shot < hits ? 1 : 0}\n`;
    if (chunk.length > 1 << 16) {
      if (!out.write(chunk)) await once(out, 'drain');
      chunk = '';
    }
  }
  out.end(chunk);
  await once(out, 'finish');
}

interface Measured {
  readonly seconds: number;
  readonly user: number;
  readonly mebibytes: number | null;
  readonly status: number | null;
}

function measure(commandArgs: readonly string[]): Measured {
  const timed = existsSync('/usr/bin/time');
  const started = performance.now();
  const run = timed
    ? spawnSync('/usr/bin/time', ['-f', '%U %S %M', process.execPath, cli, ...commandArgs], { encoding: 'utf8', maxBuffer: 1 << 28 })
    : spawnSync(process.execPath, [cli, ...commandArgs], { encoding: 'utf8', maxBuffer: 1 << 28 });
  const seconds = (performance.now() - started) / 1000;
  const last = run.stderr.trim().split('\n').at(-1) ?? '';
  const match = timed ? /^([\d.]+) ([\d.]+) (\d+)$/.exec(last) : null;
  return {
    seconds,
    user: match === null ? Number.NaN : Number(match[1]) + Number(match[2]),
    mebibytes: match === null ? null : Number(match[3]) / 1024,
    status: run.status,
  };
}

function median(values: readonly number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)] as number;
}

if (!existsSync(cli)) {
  process.stderr.write('bench:field requires the built CLI: run `npm run build` first\n');
  process.exit(2);
}
const folder = mkdtempSync(join(tmpdir(), 'lagparity-bench-field-'));
const summary: string[] = [];
for (const [shape, shots, seed] of [['per-round latency', 20, 20270601], ['per-shot latency', 1, 20270602]] as const) {
  const file = join(folder, `live-${shots}.csv`);
  const generationStart = performance.now();
  await generate(file, shots, seed);
  process.stdout.write(`${shape}: generated ${ROWS.toLocaleString('en-GB')} rows of ${PLAYERS.toLocaleString('en-GB')} players (${(statSync(file).size / 2 ** 20).toFixed(1)} MiB) in ${((performance.now() - generationStart) / 1000).toFixed(1)} s\n`);
  process.stdout.write(`calibration loop: ${calibrationLoop().toFixed(0)} ms (about 170 ms on a quiet minute of the reference machine)\n`);
  const commands = {
    'fit (one fit with SEs, CR1 by player)': ['fit', file, '--folds', '0', '--lr-tests', 'none', '--no-baseline'],
    'fit (one fit with SEs, --cluster none)': ['fit', file, '--folds', '0', '--lr-tests', 'none', '--no-baseline', '--cluster', 'none'],
    'fit (the default command: + 3 LR refits, 5 CV refits, baseline)': ['fit', file],
    'field-check': ['field-check', file, '--model', join(root, 'matches', 'model.json'), '--rules', join(root, 'matches', 'league-rules.json'), '--json'],
  } as const;
  const results = new Map<string, Measured[]>(Object.keys(commands).map((name) => [name, []]));
  for (let run = 0; run < runs; run += 1) {
    for (const [name, commandArgs] of Object.entries(commands)) results.get(name)?.push(measure(commandArgs));
  }
  const medians = new Map<string, number>();
  for (const [name, measured] of results) {
    const wall = median(measured.map((entry) => entry.seconds));
    medians.set(name, wall);
    const failed = measured.find((entry) => entry.status !== 0 && !(name === 'field-check' && entry.status === 1));
    const line = `${shape}, ${name}: median ${wall.toFixed(2)} s wall, ${median(measured.map((entry) => entry.user)).toFixed(2)} s CPU, peak ${median(measured.map((entry) => entry.mebibytes ?? Number.NaN)).toFixed(0)} MiB [runs: ${measured.map((entry) => `${entry.seconds.toFixed(2)} s`).join(', ')}]${failed === undefined ? '' : ` (exit ${String(failed.status)})`}`;
    summary.push(line);
    process.stdout.write(`${line}\n`);
  }
  const check = medians.get('field-check') as number;
  for (const reference of ['fit (one fit with SEs, CR1 by player)', 'fit (one fit with SEs, --cluster none)', 'fit (the default command: + 3 LR refits, 5 CV refits, baseline)']) {
    const fit = medians.get(reference) as number;
    const verdict = `${shape}: field-check ${check.toFixed(2)} s against ${reference} ${fit.toFixed(2)} s: ${check <= fit ? 'within' : 'NOT within'} (ratio ${(check / fit).toFixed(2)})`;
    summary.push(verdict);
    process.stdout.write(`${verdict}\n`);
  }
  if (!keep) rmSync(file);
}
if (!keep) rmSync(folder, { recursive: true, force: true });
else process.stdout.write(`files kept in ${folder}\n`);
process.stdout.write(`\nsummary (whole process, CSV read included; medians of ${runs} alternating runs):\n${summary.join('\n')}\n`);
