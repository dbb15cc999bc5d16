// Reading trials files from disk: into columns, and straight into groups.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readGroupedTrialsFile, readTrialsFile } from '../../src/io/read-trials.js';
import { groupTrials } from '../../src/model/collapse.js';
import type { CollapsedTrials } from '../../src/model/collapsed-trials.js';
import { COLLAPSE_BATCH_ROWS } from '../../src/model/group-accumulator.js';
import { fitModel } from '../../src/model/fit-model.js';
import { createRandomSource } from '../../src/random.js';
import { MATCHES } from '../helpers/demo.js';

const folder = mkdtempSync(join(tmpdir(), 'lagparity-read-trials-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

function write(name: string, text: string): string {
  const path = join(folder, name);
  writeFileSync(path, text);
  return path;
}

/** Generated rows with repeats (coarse latencies), so groups hold several rows, over several collapse batches. */
function generated(rows: number, seed: number, options: { levels: readonly string[]; perRound?: boolean; weight?: boolean; player?: boolean; latencies?: number }): string {
  const random = createRandomSource(seed);
  const header = ['latency_ms', 'scale', 'difficulty', ...(options.perRound ? ['hits', 'attempts'] : ['hit']), ...(options.weight ? ['weight'] : []), ...(options.player ? ['player'] : [])];
  const lines = [header.join(',')];
  for (let i = 0; i < rows; i += 1) {
    const latency = (Math.floor(random() * (options.latencies ?? 400)) / 2).toString();
    const scale = ['1', '1.5', '2'][Math.floor(random() * 3)] as string;
    const level = options.levels[Math.floor(random() * options.levels.length)] as string;
    const tries = 1 + Math.floor(random() * 5);
    const response = options.perRound ? [String(Math.floor(random() * (tries + 1))), String(tries)] : [random() < 0.6 ? '1' : '0'];
    // Quoted and padded fields now and then, so the full-rules path feeds the batches too.
    const shown = i % 97 === 0 ? `" ${level}"` : level;
    lines.push([latency, scale, shown.replace('" ', '"'), ...response, ...(options.weight ? [random() < 0.5 ? '1' : '0.5'] : []), ...(options.player ? [`p${Math.floor(random() * 12)}`] : [])].join(','));
  }
  return `${lines.join('\n')}\n`;
}

/** The groups reordered by their key (latency, scale, difficulty, weight, player). */
function sortedGroups(groups: CollapsedTrials): CollapsedTrials {
  const order = Array.from({ length: groups.rows }, (_, g) => g);
  const key = (g: number) => [groups.latency[g], groups.scale[g], groups.difficulty[g], groups.weight[g], groups.player?.[g] ?? 0] as number[];
  order.sort((a, b) => {
    const ka = key(a);
    const kb = key(b);
    for (let k = 0; k < ka.length; k += 1) if (ka[k] !== kb[k]) return (ka[k] as number) - (kb[k] as number);
    return 0;
  });
  const take = <T extends Float64Array | Int32Array>(values: T): T => values.map((_, r) => values[order[r] as number] as number) as T;
  return {
    ...groups,
    latency: take(groups.latency),
    scale: take(groups.scale),
    difficulty: take(groups.difficulty),
    player: groups.player === null ? null : take(groups.player),
    successes: take(groups.successes),
    attempts: take(groups.attempts),
    weight: take(groups.weight),
  };
}

describe('readGroupedTrialsFile()', () => {
  it.each([
    // Coarse latencies, so that the first batch merges enough to go on merging (see the keepDistinct test below).
    ['named levels, players', { levels: ['standard', 'veteran', 'elite'], player: true, latencies: 40 }],
    ['named levels, weights', { levels: ['standard', 'veteran'], weight: true }],
    ['numeric levels', { levels: ['1', '2', '3.5'] }],
    ['numeric levels that share a value', { levels: ['1', '1.0', '2', '-0', '0'], player: true }],
    ['per-round rows', { levels: ['standard', 'elite'], perRound: true, player: true }],
  ] as const)('gives the groups groupTrials(readTrialsFile()) gives: %s, over several batches', async (_, options) => {
    const rows = 2 * COLLAPSE_BATCH_ROWS + 1234;
    const path = write('generated.csv', generated(rows, 41, options));
    const columns = await readTrialsFile(path);
    const grouped = await readGroupedTrialsFile(path);
    if (!columns.ok || !grouped.ok) throw new Error('expected both reads to succeed');
    const expected = groupTrials(columns.value);
    if (options.levels.every((level) => Number.isFinite(Number(level)))) {
      // Numeric levels are keyed by code while reading and by value in groupTrials: the groups
      // found through a hash collision may come in another order, so compare them in key order.
      expect({ ...grouped.value, groups: sortedGroups(grouped.value.groups) }).toEqual({ ...expected, groups: sortedGroups(expected.groups) });
    } else expect(grouped.value).toEqual(expected);
    expect(grouped.value.groups.sourceRows).toBe(rows);
    expect(grouped.warnings).toEqual(columns.warnings);
  });

  it('keeps every row as read when the first batch is nearly all distinct; the fit is the same', async () => {
    // 12 players x 4,000 latencies x 3 scales x 2 levels: about 1.4% of the first batch merges (8,192^2 / 2 / 288,000 keys).
    const rows = 3 * COLLAPSE_BATCH_ROWS;
    const path = write('distinct.csv', generated(rows, 43, { levels: ['standard', 'elite'], player: true, latencies: 4000 }));
    const columns = await readTrialsFile(path);
    const grouped = await readGroupedTrialsFile(path);
    if (!columns.ok || !grouped.ok) throw new Error('expected both reads to succeed');
    const merged = groupTrials(columns.value);
    // Every row its own group, the first batch's too.
    expect(grouped.value.groups.rows).toBe(rows);
    expect(grouped.value.groups.rows).toBeGreaterThan(merged.groups.rows);
    expect(grouped.value.groups.sourceRows).toBe(rows);
    // No weight column: every prior weight 1.
    expect(grouped.value.groups.weight.every((weight) => weight === 1)).toBe(true);
    const a = fitModel(grouped.value, { folds: 0, likelihoodRatioTests: false, baseline: false });
    const b = fitModel(merged, { folds: 0, likelihoodRatioTests: false, baseline: false });
    expect(a.status).toBe(b.status);
    expect(a.coefficients.length).toBeGreaterThan(3);
    // The same fit: estimates, model-based and CR1 standard errors, up to the order of the sums.
    a.coefficients.forEach((row, index) => {
      const other = b.coefficients[index];
      expect(row.name).toBe(other?.name);
      expect(Math.abs(row.estimate - (other?.estimate ?? Number.NaN))).toBeLessThan(1e-10 * Math.max(1, Math.abs(row.estimate)));
      expect(Math.abs(row.std_error / (other?.std_error ?? Number.NaN) - 1)).toBeLessThan(1e-9);
      expect(Math.abs((row.robust?.std_error ?? Number.NaN) / (other?.robust?.std_error ?? Number.NaN) - 1)).toBeLessThan(1e-9);
    });
  });

  it('keeps each row exactly as read, with weights and players', async () => {
    const rows = 2 * COLLAPSE_BATCH_ROWS + 77;
    const path = write('distinct-weighted.csv', generated(rows, 47, { levels: ['standard', 'elite'], player: true, weight: true, latencies: 4000 }));
    const columns = await readTrialsFile(path);
    const grouped = await readGroupedTrialsFile(path);
    if (!columns.ok || !grouped.ok) throw new Error('expected both reads to succeed');
    const trials = columns.value;
    const groups = grouped.value.groups;
    // About 0.7% of the first batch would merge (576,000 keys): every row is kept.
    expect(groups.rows).toBe(rows);
    const same = (column: ArrayLike<number> | null, expected: ArrayLike<number> | null | undefined) => expect(Array.from(column ?? [])).toEqual(Array.from(expected ?? [0]));
    same(groups.latency, trials.latency);
    same(groups.scale, trials.scale);
    same(groups.difficulty, trials.difficulty.kind === 'levels' ? trials.difficulty.codes : null);
    same(groups.weight, trials.weight);
    same(groups.player, trials.player?.codes);
    same(groups.successes, trials.successes);
    same(groups.attempts, trials.attempts);
  });

  it('gives kept attempts unit weights without a column of their own (the attempts, all 1)', async () => {
    const lines = ['player,latency_ms,scale,difficulty,hit'];
    for (let i = 0; i < COLLAPSE_BATCH_ROWS + 500; i += 1) lines.push(`p${i % 7},${(i / 100).toFixed(2)},${1 + (i % 3) / 4},${i % 2 === 0 ? 'standard' : 'elite'},${i % 5 === 0 ? 1 : 0}`);
    const path = write('unique.csv', `${lines.join('\n')}\n`);
    const grouped = await readGroupedTrialsFile(path);
    if (!grouped.ok) throw new Error('expected the read to succeed');
    const { groups } = grouped.value;
    expect(groups.rows).toBe(COLLAPSE_BATCH_ROWS + 500);
    expect(groups.weight.every((weight) => weight === 1)).toBe(true);
    expect(groups.weight).toBe(groups.attempts);
  });

  it('gives the same fit report as the columns for the bundled playtest', async () => {
    const path = join(MATCHES, 'playtest-trials.csv');
    const columns = await readTrialsFile(path);
    const grouped = await readGroupedTrialsFile(path);
    if (!columns.ok || !grouped.ok) throw new Error('expected both reads to succeed');
    expect(fitModel(grouped.value, { folds: 0 })).toEqual(fitModel(columns.value, { folds: 0 }));
  });

  it('reports the first bad row with its line and the rows read before it, like the column reader', async () => {
    const good = generated(COLLAPSE_BATCH_ROWS + 10, 5, { levels: ['a', 'b'] });
    const path = write('bad.csv', `${good}12,1,a,7\n`);
    const columns = await readTrialsFile(path);
    const grouped = await readGroupedTrialsFile(path);
    expect(grouped).toEqual(columns);
    expect(grouped.ok).toBe(false);
    if (!grouped.ok) expect(grouped.issues[0]?.location).toBe(`bad.csv:${COLLAPSE_BATCH_ROWS + 12}:hit`);
  });

  it('refuses an empty file and a file with only a header, as the column reader does', async () => {
    for (const [name, text] of [['empty.csv', ''], ['header.csv', 'latency_ms,scale,difficulty,hit\n']] as const) {
      const path = write(name, text);
      expect(await readGroupedTrialsFile(path)).toEqual(await readTrialsFile(path));
    }
    expect(readFileSync(join(folder, 'header.csv'), 'utf8')).toContain('latency_ms');
  });
});
