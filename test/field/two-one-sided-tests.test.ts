import { describe, expect, it } from 'vitest';
import { twoOneSidedTests } from '../../src/field/two-one-sided-tests.js';
import { gapVerdict } from '../../src/field/equivalence-verdict.js';

/** Difference of two independent proportions and its unpooled (Wald) standard error, the textbook formula. */
function proportionDifference(hits1: number, n1: number, hits2: number, n2: number): { estimate: number; standardError: number } {
  const p1 = hits1 / n1;
  const p2 = hits2 / n2;
  return { estimate: p1 - p2, standardError: Math.sqrt((p1 * (1 - p1)) / n1 + (p2 * (1 - p2)) / n2) };
}

// The printed digits below are as quoted, with their sources, in the TOSTER package's validation
// vignette (Lakens, vignettes/TOSTValidation.Rmd, examples 5.1, 6.1 and 6.3); the original papers
// were not at hand.
describe('twoOneSidedTests()', () => {
  it('reproduces Rogers, Howard and Vessey (1993), Psychological Bulletin 113(3), p. 557, to the printed digits', () => {
    const tests = twoOneSidedTests(0.12, 0.09, { lower: -0.2, upper: 0.2 });
    expect(tests.zLower.toFixed(3)).toBe('3.556'); // z1 = (0.12 + 0.20)/0.09 = 3.556
    expect(tests.pLower.toFixed(3)).toBe('0.000'); // p = .000
    expect(tests.zUpper.toFixed(3)).toBe('-0.889'); // z2 = (0.12 - 0.20)/0.09 = -0.889
    expect(tests.pUpper.toFixed(3)).toBe('0.187'); // p = .187, "we table the larger p value of 0.187"
    expect(tests.p.toFixed(3)).toBe('0.187');
    expect(tests.interval.lower.toFixed(3)).toBe('-0.028'); // equivalence interval 0.12 -+ 1.645 x 0.09: -0.028
    expect(tests.interval.upper.toFixed(3)).toBe('0.268'); // to 0.268
    expect(tests.equivalent).toBe(false);
  });

  it('reproduces Tunes da Silva, Logan and Klein (2009), Biol Blood Marrow Transplant 15(1 Suppl), Table 3 (proportions, margin 10%)', () => {
    // Treatment-related mortality: 187/583 (bone marrow) v 95/328 (peripheral blood), 90% interval.
    const mortality = proportionDifference(187, 583, 95, 328);
    const trm = twoOneSidedTests(mortality.estimate, mortality.standardError, { lower: -0.1, upper: 0.1 });
    expect(Math.abs(trm.zUpper).toFixed(2)).toBe('2.18'); // Z = 2.18
    expect((100 * trm.interval.lower).toFixed(1)).toBe('-2.1'); // 90% CI -2.1%
    expect((100 * trm.interval.upper).toFixed(1)).toBe('8.3'); // to 8.3%
    expect(trm.equivalent).toBe(true); // equivalence shown
    // Overall survival: 331/583 v 201/328.
    const survival = proportionDifference(331, 583, 201, 328);
    const os = twoOneSidedTests(survival.estimate, survival.standardError, { lower: -0.1, upper: 0.1 });
    expect(os.zLower.toFixed(2)).toBe('1.62'); // Z = 1.62
    expect(os.p.toFixed(3)).toBe('0.052'); // p = 0.052
    expect((100 * os.interval.lower).toFixed(1)).toBe('-10.1'); // 90% CI [-10.1%;
    expect((100 * os.interval.upper).toFixed(1)).toBe('1.1'); // 1.1%]
    expect(os.equivalent).toBe(false); // effects of 10% cannot be rejected
  });

  it('reproduces Walker and Nowacki (2011), J Gen Intern Med 26(2), the 95% TOST interval of 133/262 v 136/265', () => {
    const difference = proportionDifference(133, 262, 136, 265);
    const tests = twoOneSidedTests(difference.estimate, difference.standardError, { lower: -0.12, upper: 0.12 }, 0.025);
    expect(tests.interval.level).toBeCloseTo(0.95, 12);
    expect(tests.interval.lower.toFixed(2)).toBe('-0.09'); // Lower = -0.09
    expect(tests.interval.upper.toFixed(2)).toBe('0.08'); // upper = 0.08
    expect(tests.equivalent).toBe(true);
  });

  it('shows equivalence exactly when its 1 - 2 alpha interval lies inside the margins', () => {
    for (const estimate of [-0.03, -0.01, 0, 0.004, 0.02, 0.05]) {
      for (const standardError of [0.001, 0.005, 0.01, 0.03]) {
        const tests = twoOneSidedTests(estimate, standardError, { lower: -0.02, upper: 0.02 });
        expect(tests.equivalent).toBe(tests.interval.lower > -0.02 && tests.interval.upper < 0.02); // Schuirmann (1987): TOST = interval inclusion
      }
    }
  });

  it('refuses a standard error that is not a finite number above 0', () => {
    expect(() => twoOneSidedTests(0, 0, { lower: -1, upper: 1 })).toThrow(RangeError);
    expect(() => twoOneSidedTests(0, Number.NaN, { lower: -1, upper: 1 })).toThrow(RangeError);
    expect(() => twoOneSidedTests(0, 1, { lower: 1, upper: -1 })).toThrow(RangeError);
  });
});

describe('gapVerdict()', () => {
  const margins = { lower: -0.02, upper: 0.02 };
  it.each([
    [0.001, 0.002, 'holds'],
    [-0.06, 0.01, 'under_compensates'],
    [0.06, 0.01, 'over_compensates'],
    [-0.025, 0.01, 'not_enough_data'],
    [0, 0.05, 'not_enough_data'],
  ] as const)('judges a gap of %s with standard error %s as %s', (estimate, standardError, verdict) => {
    expect(gapVerdict(twoOneSidedTests(estimate, standardError, margins), margins)).toBe(verdict);
  });
});
