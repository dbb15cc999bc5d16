import { combinations } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { binomialDraw } from '../../src/plan/binomial-draw.js';
import { createRandomSource } from '../../src/random.js';
import { chiSquareUpperTail } from '../../src/stats/distributions.js';

/** Binomial probabilities from mathjs's exact binomial coefficients (a general-purpose reference library from the npm registry). */
function binomialPmf(n: number, p: number): number[] {
  return Array.from({ length: n + 1 }, (_, k) => Number(combinations(n, k)) * p ** k * (1 - p) ** (n - k));
}

/** Pearson's chi-square goodness-of-fit p-value of `draws` against the pmf, pooling cells with an expected count below 5. */
function goodnessOfFit(draws: number[], pmf: number[]): number {
  const observed = new Array<number>(pmf.length).fill(0);
  for (const draw of draws) observed[draw] = (observed[draw] as number) + 1;
  let statistic = 0;
  let cells = 0;
  let pooledObserved = 0;
  let pooledExpected = 0;
  pmf.forEach((probability, k) => {
    pooledObserved += observed[k] as number;
    pooledExpected += probability * draws.length;
    if (pooledExpected >= 5) {
      statistic += (pooledObserved - pooledExpected) ** 2 / pooledExpected;
      cells += 1;
      pooledObserved = 0;
      pooledExpected = 0;
    }
  });
  if (pooledExpected > 0) statistic += (pooledObserved - pooledExpected) ** 2 / pooledExpected;
  return chiSquareUpperTail(statistic, cells - 1);
}

describe('binomialDraw()', () => {
  it.each([
    [20, 0.3, 'BINV'],
    [20, 0.7, 'BINV on the failures'],
    [20, 0.02, 'BINV, mostly zeros'],
    [200, 0.4, 'Bernoulli trials (n p >= 30)'],
  ])('draws Binomial(%i, %f) by %s: Pearson goodness of fit against the exact pmf (20,000 seeded draws)', (n, p) => {
    const random = createRandomSource(2300 + n);
    const draws = Array.from({ length: 20_000 }, () => binomialDraw(n, p, random));
    expect(draws.every((draw) => Number.isInteger(draw) && draw >= 0 && draw <= n)).toBe(true);
    expect(goodnessOfFit(draws, binomialPmf(n, p))).toBeGreaterThan(0.001);
  });

  it('fails the same check for a draw of the wrong distribution (the check can fail)', () => {
    const random = createRandomSource(7);
    const draws = Array.from({ length: 20_000 }, () => binomialDraw(20, 0.33, random));
    expect(goodnessOfFit(draws, binomialPmf(20, 0.3))).toBeLessThan(1e-6);
  });

  it('returns 0 and n at the ends', () => {
    const random = createRandomSource(1);
    expect(binomialDraw(20, 0, random)).toBe(0);
    expect(binomialDraw(20, 1, random)).toBe(20);
    expect(binomialDraw(0, 0.5, random)).toBe(0);
  });
});
