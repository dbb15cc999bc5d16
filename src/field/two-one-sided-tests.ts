/**
 * Two one-sided tests (TOST) of equivalence for an estimate with a standard
 * error, on the normal approximation.
 *
 * Method: Schuirmann, D. J. (1987), A comparison of the two one-sided tests
 * procedure and the power approach for assessing the equivalence of average
 * bioavailability, *Journal of Pharmacokinetics and Biopharmaceutics* 15(6),
 * 657-680. With margins `lower < upper`, H0: theta <= lower or theta >= upper
 * against H1: lower < theta < upper. Each half is a one-sided z test at level
 * alpha,
 *
 *     z_lower = (estimate - lower) / se,   p_lower = P(Z > z_lower)
 *     z_upper = (estimate - upper) / se,   p_upper = P(Z < z_upper)
 *
 * and equivalence is shown when both reject, i.e. when the larger p is below
 * alpha, i.e. when the 1 - 2 alpha interval estimate +- z_(1-alpha) se lies
 * inside (lower, upper) (Schuirmann 1987; Westlake 1981).
 *
 * Cost: O(1).
 */
import { normalCdf, normalQuantile, normalUpperTail } from '../stats/distributions.js';

export interface TwoOneSidedTests {
  readonly zLower: number;
  readonly pLower: number;
  readonly zUpper: number;
  readonly pUpper: number;
  /** max(pLower, pUpper). */
  readonly p: number;
  /** The 1 - 2 alpha interval. */
  readonly interval: { readonly lower: number; readonly upper: number; readonly level: number };
  /** Both one-sided tests reject at alpha. */
  readonly equivalent: boolean;
}

/**
 * TOST for `estimate` with standard error `standardError` against the margins.
 *
 * @throws RangeError when the standard error is not a finite number > 0, the
 *   margins are not ordered, or alpha is not in (0, 0.5).
 * @example
 *   // Rogers, Howard and Vessey (1993): ES 0.12, SE 0.09, margins +-0.2
 *   twoOneSidedTests(0.12, 0.09, { lower: -0.2, upper: 0.2 }).p; // 0.187
 */
export function twoOneSidedTests(estimate: number, standardError: number, margins: { readonly lower: number; readonly upper: number }, alpha = 0.05): TwoOneSidedTests {
  if (!(standardError > 0) || !Number.isFinite(standardError)) throw new RangeError(`\`standardError\` requires a finite number > 0, got ${standardError}`);
  if (!(margins.lower < margins.upper)) throw new RangeError(`\`margins\` requires lower < upper, got ${margins.lower} and ${margins.upper}`);
  if (!(alpha > 0 && alpha < 0.5)) throw new RangeError(`\`alpha\` requires a number in (0, 0.5), got ${alpha}`);
  const zLower = (estimate - margins.lower) / standardError;
  const zUpper = (estimate - margins.upper) / standardError;
  const pLower = normalUpperTail(zLower);
  const pUpper = normalCdf(zUpper);
  const critical = normalQuantile(1 - alpha);
  const interval = { lower: estimate - critical * standardError, upper: estimate + critical * standardError, level: 1 - 2 * alpha };
  const p = Math.max(pLower, pUpper);
  return { zLower, pLower, zUpper, pUpper, p, interval, equivalent: p < alpha };
}
