/**
 * groupingSql(): each variant of the statement run by DuckDB on a small
 * table, against counts worked out by hand from the statement's definition
 * (docs/warehouse.md: half-way latencies go up, FLOOR(L / step + 0.5) x step).
 * That PostgreSQL and ClickHouse return the same counts is
 * `npm run integration:engines` (not in CI: it starts servers).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type DuckDBConnection, DuckDBInstance } from '@duckdb/node-api';
import { DEFAULT_LATENCY_STEP_MS, groupingSql, latencyBinSql, stepsPerMillisecond } from '../../src/engine/grouping-sql.js';

let instance: DuckDBInstance;
let connection: DuckDBConnection;

beforeAll(async () => {
  instance = await DuckDBInstance.create(':memory:');
  connection = await instance.connect();
  await connection.run(`CREATE TABLE shots AS SELECT * FROM (VALUES
    ('a', 10.4, 1.0, 'easy', 1, 2.0), ('a', 10.5, 1.0, 'easy', 0, 2.0), ('a', 11.49, 1.0, 'easy', 1, 2.0),
    ('a', 10.2, 1.5, 'easy', 1, 2.0), ('b', 10.4, 1.0, 'easy', 0, 2.0), ('b', 10.4, 1.0, 'easy', 1, 1.0)
  ) AS t(player, latency_ms, scale, difficulty, hit, weight)`);
  await connection.run(`CREATE TABLE rounds AS SELECT * FROM (VALUES
    ('a', 10.4, 1.0, 'easy', 3, 5), ('a', 10.4, 1.0, 'easy', 2, 5), ('b', 7.75, 1.0, 'hard', 0, 4)
  ) AS t(player, latency_ms, scale, difficulty, hits, attempts)`);
});

afterAll(() => {
  connection.closeSync();
  instance.closeSync();
});

async function rows(sql: string): Promise<string[]> {
  const result = await connection.runAndReadAll(sql);
  return result.getRows().map((row) => row.map((cell) => String(Number.isNaN(Number(cell)) ? cell : Number(cell))).join(','));
}

describe('groupingSql()', () => {
  it('groups attempts per player, latency at 1 ms (10.5 goes up to 11), scale and difficulty', async () => {
    expect(await rows(groupingSql({ table: 'shots' }))).toEqual(['a,10,1,easy,1,1', 'a,10,1.5,easy,1,1', 'a,11,1,easy,1,2', 'b,10,1,easy,1,2']);
  });

  it('keeps weights apart as a grouping key', async () => {
    expect(await rows(groupingSql({ table: 'shots', weight: true }))).toEqual([
      'a,10,1,easy,2,1,1',
      'a,10,1.5,easy,2,1,1',
      'a,11,1,easy,2,1,2',
      'b,10,1,easy,1,1,1',
      'b,10,1,easy,2,0,1',
    ]);
  });

  it('drops the player key with player: false', async () => {
    expect(await rows(groupingSql({ table: 'shots', player: false }))).toEqual(['10,1,easy,2,3', '10,1.5,easy,1,1', '11,1,easy,1,2']);
  });

  it('keeps each round of a per-round table, its latency rounded (0.25 ms steps: 7.75 stays, 10.4 -> 10.5)', async () => {
    expect(await rows(groupingSql({ table: 'rounds', shape: 'per_round', latencyStepMs: 0.25 }))).toEqual(['a,10.5,1,easy,2,5', 'a,10.5,1,easy,3,5', 'b,7.75,1,hard,0,4']);
  });

  it('writes steps that are 1/n ms as a multiplication by n, other steps as a division', () => {
    expect(stepsPerMillisecond(0.01)).toBe(100);
    expect(stepsPerMillisecond(0.25)).toBe(4);
    expect(stepsPerMillisecond(0.3)).toBeNull();
    expect(latencyBinSql('x', 0.01).bin).toBe('FLOOR(x * 100 + 0.5)');
    expect(latencyBinSql('x', 0.3).bin).toBe('FLOOR(x / 0.3 + 0.5)');
    expect(latencyBinSql('x', 0.3).latency('b')).toBe('b * 0.3');
    expect(latencyBinSql('x', 1e-7).bin).toBe('FLOOR(x * 10000000 + 0.5)');
    expect(latencyBinSql('x', 3e-7).latency('b')).toBe('b * 0.0000003');
    expect(latencyBinSql('x', 3.7e-7).latency('b')).toBe('b * 0.00000037');
    expect(DEFAULT_LATENCY_STEP_MS).toBe(1);
  });

  it('refuses a step that is not a finite number above 0', () => {
    expect(() => groupingSql({ latencyStepMs: 0 })).toThrow(RangeError);
    expect(() => groupingSql({ latencyStepMs: Number.NaN })).toThrow(RangeError);
  });
});
