/**
 * How much more data a gap's verdict would need: the factor k by which the
 * data would have to grow, at the same rounds per player, for the two
 * one-sided tests to decide with probability `power` if the true gap were the
 * one estimated now.
 *
 * Cluster-robust variance falls as 1 / players when each player plays as
 * much as now, so k players' worth of data gives the standard error se / sqrt(k).
 * On the normal approximation (Chow, S.-C., Shao, J. and Wang, H. (2008),
 * *Sample Size Calculations in Clinical Research*, 2nd ed., Chapman &
 * Hall/CRC, §4.2, tests for equivalence and for a margin):
 *
 * - |gap| < margin (equivalence to show): TOST power at standard error s is
 *   Phi((m - |g|)/s - z) + Phi((m + |g|)/s - z) - 1, z = z_(1-alpha), which
 *   rises with 1/s; the s giving `power` is found by bisection on 1/s.
 * - |gap| > margin (a gap beyond the margin to show): one one-sided test,
 *   power Phi((|g| - m)/s - z), so s = (|g| - m) / (z + z_power).
 * - |gap| = margin: no amount of data decides at this estimate (null).
 *
 * Cost: O(1) (60 bisection steps at most).
 */
import { normalCdf, normalQuantile } from '../stats/distributions.js';

export interface DataFactor {
  /** Multiply the data seen by this much (players, with their rounds). */
  readonly factor: number;
  readonly toShow: 'equivalence' | 'beyond_margin';
}

/**
 * The factor for a gap `estimate` with standard error `standardError`, margin
 * `margin` (symmetric), level alpha and the power wanted; null when the
 * estimate sits on the margin.
 */
export function dataFactor(estimate: number, standardError: number, margin: number, alpha: number, power = 0.8): DataFactor | null {
  const size = Math.abs(estimate);
  const critical = normalQuantile(1 - alpha);
  if (size > margin) {
    const needed = (size - margin) / (critical + normalQuantile(power));
    return { factor: (standardError / needed) ** 2, toShow: 'beyond_margin' };
  }
  if (!(size < margin)) return null;
  const powerAt = (precision: number) =>
    normalCdf((margin - size) * precision - critical) + normalCdf((margin + size) * precision - critical) - 1;
  // Bracket 1/s: from where the test cannot reject at all to where it has the power.
  let low = critical / margin;
  let high = 2 * low;
  while (powerAt(high) < power) high *= 2;
  for (let step = 0; step < 60 && high - low > 1e-12 * high; step += 1) {
    const middle = (low + high) / 2;
    if (powerAt(middle) < power) low = middle;
    else high = middle;
  }
  return { factor: (standardError * high) ** 2, toShow: 'equivalence' };
}
