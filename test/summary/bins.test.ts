import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { groupLevels, groupNumeric, parseBinSpec } from '../../src/summary/bins.js';

// R 4.2.2 quantile(c(1,3,4,7,8,9,12,15,20,21), p, type = 7); see test/fixtures/stats/README.md.
const type7 = new Map<number, number>();
for (const line of readFileSync(new URL('../fixtures/stats/quantiles_r.csv', import.meta.url), 'utf8').trim().split('\n').slice(1)) {
  const [type, p, value] = line.split(',').map(Number);
  if (type === 7) type7.set(p as number, value as number);
}
const sample = Float64Array.from([1, 3, 4, 7, 8, 9, 12, 15, 20, 21]);

function grouped(values: Float64Array, spec: Parameters<typeof groupNumeric>[1]) {
  const result = groupNumeric(values, spec, 'latency', 'ms', 'file:latency_ms');
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.value;
}

describe('groupNumeric()', () => {
  it('cuts quantile bins at R\'s type 7 quartiles (quantiles_r.csv)', () => {
    const grouping = grouped(sample, { kind: 'quantile', bins: 4 });
    expect(grouping.groups.map((group) => group.upper)).toEqual([type7.get(0.25), type7.get(0.5), type7.get(0.75), 21]); // R quantile(type = 7): 4.75, 8.5, 14.25
    expect(grouping.groups.map((group) => group.lower)).toEqual([1, type7.get(0.25), type7.get(0.5), type7.get(0.75)]);
    expect(grouping.groups.map((group) => group.label)).toEqual(['[1, 4.75) ms', '[4.75, 8.5) ms', '[8.5, 14.25) ms', '[14.25, 21] ms']);
    expect(Array.from(grouping.codes)).toEqual([0, 0, 0, 1, 1, 2, 2, 3, 3, 3]);
  });

  it('cuts deciles at R\'s type 7 quantiles 0.1 and 0.9 at the ends (quantiles_r.csv)', () => {
    const grouping = grouped(sample, { kind: 'quantile', bins: 10 });
    expect(grouping.groups[0]?.upper).toBeCloseTo(type7.get(0.1) as number, 14); // R: 2.8
    expect(grouping.groups.at(-1)?.lower).toBeCloseTo(type7.get(0.9) as number, 14); // R: 20.1
  });

  it('merges tied cut points', () => {
    const grouping = grouped(Float64Array.from([5, 5, 5, 5, 5, 5, 5, 9]), { kind: 'quantile', bins: 4 });
    expect(grouping.groups.map((group) => [group.label, group.rows])).toEqual([['[5, 9] ms', 8]]);
  });

  it('keeps few distinct values as levels under auto, bins many into sextiles', () => {
    expect(grouped(Float64Array.from([40, 0, 80, 40]), { kind: 'auto' }).groups.map((group) => group.value)).toEqual([0, 40, 80]);
    const many = Float64Array.from({ length: 60 }, (_, index) => index);
    const binned = grouped(many, { kind: 'auto' });
    expect(binned.method).toBe('quantile');
    expect(binned.groups.map((group) => group.rows)).toEqual([10, 10, 10, 10, 10, 10]);
  });

  it('lists only occupied fixed-width bins', () => {
    const grouping = grouped(Float64Array.from([12, 39.9, 40, 250]), { kind: 'width', width: 40 });
    expect(grouping.groups.map((group) => [group.label, group.rows])).toEqual([
      ['[0, 40) ms', 2],
      ['[40, 80) ms', 1],
      ['[240, 280) ms', 1],
    ]);
    expect(Array.from(grouping.codes)).toEqual([0, 0, 1, 2]);
  });

  it('puts every value in exactly the bin whose interval holds it', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 500, noNaN: true }), { minLength: 1, maxLength: 60 }), fc.integer({ min: 2, max: 8 }), (list, bins) => {
        const values = Float64Array.from(list);
        const grouping = grouped(values, { kind: 'quantile', bins });
        values.forEach((value, index) => {
          const group = grouping.groups[grouping.codes[index] as number];
          expect(group).toBeDefined();
          expect(value).toBeGreaterThanOrEqual(group?.lower as number);
          if (group?.includes_upper) expect(value).toBeLessThanOrEqual(group.upper as number);
          else expect(value).toBeLessThan(group?.upper as number);
        });
        expect(grouping.groups.reduce((sum, group) => sum + group.rows, 0)).toBe(values.length);
      }),
      { seed: 20260601, numRuns: 200 },
    );
  });

  it('refuses more than 1000 groups', () => {
    const result = groupNumeric(Float64Array.from([0, 5000]), { kind: 'width', width: 1 }, 'latency', 'ms', 'trials.csv:latency_ms');
    expect(result.ok ? [] : result.issues.map((issue) => [issue.code, issue.location])).toEqual([['too_many_groups', 'trials.csv:latency_ms']]);
  });
});

describe('groupLevels()', () => {
  it('keeps the file\'s level order and drops levels with no rows', () => {
    const grouping = groupLevels(['veteran', 'unused', 'standard'], Int32Array.from([2, 0, 2]), 'difficulty');
    expect(grouping.groups.map((group) => [group.label, group.rows])).toEqual([
      ['veteran', 1],
      ['standard', 2],
    ]);
    expect(Array.from(grouping.codes)).toEqual([1, 0, 1]);
  });
});

describe('parseBinSpec()', () => {
  it('reads every form', () => {
    expect(parseBinSpec('auto')).toMatchObject({ ok: true, value: { kind: 'auto' } });
    expect(parseBinSpec('levels')).toMatchObject({ ok: true, value: { kind: 'levels' } });
    expect(parseBinSpec('quantile:5')).toMatchObject({ ok: true, value: { kind: 'quantile', bins: 5 } });
    expect(parseBinSpec('width:40')).toMatchObject({ ok: true, value: { kind: 'width', width: 40 } });
    expect(parseBinSpec('edges:50,100.5,150')).toMatchObject({ ok: true, value: { kind: 'edges', edges: [50, 100.5, 150] } });
  });

  it('refuses bad specs with one issue naming the option', () => {
    for (const text of ['quantile:1', 'quantile:2.5', 'width:0', 'width:-3', 'edges:50,40', 'edges:a', 'sextiles', 'width:Infinity']) {
      const result = parseBinSpec(text);
      expect(result.ok ? [] : result.issues.map((issue) => [issue.code, issue.location])).toEqual([['bad_bins', '--latency-bins']]);
    }
  });
});
