import { describe, expect, it } from 'vitest';
import { listOf, numberOf, readBoxplotReferences } from '../helpers/stats-fixtures.js';
import { boxStats, fiveNumber } from '../../src/stats/box-stats.js';

// R 4.2.2 boxplot.stats(x), fivenum(x), IQR(x); see test/fixtures/stats/README.md.
const references = readBoxplotReferences();

describe('boxStats() against R 4.2.2 boxplot.stats (boxplot_stats_r.csv)', () => {
  it('read the four reference vectors A–D', () => {
    expect([...references.keys()]).toEqual(['A_no_outliers_n10', 'B_high_outlier_n11', 'C_both_sides_n13', 'D_ties_n8']);
  });

  for (const [name, reference] of references) {
    describe(`vector ${name}`, () => {
      const result = boxStats(reference.values);

      it('has R\'s whiskers, hinges and median (stats) and n', () => {
        expect([result.lowerWhisker, result.lowerHinge, result.median, result.upperHinge, result.upperWhisker]).toEqual(
          [1, 2, 3, 4, 5].map((index) => numberOf(reference, `stats${index}`)), // R 4.2.2 boxplot.stats()$stats
        );
        expect(result.n).toBe(numberOf(reference, 'n')); // R 4.2.2 boxplot.stats()$n
      });

      it('has R\'s outliers, in input order', () => {
        expect(result.outliers).toEqual(listOf(reference, 'out')); // R 4.2.2 boxplot.stats()$out
      });

      it('has R\'s notch to 1e-15 relative', () => {
        const lower = numberOf(reference, 'conf_lower');
        const upper = numberOf(reference, 'conf_upper');
        expect(Math.abs(result.notch[0] - lower)).toBeLessThanOrEqual(1e-15 * Math.abs(lower)); // R 4.2.2 boxplot.stats()$conf
        expect(Math.abs(result.notch[1] - upper)).toBeLessThanOrEqual(1e-15 * Math.abs(upper)); // R 4.2.2 boxplot.stats()$conf
      });

      it('has R\'s type 7 interquartile range', () => {
        expect(result.interquartileRange).toBe(numberOf(reference, 'IQR_type7')); // R 4.2.2 IQR()
      });

      it('fiveNumber() is R\'s fivenum', () => {
        expect(fiveNumber(reference.values)).toEqual([1, 2, 3, 4, 5].map((index) => numberOf(reference, `fivenum${index}`))); // R 4.2.2 fivenum()
      });
    });
  }
});

describe('boxStats()', () => {
  const vectorB = [1, 3, 4, 7, 8, 9, 12, 15, 20, 21, 50];

  it('gives the hinge spread and the mean from their definitions', () => {
    const result = boxStats(vectorB);
    expect(result.hingeSpread).toBe(17.5 - 5.5); // Tukey hinges of B from R 4.2.2 fivenum(): 5.5 and 17.5
    expect(result.mean).toBeCloseTo(150 / 11, 14); // definition: sum of B is 150, n = 11
  });

  it('with coefficient 0 puts the whiskers at the extremes and marks no outliers, as R does', () => {
    const result = boxStats(vectorB, { coefficient: 0 });
    expect([result.lowerWhisker, result.upperWhisker, result.outliers]).toEqual([1, 50, []]); // R boxplot.stats(coef = 0): do.out <- FALSE
  });

  it('with a wider coefficient keeps the far point inside the fence', () => {
    // Upper fence 17.5 + 3 × 12 = 53.5 > 50 (Tukey's fence at coefficient × hinge spread).
    expect(boxStats(vectorB, { coefficient: 3 }).outliers).toEqual([]);
  });

  it('handles a single value: all statistics equal it, notch of zero width', () => {
    const result = boxStats([7]);
    expect([result.lowerWhisker, result.lowerHinge, result.median, result.upperHinge, result.upperWhisker]).toEqual([7, 7, 7, 7, 7]); // fivenum definition at n = 1
    expect(result.notch).toEqual([7, 7]); // 1.58 × 0 / √1
  });

  it('treats infinite values as the outliers when the hinge spread is NaN, as R does', () => {
    // Both hinges are -Infinity, so the hinge spread is NaN.
    const result = boxStats([-Infinity, 2, -Infinity, -Infinity, -Infinity]);
    expect(result.hingeSpread).toBeNaN();
    expect(result.outliers).toEqual([-Infinity, -Infinity, -Infinity, -Infinity]); // R boxplot.stats: out <- !is.finite(x) when the IQR is NaN
    expect([result.lowerWhisker, result.upperWhisker]).toEqual([2, 2]); // R: range(x[!out])
    // With only the upper hinge finite the spread is infinite and the fences exclude nothing.
    expect(boxStats([-Infinity, -Infinity, -Infinity, 1, 2]).outliers).toEqual([]); // R: x < -Inf is never true
  });

  it('throws a RangeError for empty input, NaN and a negative coefficient', () => {
    expect(() => boxStats([])).toThrow(new RangeError('`values` requires at least one number, got an empty list'));
    expect(() => fiveNumber([1, Number.NaN])).toThrow(new RangeError('`values[1]` requires a number, got NaN'));
    expect(() => boxStats([1, 2], { coefficient: -1 })).toThrow(new RangeError('`coefficient` requires a number >= 0, got -1'));
  });
});
