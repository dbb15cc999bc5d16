import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { quantileSelect } from '../../src/stats/quantile-select.js';
import { quantileSorted } from '../../src/stats/quantile.js';

// The reference is quantileSorted (type 7), which test/stats/quantile.test.ts checks against R 4.2.2's quantile().
describe('quantileSelect()', () => {
  it('property (1,000 seeded runs): equals quantileSorted(type 7) of the sorted samples to the last bit, ties and all', () => {
    fc.assert(
      fc.property(
        fc.array(fc.oneof(fc.double({ min: 0, max: 60_000, noNaN: true }), fc.constantFrom(0, 20, 20, 35.5)), { minLength: 1, maxLength: 70 }),
        fc.oneof(fc.double({ min: 0, max: 1, noNaN: true }), fc.constantFrom(0, 0.1, 0.5, 0.9, 1)),
        (samples, probability) => {
          const sorted = Float64Array.from(samples).sort();
          const scratch = new Float64Array(samples.length + 3);
          expect(quantileSelect(samples, probability, scratch)).toBe(quantileSorted(sorted, probability, 7));
          expect(samples).toEqual(samples.slice()); // the input is left alone
        },
      ),
      { seed: 7301, numRuns: 1000 },
    );
  });

  it('gives the median of 1..9 as 5 and the 10th percentile of 1..11 as 2 (Hyndman and Fan type 7, by hand)', () => {
    expect(quantileSelect([9, 1, 8, 2, 7, 3, 6, 4, 5], 0.5, new Float64Array(9))).toBe(5);
    expect(quantileSelect([11, 10, 9, 8, 7, 6, 5, 4, 3, 2, 1], 0.1, new Float64Array(11))).toBe(2); // 1 + 10 x 0.1 = 2nd order statistic
  });
});
