import { describe, expect, it } from 'vitest';
import { chiSquareUpperTail } from '../src/stats/distributions.js';
import {
  createRandomSource,
  createXoshiro128StarStar,
  splitMix64,
  standardNormalDraw,
  type RandomSource,
} from '../src/random.js';

function draws(random: RandomSource, count: number): number[] {
  return Array.from({ length: count }, () => random());
}

describe('createXoshiro128StarStar()', () => {
  it('reproduces the reference xoshiro128** 1.1 stream from state [1, 2, 3, 4]', () => {
    const next = createXoshiro128StarStar([1, 2, 3, 4]);
    // rust-random/rngs rand_xoshiro/src/xoshiro128starstar.rs, test `reference`: produced with xoshiro128starstar.c v1.1
    expect(Array.from({ length: 10 }, next)).toEqual([
      11520, 0, 5927040, 70819200, 2031721883, 1637235492, 1287239034, 3734860849, 3729100597, 4258142804,
    ]);
  });

  it('refuses the all-zero state', () => {
    expect(() => createXoshiro128StarStar([0, 0, 0, 0])).toThrow(
      new RangeError('`state` requires at least one non-zero word, got [0, 0, 0, 0]'),
    );
  });
});

describe('splitMix64()', () => {
  it('reproduces the reference SplitMix64 stream from seed 1477776061723855037', () => {
    const next = splitMix64(1477776061723855037n);
    // rust-random/rngs rand_xoshiro/src/splitmix64.rs, test `reference`: produced with splitmix64.c
    expect(Array.from({ length: 5 }, next)).toEqual([
      1985237415132408290n,
      2979275885539914483n,
      13511426838097143398n,
      8488337342461049707n,
      15141737807933549159n,
    ]);
  });
});

describe('createRandomSource()', () => {
  it('gives the same sequence for the same seed and a different one for another seed', () => {
    const first = draws(createRandomSource(20240611), 1000);
    expect(draws(createRandomSource(20240611), 1000)).toEqual(first);
    const other = draws(createRandomSource(20240612), 1000);
    expect(other.filter((value, index) => value === first[index]).length).toBeLessThan(5);
  });

  it('draws in [0, 1) on a grid of 2^-32', () => {
    const values = draws(createRandomSource(-7), 10_000);
    for (const value of values) {
      expect(value).toBeGreaterThanOrEqual(0);
      expect(value).toBeLessThan(1);
      expect(Number.isInteger(value * 2 ** 32)).toBe(true);
    }
  });

  it('passes a chi-square uniformity check: 200 000 draws in 50 equal bins, p > 0.001', () => {
    const binCount = 50;
    const drawCount = 200_000;
    const counts = new Array<number>(binCount).fill(0);
    const random = createRandomSource(12345);
    for (let index = 0; index < drawCount; index += 1) {
      const bin = Math.floor(random() * binCount);
      counts[bin] = (counts[bin] ?? 0) + 1;
    }
    const expected = drawCount / binCount;
    const statistic = counts.reduce((sum, count) => sum + (count - expected) ** 2 / expected, 0);
    // Pearson's chi-square goodness-of-fit statistic on 49 degrees of freedom.
    expect(chiSquareUpperTail(statistic, binCount - 1)).toBeGreaterThan(0.001);
  });

  it('rejects a seed that is not a safe integer', () => {
    expect(() => createRandomSource(1.5)).toThrow(new RangeError('`seed` requires a safe integer, got 1.5'));
    expect(() => createRandomSource(Number.NaN)).toThrow(RangeError);
  });
});

describe('standardNormalDraw()', () => {
  it('has mean 0 and variance 1 within 4 standard errors over 100 000 draws', () => {
    const drawCount = 100_000;
    const random = createRandomSource(99);
    const values = Array.from({ length: drawCount }, () => standardNormalDraw(random));
    const mean = values.reduce((sum, value) => sum + value, 0) / drawCount;
    const variance = values.reduce((sum, value) => sum + (value - mean) ** 2, 0) / (drawCount - 1);
    expect(Math.abs(mean)).toBeLessThan(4 / Math.sqrt(drawCount)); // N(0, 1): SE of the mean is 1/√n
    expect(Math.abs(variance - 1)).toBeLessThan(4 * Math.sqrt(2 / drawCount)); // N(0, 1): SE of the variance is √(2/n)
    expect(values.filter((value) => value < -1.959963984540054).length / drawCount).toBeCloseTo(0.025, 2); // R qnorm(0.025), normal_r.csv
  });

  it('skips a uniform draw of exactly 0 and inverts the next one', () => {
    const sequence = [0, 0, 0.5];
    const random: RandomSource = () => sequence.shift() ?? Number.NaN;
    expect(standardNormalDraw(random)).toBe(0); // Φ⁻¹(0.5) = 0 by symmetry
    expect(sequence).toEqual([]);
  });

  it('is deterministic for a seeded source', () => {
    const first = createRandomSource(3);
    const second = createRandomSource(3);
    expect(Array.from({ length: 20 }, () => standardNormalDraw(first))).toEqual(
      Array.from({ length: 20 }, () => standardNormalDraw(second)),
    );
  });
});
