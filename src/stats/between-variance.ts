/**
 * The between-unit variance of a random-effects model from unit estimates and
 * their sampling variances: the method-of-moments estimator of DerSimonian,
 * R. and Laird, N. (1986), "Meta-analysis in clinical trials", Controlled
 * Clinical Trials 7, 177-188:
 *
 *     w_i = 1 / v_i,   mean = sum w_i y_i / sum w_i,   Q = sum w_i (y_i - mean)^2,
 *     tau^2 = max(0, (Q - (k - 1)) / (sum w_i - sum w_i^2 / sum w_i)).
 *
 * Cost: O(k).
 */

export interface BetweenVariance {
  /** tau^2, truncated at 0. */
  readonly variance: number;
  /** Cochran's Q. */
  readonly q: number;
  /** The inverse-variance weighted mean. */
  readonly mean: number;
  readonly units: number;
}

/**
 * @param estimates y_i, one per unit (at least 2)
 * @param variances v_i > 0, their sampling variances
 * @throws RangeError for fewer than 2 units, lengths that differ, or a variance not above 0
 * @example
 *   betweenVariance([0.1, 0.5, -0.2], [0.01, 0.02, 0.015]).variance;
 */
export function betweenVariance(estimates: ArrayLike<number>, variances: ArrayLike<number>): BetweenVariance {
  const units = estimates.length;
  if (units < 2 || variances.length !== units) {
    throw new RangeError(`\`estimates\` and \`variances\` require the same length of at least 2, got ${units} and ${variances.length}`);
  }
  let sumWeights = 0;
  let sumSquaredWeights = 0;
  let weighted = 0;
  for (let i = 0; i < units; i += 1) {
    const variance = variances[i] as number;
    if (!(variance > 0) || !Number.isFinite(variance)) throw new RangeError(`\`variances[${i}]\` requires a finite number above 0, got ${variance}`);
    const weight = 1 / variance;
    sumWeights += weight;
    sumSquaredWeights += weight * weight;
    weighted += weight * (estimates[i] as number);
  }
  const mean = weighted / sumWeights;
  let q = 0;
  for (let i = 0; i < units; i += 1) q += ((estimates[i] as number) - mean) ** 2 / (variances[i] as number);
  const variance = Math.max(0, (q - (units - 1)) / (sumWeights - sumSquaredWeights / sumWeights));
  return { variance, q, mean, units };
}
