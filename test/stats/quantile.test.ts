import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { quantile, quantileSorted, type QuantileType } from '../../src/stats/quantile.js';

// R 4.2.2 quantile(c(1,3,4,7,8,9,12,15,20,21), probs = p, type = t); see test/fixtures/stats/README.md.
const sample = [1, 3, 4, 7, 8, 9, 12, 15, 20, 21];
const referenceRows = readFileSync(new URL('../fixtures/stats/quantiles_r.csv', import.meta.url), 'utf8')
  .trim()
  .split('\n')
  .slice(1)
  .map((line) => {
    const [type = '', probability = '', value = ''] = line.split(',');
    return { type: Number(type) as QuantileType, probability: Number(probability), value: Number(value) };
  });

describe('quantile() against R 4.2.2 quantile(type = 1..9) (quantiles_r.csv)', () => {
  it('read 99 reference points, 11 for each type', () => {
    expect(referenceRows.length).toBe(99);
    for (let type = 1; type <= 9; type += 1) expect(referenceRows.filter((row) => row.type === type).length).toBe(11);
  });

  for (const row of referenceRows) {
    it(`quantile(x, ${row.probability}, ${row.type}) is R's ${row.value}`, () => {
      const got = quantile(sample, row.probability, row.type);
      expect(Math.abs(got - row.value)).toBeLessThanOrEqual(4e-15 * Math.abs(row.value)); // R 4.2.2, quantiles_r.csv (15-17 digits)
    });
  }

  it('gives the exact type 8 rationals 26/15, 47/12, 185/12, 619/30 to the last bits', () => {
    expect(quantile(sample, 0.1, 8)).toBeCloseTo(26 / 15, 14); // reference README §4, exact Hyndman & Fan definition 8
    expect(quantile(sample, 0.25, 8)).toBeCloseTo(47 / 12, 14); // reference README §4, exact
    expect(quantile(sample, 0.75, 8)).toBeCloseTo(185 / 12, 13); // reference README §4, exact
    expect(quantile(sample, 0.9, 8)).toBeCloseTo(619 / 30, 13); // reference README §4, exact
  });

  it('returns the even order statistic for type 3 at n p = 2.5, 7.5, 9.5 (where numpy 1.24 differs)', () => {
    expect([0.25, 0.75, 0.95].map((probability) => quantile(sample, probability, 3))).toEqual([3, 15, 21]); // R 4.2.2 and H&F definition 3
  });

  it('does not care about input order and leaves the input alone', () => {
    const shuffled = [21, 1, 15, 3, 4, 12, 7, 20, 8, 9];
    const copy = [...shuffled];
    expect(quantile(shuffled, 0.3, 6)).toBe(quantileSorted(sample, 0.3, 6));
    expect(shuffled).toEqual(copy);
  });
});

describe('quantileSorted()', () => {
  it('treats n p that is an integer up to 4·DBL_EPSILON as an integer for types 1–3 (R >= 4.5.0 fuzz)', () => {
    // 49 × (1/49) is 0.9999999999999999 in binary floating point; exactly it is 1, where definition 2
    // averages x[1] and x[2]. Without the fuzz (R 4.2.2 for types 1–3), floor gives 0 and the answer is x[1].
    const oneToFortyNine = Array.from({ length: 49 }, (_, index) => index + 1);
    expect(49 * (1 / 49)).toBeLessThan(1);
    expect(quantileSorted(oneToFortyNine, 1 / 49, 2)).toBe(1.5); // Hyndman & Fan (1996) definition 2 at n p = 1: (x[1] + x[2]) / 2
    expect(quantileSorted(oneToFortyNine, 1 / 49, 1)).toBe(1); // Hyndman & Fan (1996) definition 1 at n p = 1: x[1]
    expect(quantileSorted(oneToFortyNine, 2 / 49, 2)).toBe(2.5); // Hyndman & Fan (1996) definition 2 at n p = 2 (computed 1.9999999999999998)
  });

  it('returns the single value of a one-element sample for every type and probability', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 9 }), fc.double({ min: 0, max: 1, noNaN: true }), (type, probability) => {
        expect(quantileSorted([42], probability, type as QuantileType)).toBe(42);
      }),
      { seed: 17, numRuns: 200 },
    );
  });

  it('property (200 seeded runs): every type lies between the minimum and maximum and is monotone in p', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: 1, maxLength: 30 }),
        fc.integer({ min: 1, max: 9 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (values, type, first, second) => {
          const sorted = Float64Array.from(values).sort();
          const low = quantileSorted(sorted, Math.min(first, second), type as QuantileType);
          const high = quantileSorted(sorted, Math.max(first, second), type as QuantileType);
          expect(low).toBeGreaterThanOrEqual(sorted[0] as number);
          expect(high).toBeLessThanOrEqual(sorted[sorted.length - 1] as number);
          expect(high - low).toBeGreaterThanOrEqual(-1e-9 * (1 + Math.abs(low)));
        },
      ),
      { seed: 20240611, numRuns: 200 },
    );
  });

  it('returns the extremes at p = 0 and p = 1 for every type', () => {
    for (let type = 1; type <= 9; type += 1) {
      expect(quantileSorted(sample, 0, type as QuantileType)).toBe(1); // R 4.2.2, quantiles_r.csv p = 0
      expect(quantileSorted(sample, 1, type as QuantileType)).toBe(21); // R 4.2.2, quantiles_r.csv p = 1
    }
  });
});

describe('quantile() input checks', () => {
  it('throws a RangeError in the error grammar for p outside [0, 1]', () => {
    expect(() => quantile(sample, 1.5)).toThrow(new RangeError('`probability` requires a number in [0, 1], got 1.5'));
    expect(() => quantile(sample, -0.1)).toThrow(new RangeError('`probability` requires a number in [0, 1], got -0.1'));
    expect(() => quantile(sample, Number.NaN)).toThrow(new RangeError('`probability` requires a number in [0, 1], got NaN'));
  });

  it('throws a RangeError for empty input, a NaN value and a bad type', () => {
    expect(() => quantile([], 0.5)).toThrow(new RangeError('`values` requires at least one number, got an empty list'));
    expect(() => quantileSorted(new Float64Array(0), 0.5)).toThrow(RangeError);
    expect(() => quantile([1, Number.NaN], 0.5)).toThrow(new RangeError('`values[1]` requires a number, got NaN'));
    expect(() => quantile(sample, 0.5, 10 as QuantileType)).toThrow(new RangeError('`type` requires an integer from 1 to 9, got 10'));
  });
});
