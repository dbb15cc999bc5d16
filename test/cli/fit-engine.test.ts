/**
 * `lagparity fit` on Parquet files and globs (through embedded DuckDB), the
 * `grouping-sql` command, and the errors of that path. The files are written
 * by DuckDB into a temporary folder from the demo's playtest trials (per-round
 * rows, fitted as recorded) and from a small per-attempt table.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DuckDBInstance } from '@duckdb/node-api';
import { loadDuckDb } from '../../src/engine/load-duckdb.js';
import { readGroupedWithDuckDb } from '../../src/engine/read-with-duckdb.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES } from '../helpers/demo.js';

const scratch = mkdtempSync(join(tmpdir(), 'lagparity-fit-engine-'));
const playtest = join(MATCHES, 'playtest-trials.csv');

async function duck(statements: readonly string[]): Promise<void> {
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  try {
    for (const statement of statements) await connection.run(statement);
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}

interface Coefficient {
  name: string;
  estimate: number;
  std_error: number;
  robust: { std_error: number } | null;
}
function coefficients(stdout: string): Coefficient[] {
  return (JSON.parse(stdout) as { report: { coefficients: Coefficient[] } }).report.coefficients;
}

beforeAll(async () => {
  const source = `read_csv('${playtest}', header = true)`;
  // Per-attempt rows: one row per attempt of each playtest round, hits first.
  const attempts = `SELECT player, latency_ms, scale, difficulty, CASE WHEN k <= hits THEN 1 ELSE 0 END AS hit FROM ${source}, range(1, 21) AS r(k) WHERE k <= attempts`;
  await duck([
    `COPY (SELECT * FROM ${source}) TO '${join(scratch, 'rounds.parquet')}' (FORMAT parquet)`,
    `COPY (SELECT * FROM ${source} WHERE player < 'm') TO '${join(scratch, 'shard-a.parquet')}' (FORMAT parquet)`,
    `COPY (SELECT * FROM ${source} WHERE player >= 'm') TO '${join(scratch, 'shard-b.parquet')}' (FORMAT parquet)`,
    `COPY (${attempts}) TO '${join(scratch, 'attempts.csv')}' (HEADER)`,
    `COPY (${attempts}) TO '${join(scratch, 'attempts.parquet')}' (FORMAT parquet)`,
    `COPY (SELECT latency_ms, difficulty, hits, attempts, player FROM ${source}) TO '${join(scratch, 'no-scale.parquet')}' (FORMAT parquet)`,
    `COPY (SELECT CAST(latency_ms AS VARCHAR) || ' ms' AS latency_ms, scale, difficulty, hits, attempts, player FROM ${source}) TO '${join(scratch, 'text-latency.parquet')}' (FORMAT parquet)`,
    // Row 7 has hit = 2.
    `COPY (SELECT latency_ms, scale, difficulty, CASE WHEN row_number() OVER () = 7 THEN 2 ELSE 1 END AS hit, player FROM (SELECT * FROM ${source} LIMIT 10)) TO '${join(scratch, 'bad-hit.parquet')}' (FORMAT parquet)`,
    `COPY (SELECT 1 AS x) TO '${join(scratch, 'other.csv')}' (HEADER)`,
  ]);
});

afterAll(() => rmSync(scratch, { recursive: true, force: true }));

describe('lagparity fit on Parquet and globs', () => {
  it('fits a Parquet file of rounds to the estimates and errors of the same rows in CSV (the rounds kept as recorded)', () => {
    const csv = runCli(['fit', playtest, '--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline']);
    const parquet = runCli(['fit', join(scratch, 'rounds.parquet'), '--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline', '--latency-step', '0.001']);
    expect(csv.status, csv.stderr).toBe(0);
    expect(parquet.status, parquet.stderr).toBe(0);
    const a = coefficients(csv.stdout);
    const b = coefficients(parquet.stdout);
    expect(b.map((row) => row.name)).toEqual(a.map((row) => row.name));
    a.forEach((row, i) => {
      const other = b[i] as Coefficient;
      expect(other.estimate).toBeCloseTo(row.estimate, 10);
      expect(other.std_error).toBeCloseTo(row.std_error, 10);
      expect(other.robust?.std_error).toBeCloseTo(row.robust?.std_error as number, 10);
    });
  });

  it('reads a quoted glob of shards as one data set', () => {
    const one = runCli(['fit', join(scratch, 'rounds.parquet'), '--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline']);
    const shards = runCli(['fit', join(scratch, 'shard-*.parquet'), '--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline']);
    expect(shards.status, shards.stderr).toBe(0);
    const a = coefficients(one.stdout);
    coefficients(shards.stdout).forEach((row, i) => expect(row.estimate).toBeCloseTo((a[i] as Coefficient).estimate, 10));
    expect((JSON.parse(shards.stdout) as { report: { data: { rows: number; players: number } } }).report.data).toMatchObject({ rows: 3240, players: 36 });
  });

  it('fits per-attempt rows grouped by DuckDB (CSV and Parquet alike) as the built-in reader fits them', () => {
    const options = ['--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline'];
    const exact = runCli(['fit', join(scratch, 'attempts.csv'), ...options]);
    const grouped = runCli(['fit', join(scratch, 'attempts.csv'), ...options, '--latency-step', '0.001']);
    const parquet = runCli(['fit', join(scratch, 'attempts.parquet'), ...options, '--latency-step', '0.001']);
    for (const run of [exact, grouped, parquet]) expect(run.status, run.stderr).toBe(0);
    const a = coefficients(exact.stdout);
    for (const run of [grouped, parquet]) {
      coefficients(run.stdout).forEach((row, i) => {
        expect(row.estimate).toBeCloseTo((a[i] as Coefficient).estimate, 9);
        expect(row.robust?.std_error).toBeCloseTo((a[i] as Coefficient).robust?.std_error as number, 9);
      });
    }
  });

  it('fits the grouping statement\'s output with --counts attempts as the attempts themselves', async () => {
    const sql = runCli(['grouping-sql', '--latency-step', '0.001']);
    expect(sql.status, sql.stderr).toBe(0);
    const counts = join(scratch, 'counts.csv');
    await duck([`CREATE TABLE telemetry AS SELECT * FROM read_csv('${join(scratch, 'attempts.csv')}', header = true)`, `COPY (${sql.stdout.trim().replace(/;$/, '')}) TO '${counts}' (HEADER)`]);
    const options = ['--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline'];
    const rows = coefficients(runCli(['fit', join(scratch, 'attempts.csv'), ...options]).stdout);
    const fitted = runCli(['fit', counts, ...options, '--counts', 'attempts', '--reference', 'standard']);
    expect(fitted.status, fitted.stderr).toBe(0);
    const byName = new Map(coefficients(fitted.stdout).map((row) => [row.name, row]));
    for (const row of rows) {
      const other = byName.get(row.name) as Coefficient;
      expect(Math.abs(other.estimate - row.estimate) / Math.abs(row.estimate)).toBeLessThan(1e-9);
      expect(Math.abs((other.robust?.std_error as number) - (row.robust?.std_error as number)) / (row.robust?.std_error as number)).toBeLessThan(1e-7);
    }
    // Without --counts attempts the rows are rounds: the same estimates, but n in the CR1 factor is the rows of counts.
    const asRounds = runCli(['fit', counts, ...options, '--reference', 'standard']);
    expect(JSON.parse(asRounds.stdout).report.likelihood).toBe('grouped');
  });
});

describe('lagparity fit on Parquet and globs: bad input', () => {
  it('names the file and the column that is missing', () => {
    const run = runCli(['fit', join(scratch, 'no-scale.parquet')]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/^no-scale\.parquet:scale: error missing_column: a trials file requires a `scale` column, got columns `latency_ms`, `difficulty`, `hits`, `attempts`, `player`\n$/);
  });

  it('names the file and the column of the wrong type', () => {
    const run = runCli(['fit', join(scratch, 'text-latency.parquet')]);
    expect(run.status).toBe(2);
    expect(run.stderr).toBe('text-latency.parquet:latency_ms: error wrong_type: `latency_ms` requires a numeric column, got VARCHAR\n');
  });

  it('names the file, row and column of a value out of range', () => {
    const run = runCli(['fit', join(scratch, 'bad-hit.parquet')]);
    expect(run.status).toBe(2);
    expect(run.stderr).toBe('bad-hit.parquet:7:hit: error invalid_value: `hit` requires 0 or 1, got "2.0"\n');
  });

  it('says a glob matched nothing', () => {
    const pattern = join(scratch, 'none-*.parquet');
    const run = runCli(['fit', pattern]);
    expect(run.status).toBe(2);
    expect(run.stderr).toBe(`${pattern}: error no_files: \`${pattern}\` requires at least one matching file, got none\n`);
  });

  it('refuses a CSV shard without the format\'s columns', () => {
    const run = runCli(['fit', join(scratch, 'oth*.csv')]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('other.csv:latency_ms: error missing_column');
  });

  it('checks live telemetry in Parquet shards as it checks the same rows in one CSV file', async () => {
    const live = join(MATCHES, 'live-telemetry.csv');
    // Two shards, rows in another order than the CSV file's; latencies are recorded to 0.1 ms.
    const source = `read_csv('${live}', header = true, types = {'latency_ms': 'DOUBLE', 'scale': 'DOUBLE'})`;
    await duck([
      `COPY (SELECT * FROM ${source} WHERE player < 'm' ORDER BY latency_ms DESC) TO '${join(scratch, 'live-a.parquet')}' (FORMAT parquet)`,
      `COPY (SELECT * FROM ${source} WHERE player >= 'm') TO '${join(scratch, 'live-b.parquet')}' (FORMAT parquet)`,
    ]);
    const args = ['--model', join(MATCHES, 'model.json'), '--rules', join(MATCHES, 'league-rules.json'), '--json'];
    const fromCsv = runCli(['field-check', live, ...args]);
    const fromShards = runCli(['field-check', join(scratch, 'live-*.parquet'), ...args]);
    expect(fromShards.stderr.replaceAll('live-*.parquet', 'live-telemetry.csv')).toBe(fromCsv.stderr); // the same warnings, naming the input
    expect(fromShards.status).toBe(fromCsv.status);
    type Band = { label: string; players: number; rounds: number; attempts: number; observed: number | null };
    type Check = { verdict: string; bands: Band[]; calibration: { recommendation: string; in_the_large: { estimate: number }; slope: { estimate: number } } };
    const csv = JSON.parse(fromCsv.stdout) as Check;
    const shards = JSON.parse(fromShards.stdout) as Check;
    expect(shards.verdict).toBe(csv.verdict);
    expect(shards.calibration.recommendation).toBe(csv.calibration.recommendation);
    // Every row in the same band: the same counts; the rates and fits to rounding (the groups come in another order).
    expect(shards.bands.map(({ label, players, rounds, attempts }) => ({ label, players, rounds, attempts }))).toEqual(csv.bands.map(({ label, players, rounds, attempts }) => ({ label, players, rounds, attempts })));
    shards.bands.forEach((band, index) => expect(band.observed ?? -1).toBeCloseTo(csv.bands[index]?.observed ?? -1, 12));
    expect(shards.calibration.in_the_large.estimate).toBeCloseTo(csv.calibration.in_the_large.estimate, 9);
    expect(shards.calibration.slope.estimate).toBeCloseTo(csv.calibration.slope.estimate, 9);
  });

  it('refuses a --latency-step that is not a number above 0', () => {
    const run = runCli(['fit', playtest, '--latency-step', '0']);
    expect(run.status).toBe(2);
    expect(run.stderr).toBe('--latency-step: error invalid_option: `--latency-step` requires a number of ms above 0 and at most 60000, got "0"\n');
  });

  it('says which package to install when DuckDB is absent (simulated by the loader)', async () => {
    const absent = () => Promise.reject(Object.assign(new Error("Cannot find package '@duckdb/node-api'"), { code: 'ERR_MODULE_NOT_FOUND' }));
    const loaded = await loadDuckDb('telemetry/*.parquet', absent);
    expect(loaded).toEqual({
      ok: false,
      issues: [
        {
          code: 'missing_optional_package',
          severity: 'error',
          location: 'telemetry/*.parquet',
          message:
            'reading Parquet files, globs of shards and grouping at `--latency-step` requires the optional package @duckdb/node-api@1.5.6-r.1, which is not installed: run `npm install @duckdb/node-api@1.5.6-r.1` where lagparity is installed',
        },
      ],
    });
    const read = await readGroupedWithDuckDb(join(scratch, 'rounds.parquet'), { latencyStepMs: 1, loader: absent });
    expect(read.ok).toBe(false);
    // A failure other than absence is not hidden as absence.
    await expect(loadDuckDb('x.parquet', () => Promise.reject(new Error('binding crashed')))).rejects.toThrow('binding crashed');
  });
});

describe('lagparity grouping-sql', () => {
  it('prints the portable grouping statement', () => {
    const run = runCli(['grouping-sql', '--table', 'games.shots', '--latency-step', '0.1']);
    expect(run.status, run.stderr).toBe(0);
    expect(run.stdout).toMatchInlineSnapshot(`
      "SELECT player, latency_bin / 10 AS latency_ms, scale, difficulty,
        SUM(hit) AS hits, COUNT(*) AS attempts
      FROM (SELECT t.player AS player, FLOOR(t.latency_ms * 10 + 0.5) AS latency_bin, t.scale AS scale, t.difficulty AS difficulty, t.hit AS hit FROM games.shots AS t) AS binned
      GROUP BY player, latency_bin, scale, difficulty
      ORDER BY player, latency_bin, scale, difficulty;
      "
    `);
  });

  it('refuses a table name that is more than a name', () => {
    const run = runCli(['grouping-sql', '--table', 'shots; DROP TABLE shots']);
    expect(run.status).toBe(2);
    expect(run.stderr).toBe('--table: error invalid_option: `--table` requires a table name of letters, digits and _ (schema. allowed), got "shots; DROP TABLE shots"\n');
  });
});
