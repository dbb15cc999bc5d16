/**
 * `npm run bench:import`: how long `import('lagparity')` and
 * `require('lagparity')` take in a fresh Node process (issue 16's target: at
 * most 60 ms). Each is timed in 15 processes, from just before the import to
 * just after (Node's own start excluded); prints the best, the median and the
 * slowest, beside the time of importing one of Node's own modules as the
 * floor. Run after `npm run build`.
 */
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';

const root = join(import.meta.dirname, '..', '..');
const esm = join(root, 'dist', 'lib', 'lagparity.js');
const cjs = join(root, 'dist', 'cjs', 'index.cjs');
const cases = [
  ['import("lagparity")', `const t = process.hrtime.bigint(); await import(${JSON.stringify(esm)}); process.stdout.write(String(Number(process.hrtime.bigint() - t) / 1e6));`, true],
  ['require("lagparity")', `const t = process.hrtime.bigint(); require(${JSON.stringify(cjs)}); process.stdout.write(String(Number(process.hrtime.bigint() - t) / 1e6));`, false],
  ['import("node:zlib") (floor)', `const t = process.hrtime.bigint(); await import('node:zlib'); process.stdout.write(String(Number(process.hrtime.bigint() - t) / 1e6));`, true],
] as const;
const lines = ['import time in a fresh process, 15 processes each: best / median / slowest (ms)'];
for (const [label, code, module] of cases) {
  const times: number[] = [];
  for (let run = 0; run < 15; run += 1) {
    const result = spawnSync(process.execPath, module ? ['--input-type=module', '-e', code] : ['-e', code], { encoding: 'utf8' });
    if (result.status !== 0) throw new Error(`${label} failed: ${result.stderr}`);
    times.push(Number(result.stdout));
  }
  times.sort((left, right) => left - right);
  lines.push(`  ${label.padEnd(30)} ${(times[0] as number).toFixed(1).padStart(6)} / ${(times[7] as number).toFixed(1).padStart(6)} / ${(times[14] as number).toFixed(1).padStart(6)}${label.startsWith('import("lagparity")') ? '   (target <= 60 ms)' : ''}`);
}
process.stdout.write(`${lines.join('\n')}\n`);
