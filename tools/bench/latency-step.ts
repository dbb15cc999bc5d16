/**
 * `npm run bench:latency-step`: how much grouping latency to a resolution
 * moves the estimates (docs/method.md, section 1). Fits the bench's
 * generated per-attempt file (tools/bench/attempts-file.ts; 1,000,000 rows of
 * 2,000 players at 0.01 ms) exactly, with the CSV reader, and grouped through
 * DuckDB at each resolution, and prints per coefficient the shift of the
 * estimate in units of its cluster-robust standard error, and the shift of
 * that error, relative. Needs `npm run build`.
 *
 * Usage: npm run bench:latency-step [-- --rows 1000000 --steps 0.1,0.5,1,2,5]
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeAttemptsFile } from './attempts-file.js';

const root = join(import.meta.dirname, '..', '..');
const cli = join(root, 'dist', 'bin', 'lagparity.js');
const args = process.argv.slice(2);
const rowsArgument = args[args.indexOf('--rows') + 1];
const stepsArgument = args[args.indexOf('--steps') + 1];
const rows = args.includes('--rows') && rowsArgument !== undefined ? Number(rowsArgument) : 1_000_000;
const steps = args.includes('--steps') && stepsArgument !== undefined ? stepsArgument.split(',').map(Number) : [0.1, 0.5, 1, 2, 5];

interface Coefficient {
  readonly name: string;
  readonly estimate: number;
  readonly robust: { readonly std_error: number } | null;
}
interface Fitted {
  readonly coefficients: Coefficient[];
  readonly fittedRows: number;
}

function fit(file: string, extra: readonly string[]): Fitted {
  const run = spawnSync(process.execPath, [cli, 'fit', file, '--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline', '--reference', 'standard', ...extra], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (run.status !== 0) throw new Error(`fit ${extra.join(' ')} failed: ${run.stderr}`);
  const report = (JSON.parse(run.stdout) as { report: { coefficients: Coefficient[]; data: { fitted_rows: number } } }).report;
  return { coefficients: report.coefficients, fittedRows: report.data.fitted_rows };
}

const folder = mkdtempSync(join(tmpdir(), 'lagparity-latency-step-'));
try {
  const file = join(folder, 'attempts.csv');
  await writeAttemptsFile(file, rows, 20260301 + rows);
  const exact = fit(file, []);
  process.stdout.write(`${rows.toLocaleString('en-GB')} rows, exact latencies (0.01 ms grid): ${exact.fittedRows.toLocaleString('en-GB')} groups\n`);
  process.stdout.write(`coefficients: ${exact.coefficients.map((row) => `${row.name} ${row.estimate.toPrecision(6)} (CR1 SE ${row.robust?.std_error.toPrecision(3) ?? '-'})`).join(', ')}\n\n`);
  process.stdout.write('step ms | groups | largest |shift| / CR1 SE (which) | each coefficient: shift / CR1 SE; CR1 SE change, relative\n');
  for (const step of steps) {
    const grouped = fit(file, ['--latency-step', String(step)]);
    const shifts = exact.coefficients.map((row, i) => {
      const other = grouped.coefficients[i] as Coefficient;
      const se = row.robust?.std_error ?? Number.NaN;
      return { name: row.name, inSe: (other.estimate - row.estimate) / se, seChange: ((other.robust?.std_error ?? Number.NaN) - se) / se };
    });
    const largest = shifts.reduce((best, next) => (Math.abs(next.inSe) > Math.abs(best.inSe) ? next : best));
    process.stdout.write(
      `${String(step).padStart(7)} | ${grouped.fittedRows.toLocaleString('en-GB').padStart(9)} | ${Math.abs(largest.inSe).toExponential(2)} (${largest.name}) | ${shifts.map((shift) => `${shift.name} ${shift.inSe.toExponential(1)}; ${shift.seChange.toExponential(1)}`).join(', ')}\n`,
    );
  }
} finally {
  rmSync(folder, { recursive: true, force: true });
}
