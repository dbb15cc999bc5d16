/**
 * `npm run bench:solve` runs through here: bundles a bench script with esbuild
 * (packages stay in node_modules) into `bench/out/` and runs it with plain
 * node, passing the arguments on.
 *
 * Why not tsx: its module loader runs in a thread of its own, which on this
 * two-core machine shares the cores with the code being timed. The same
 * 100-player lobby measured 25-40 us a solve under tsx and 20 us compiled, in
 * alternating runs; a matchmaker runs compiled JavaScript.
 *
 * Usage: tsx tools/bench/run-bundled.ts <script name in tools/bench> [args...]
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { build } from 'esbuild';

const root = join(import.meta.dirname, '..', '..');
const [name, ...rest] = process.argv.slice(2);
if (name === undefined || !/^[a-z-]+$/.test(name)) {
  process.stderr.write('usage: tsx tools/bench/run-bundled.ts <bench script name, e.g. solve> [args...]\n');
  process.exit(2);
}
const outDirectory = join(root, 'bench', 'out');
mkdirSync(outDirectory, { recursive: true });
const outfile = join(outDirectory, `${name}.mjs`);
await build({ entryPoints: [join(root, 'tools', 'bench', `${name}.ts`)], bundle: true, platform: 'node', format: 'esm', packages: 'external', outfile, logLevel: 'error', define: { 'import.meta.dirname': JSON.stringify(join(root, 'tools', 'bench')) } });
const run = spawnSync(process.execPath, [outfile, ...rest], { stdio: 'inherit', cwd: root });
process.exit(run.status ?? 1);
