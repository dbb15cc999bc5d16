/**
 * The grouping statement's counts fit as the rows do: the binomial kernel of
 * s hits in k attempts at one covariate point and one player is the sum of
 * the k Bernoulli terms (McCullagh & Nelder 1989, §4.2), so estimates, model
 * errors and, since player is a grouping key, the per-player score sums of
 * the CR1 sandwich (Cameron & Miller 2015, §VI.A) are unchanged. Checked for
 * every link on 20,000 simulated rows (2,000 players' worth of clusters is the
 * bench's business; 200 here), with the counts computed by DuckDB running
 * the very statement `grouping-sql` prints.
 */
import { describe, expect, it } from 'vitest';
import { DuckDBInstance } from '@duckdb/node-api';
import type { Trials } from '../../src/formats/trials-types.js';
import { groupingSql, roundLatency } from '../../src/engine/grouping-sql.js';
import { fitModel } from '../../src/model/fit-model.js';
import type { FitReport } from '../../src/model/fit-report-types.js';
import { LINK_NAMES } from '../../src/model/links.js';
import { createRandomSource } from '../../src/random.js';

const ROWS = 20_000;
const PLAYERS = 200;
const LEVELS = ['standard', 'veteran', 'elite'];

/** Simulated per-attempt rows (seeded): each player at a base latency with jitter, on a 0.01 ms grid. */
function simulateRows(): Trials {
  const random = createRandomSource(18);
  const latency = new Float64Array(ROWS);
  const scale = new Float64Array(ROWS);
  const level = new Int32Array(ROWS);
  const hit = new Float64Array(ROWS);
  const player = new Int32Array(ROWS);
  const base = Float64Array.from({ length: PLAYERS }, () => 5 + 200 * random());
  for (let i = 0; i < ROWS; i += 1) {
    const who = Math.floor(random() * PLAYERS);
    player[i] = who;
    latency[i] = Math.round(((base[who] as number) + 12 * random()) * 100) / 100;
    scale[i] = [1, 1.25, 1.5][Math.floor(random() * 3)] as number;
    level[i] = Math.floor(random() * 3);
    const predictor = 0.9 - 0.008 * (latency[i] as number) + 1.6 * Math.log(scale[i] as number) - 0.5 * (level[i] as number) + 0.3 * (random() - 0.5);
    hit[i] = random() < 1 / (1 + Math.exp(-predictor)) ? 1 : 0;
  }
  return {
    file: 'rows',
    shape: 'per_attempt',
    rows: ROWS,
    latency,
    scale,
    difficulty: { kind: 'levels', levels: LEVELS, codes: level },
    successes: hit,
    attempts: new Float64Array(ROWS).fill(1),
    weight: null,
    player: { ids: Array.from({ length: PLAYERS }, (_, i) => `p${String(i).padStart(3, '0')}`), codes: player },
  };
}

/** The rows through DuckDB and the printed grouping statement, back as per-attempt counts. */
async function countsOf(rows: Trials, latencyStepMs: number): Promise<Trials> {
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  try {
    await connection.run('CREATE TABLE telemetry (player VARCHAR, latency_ms DOUBLE, scale DOUBLE, difficulty VARCHAR, hit INTEGER)');
    const appender = await connection.createAppender('telemetry');
    const levels = rows.difficulty.kind === 'levels' ? rows.difficulty : null;
    for (let i = 0; i < rows.rows; i += 1) {
      appender.appendVarchar(rows.player?.ids[rows.player.codes[i] as number] as string);
      appender.appendDouble(rows.latency[i] as number);
      appender.appendDouble(rows.scale[i] as number);
      appender.appendVarchar(levels?.levels[levels.codes[i] as number] as string);
      appender.appendInteger(rows.successes[i] as number);
      appender.endRow();
    }
    appender.closeSync();
    const result = await connection.runAndReadAll(groupingSql({ latencyStepMs }));
    const counts = result.getRowObjects() as { player: string; latency_ms: number; scale: number; difficulty: string; hits: unknown; attempts: unknown }[];
    const ids = rows.player?.ids ?? [];
    return {
      file: 'counts',
      shape: 'per_attempt',
      rows: counts.length,
      latency: Float64Array.from(counts, (row) => row.latency_ms),
      scale: Float64Array.from(counts, (row) => row.scale),
      difficulty: { kind: 'levels', levels: LEVELS, codes: Int32Array.from(counts, (row) => LEVELS.indexOf(row.difficulty)) },
      successes: Float64Array.from(counts, (row) => Number(row.hits)),
      attempts: Float64Array.from(counts, (row) => Number(row.attempts)),
      weight: null,
      player: { ids, codes: Int32Array.from(counts, (row) => ids.indexOf(row.player)) },
    };
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}

function relative(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
}

function only(report: FitReport) {
  return report.coefficients.map((row) => ({ estimate: row.estimate, model: row.std_error, robust: row.robust?.std_error ?? Number.NaN }));
}

const FIT = { folds: 0, likelihoodRatioTests: false, baseline: false, cluster: 'player' as const };

describe('groupingSql() counts fitted with fitModel()', () => {
  const rows = simulateRows();

  it('are fewer rows than the source and hold every attempt (0.01 ms resolution)', async () => {
    const counts = await countsOf(rows, 0.01);
    expect(counts.rows).toBeLessThan(rows.rows);
    expect(counts.attempts.reduce((sum, value) => sum + value, 0)).toBe(ROWS);
    expect(counts.successes.reduce((sum, value) => sum + value, 0)).toBe(rows.successes.reduce((sum, value) => sum + value, 0));
  });

  for (const link of LINK_NAMES) {
    it(`give the rows' estimates (1e-9 relative) and model and CR1 errors (1e-7) with the ${link} link`, async () => {
      const counts = await countsOf(rows, 0.01);
      const fromRows = fitModel(rows, { ...FIT, link });
      const fromCounts = fitModel(counts, { ...FIT, link });
      expect(fromRows.status).toBe('converged');
      expect(fromCounts.status).toBe('converged');
      expect(fromCounts.cluster).toEqual(fromRows.cluster);
      const a = only(fromRows);
      const b = only(fromCounts);
      expect(b).toHaveLength(a.length);
      a.forEach((row, i) => {
        const other = b[i] as (typeof b)[number];
        expect(relative(other.estimate, row.estimate)).toBeLessThan(1e-9); // identity of the likelihoods (McCullagh & Nelder 1989, §4.2)
        expect(relative(other.model, row.model)).toBeLessThan(1e-7);
        expect(relative(other.robust, row.robust)).toBeLessThan(1e-7); // same clusters, same score sums (Cameron & Miller 2015)
      });
    });
  }

  it('move the estimates when latency is rounded to 1 ms, by far less than their standard errors', async () => {
    const counts = await countsOf(rows, 1);
    for (let i = 0; i < counts.rows; i += 1) expect(Number.isInteger(counts.latency[i])).toBe(true);
    const fromRows = only(fitModel(rows, FIT));
    const fromCounts = only(fitModel(counts, FIT));
    fromRows.forEach((row, i) => {
      const shift = Math.abs((fromCounts[i]?.estimate as number) - row.estimate);
      expect(shift).toBeGreaterThan(0);
      expect(shift).toBeLessThan(0.05 * row.model);
    });
  });

  it('round latency as roundLatency() says: half-way values up', () => {
    expect(roundLatency(0.125, 0.25)).toBe(0.25);
    expect(roundLatency(12.5, 1)).toBe(13);
    expect(roundLatency(-0.5, 1)).toBe(0);
    expect(roundLatency(12.34, 0.01)).toBe(12.34);
    expect(roundLatency(7.3, 0.25)).toBe(7.25);
  });
});
