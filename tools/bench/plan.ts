/**
 * `npm run bench:plan`: the size study's simulations, as a user runs them.
 * Issue 23's target: 1,000 simulated studies of 24 players x 72 rounds,
 * fitted, in at most 10 s on this two-core machine.
 *
 * The study: 6 latency levels x 3 scales x 2 difficulties (36 conditions),
 * 2 repetitions (72 rounds a player), 20 attempts a round, 24 players,
 * entered effects, 1,000 studies: `lagparity plan size ... --players 24:24:1
 * --studies 1000 --threads T --json`, the built CLI spawned with plain node
 * (whole process: start, workers, simulation, fits, summary). Five runs on
 * two threads (the target) and three on one, medians and every run printed,
 * under `/usr/bin/time` when available (user + system CPU beside the wall
 * time). A fixed CPU loop is timed first so that a reader can tell a slow
 * minute: this machine is shared, and its speed moves by a third from minute
 * to minute. Every run's JSON must be the same bytes (the answer does not
 * depend on the threads); the bench stops if not.
 *
 * Usage: npm run build && npm run bench:plan [-- --runs 5]
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync } from 'node:fs';
import { join } from 'node:path';

const root = join(import.meta.dirname, '..', '..');
const cli = join(root, 'dist', 'bin', 'lagparity.js');
const argv = process.argv.slice(2);
const runsOption = argv.indexOf('--runs');
const runs = runsOption >= 0 ? Number(argv[runsOption + 1]) : 5;

const study = [
  'plan', 'size',
  '--latency', '0,50,100,150,200,250', '--scale', '1,1.5,2', '--difficulty', 'standard,elite',
  '--repetitions', '2', '--participants', '24', '--round-seconds', '25', '--attempts', '20',
  '--hit-rate', '0.7,0.5', '--change-per-100ms', '-0.15', '--scale-hit-rate', '1.5:0.8',
  '--at-latency', '125', '--width', '1', '--players', '24:24:1', '--studies', '1000', '--seed', '23', '--json',
];

/** A fixed integer loop, to tell a slow minute of the machine from a slow change. */
function calibration(): number {
  const start = performance.now();
  let mixed = 0;
  for (let i = 0; i < 200_000_000; i += 1) mixed = (mixed * 31 + i) | 0;
  if (mixed === 42) process.stdout.write('');
  return performance.now() - start;
}

interface Run {
  readonly wall: number;
  readonly cpu: number | null;
  readonly digest: string;
}

function runOnce(threads: number): Run {
  const timed = existsSync('/usr/bin/time');
  const command = timed ? '/usr/bin/time' : process.execPath;
  const args = timed ? ['-f', 'TIME %e %U %S', process.execPath, cli, ...study, '--threads', String(threads)] : [cli, ...study, '--threads', String(threads)];
  const start = performance.now();
  const child = spawnSync(command, args, { cwd: root, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  const wall = (performance.now() - start) / 1000;
  if (child.status !== 0) throw new Error(`plan size exited ${child.status}: ${child.stderr}`);
  const line = child.stderr.split('\n').find((text) => text.startsWith('TIME '));
  const [, elapsed, user, system] = line?.split(' ').map(Number) ?? [];
  return { wall: elapsed ?? wall, cpu: user === undefined || system === undefined ? null : user + system, digest: createHash('sha256').update(child.stdout).digest('hex') };
}

if (!existsSync(cli)) {
  process.stderr.write('bench:plan requires the built CLI: run `npm run build` first\n');
  process.exit(2);
}
const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)] as number;
process.stdout.write(`calibration loop: ${calibration().toFixed(0)} ms\n`);
process.stdout.write('lagparity plan size: 1,000 studies of 24 players x 72 rounds (20 attempts a round), each simulated and fitted (CR1 by player)\n');
const digests = new Set<string>();
for (const [threads, count] of [[2, runs], [1, Math.max(1, Math.ceil(runs / 2))]] as const) {
  const results: Run[] = [];
  for (let run = 0; run < count; run += 1) results.push(runOnce(threads));
  for (const result of results) digests.add(result.digest);
  const walls = results.map((result) => result.wall);
  const cpus = results.flatMap((result) => (result.cpu === null ? [] : [result.cpu]));
  process.stdout.write(
    `  ${threads} thread${threads === 1 ? ' ' : 's'}: median ${median(walls).toFixed(2)} s wall${cpus.length > 0 ? `, ${median(cpus).toFixed(2)} s CPU` : ''}   (runs: ${walls.map((wall) => wall.toFixed(2)).join(', ')} s)${threads === 2 ? '   target <= 10 s' : ''}\n`,
  );
}
if (digests.size !== 1) throw new Error(`the runs gave ${digests.size} different answers; the answer must not depend on the threads`);
process.stdout.write('  every run gave the same JSON (sha256 equal)\n');
