/**
 * Closed-form power of the textbook tests the size study is checked against.
 * Written here from the published formulas, apart from the product's code
 * (they use only its normal distribution functions, themselves checked
 * against R in test/stats/distributions.test.ts).
 */
import { normalCdf, normalQuantile } from '../../src/stats/distributions.js';

/**
 * Power of the two-sided test comparing two proportions with n per group, at
 * level alpha, with the continuity correction: the inverse of the sample-size
 * formula of Fleiss, Levin and Paik (2003), *Statistical Methods for Rates
 * and Proportions*, 3rd ed., chapter 4 (Kramer and Greenhouse's correction),
 *
 *     n = n'/4 (1 + sqrt(1 + 4 / (n' |p2 - p1|)))^2,
 *     n' = [z_{a/2} sqrt(2 pbar qbar) + z_b sqrt(p1 q1 + p2 q2)]^2 / (p2 - p1)^2,
 *
 * solved for z_b: z_b = (sqrt(n) |p2 - p1| - 1/sqrt(n) - z_{a/2} sqrt(2 pbar qbar)) / sqrt(p1 q1 + p2 q2)
 * (without the correction, the 1/sqrt(n) term goes: the "classical" formula,
 * as R's `power.prop.test` computes it).
 */
export function twoProportionPower(p1: number, p2: number, n: number, alpha: number, continuity = true): number {
  const difference = Math.abs(p2 - p1);
  const mean = (p1 + p2) / 2;
  const spread = Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2));
  const z = normalQuantile(1 - alpha / 2);
  return normalCdf((Math.sqrt(n) * difference - (continuity ? 1 / Math.sqrt(n) : 0) - z * Math.sqrt(2 * mean * (1 - mean))) / spread);
}

/** Fleiss, Levin and Paik's continuity-corrected sample size per group (the formula above, forward). */
export function twoProportionSampleSize(p1: number, p2: number, power: number, alpha: number): number {
  const difference = Math.abs(p2 - p1);
  const mean = (p1 + p2) / 2;
  const uncorrected = (normalQuantile(1 - alpha / 2) * Math.sqrt(2 * mean * (1 - mean)) + normalQuantile(power) * Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2))) ** 2 / difference ** 2;
  return (uncorrected / 4) * (1 + Math.sqrt(1 + 4 / (uncorrected * difference))) ** 2;
}

/**
 * Power of the Wald test of the slope of a simple logistic regression with a
 * continuous covariate, by formula (1) of Hsieh, F. Y., Bloch, D. A. and
 * Larsen, M. D. (1998), "A simple method of sample size calculation for
 * linear and logistic regression", Statistics in Medicine 17, 1623-1634:
 *
 *     n = (z_{1-a/2} + z_{1-b})^2 / (p1 (1 - p1) beta*^2),
 *
 * n the number of Bernoulli trials, p1 the event rate at the covariate's mean
 * and beta* the log odds ratio per standard deviation of the covariate;
 * solved for the power.
 */
export function hsiehPower(n: number, eventRateAtMean: number, logOddsPerSd: number, alpha: number): number {
  return normalCdf(Math.sqrt(n * eventRateAtMean * (1 - eventRateAtMean)) * Math.abs(logOddsPerSd) - normalQuantile(1 - alpha / 2));
}

/** Hsieh et al.'s formula (1) forward: the trials needed. */
export function hsiehSampleSize(eventRateAtMean: number, logOddsPerSd: number, power: number, alpha: number): number {
  return (normalQuantile(1 - alpha / 2) + normalQuantile(power)) ** 2 / (eventRateAtMean * (1 - eventRateAtMean) * logOddsPerSd ** 2);
}
