import { describe, expect, it } from 'vitest';
import { dataFactor } from '../../src/field/data-needed.js';
import { twoOneSidedTests } from '../../src/field/two-one-sided-tests.js';
import { createRandomSource, standardNormalDraw } from '../../src/random.js';
import { normalQuantile } from '../../src/stats/distributions.js';

// The sample-size formulas of Chow, Shao and Wang (2008), Sample Size Calculations in Clinical
// Research, 2nd ed., section 4.2 (normal approximation), quoted from memory:
//   equivalence at a true difference of 0:      n proportional to (z_(1-alpha) + z_(1-beta/2))^2 / margin^2
//   a difference beyond the margin (one-sided): n proportional to (z_(1-alpha) + z_(1-beta))^2 / (|e| - margin)^2
describe('dataFactor()', () => {
  it('at a gap of 0 is the textbook equivalence size (z_(1-alpha) + z_(1-beta/2))^2 se^2 / margin^2', () => {
    const found = dataFactor(0, 0.01, 0.02, 0.05, 0.8);
    const textbook = ((normalQuantile(0.95) + normalQuantile(0.9)) * 0.01 / 0.02) ** 2; // Chow, Shao and Wang (2008), §4.2, equivalence, e = 0
    expect(found?.toShow).toBe('equivalence');
    expect(Math.abs((found?.factor ?? 0) - textbook) / textbook).toBeLessThan(1e-9);
  });

  it('beyond the margin is the textbook one-sided size (z_(1-alpha) + z_(1-beta))^2 se^2 / (|e| - margin)^2', () => {
    const found = dataFactor(-0.05, 0.02, 0.02, 0.05, 0.8);
    const textbook = ((normalQuantile(0.95) + normalQuantile(0.8)) * 0.02 / 0.03) ** 2; // Chow, Shao and Wang (2008), §4.2, non-inferiority form
    expect(found?.toShow).toBe('beyond_margin');
    expect(Math.abs((found?.factor ?? 0) - textbook) / textbook).toBeLessThan(1e-12);
  });

  it('far from 0 inside the margin approaches the one-tail size (z_(1-alpha) + z_(1-beta))^2', () => {
    const found = dataFactor(0.015, 0.02, 0.02, 0.05, 0.8);
    const oneTail = ((normalQuantile(0.95) + normalQuantile(0.8)) * 0.02 / 0.005) ** 2; // Chow, Shao and Wang (2008), §4.2, equivalence, |e| large
    expect(Math.abs((found?.factor ?? 0) - oneTail) / oneTail).toBeLessThan(1e-6);
  });

  it('has 80% power at the size it gives: 20,000 simulated estimates (seeded) decide 80% +- 1% of the time', () => {
    const random = createRandomSource(22);
    for (const [gap, toShow] of [[0.008, 'equivalence'], [-0.035, 'beyond_margin']] as const) {
      const found = dataFactor(gap, 0.012, 0.02, 0.05, 0.8);
      expect(found?.toShow).toBe(toShow);
      const standardError = 0.012 / Math.sqrt(found?.factor ?? 1);
      let decided = 0;
      const draws = 20_000;
      for (let draw = 0; draw < draws; draw += 1) {
        const estimate = gap + standardError * standardNormalDraw(random);
        const tests = twoOneSidedTests(estimate, standardError, { lower: -0.02, upper: 0.02 });
        if (toShow === 'equivalence' ? tests.equivalent : tests.interval.upper < -0.02) decided += 1;
      }
      expect(Math.abs(decided / draws - 0.8)).toBeLessThan(0.01); // binomial sd 0.0028 at 20,000 draws
    }
  });

  it('is null on the margin itself', () => {
    expect(dataFactor(0.02, 0.01, 0.02, 0.05)).toBeNull();
    expect(dataFactor(-0.02, 0.01, 0.02, 0.05)).toBeNull();
  });
});
