/**
 * One binomial draw, Binomial(n, p), from a seeded uniform source.
 *
 * For n min(p, 1 - p) < 30: inversion by sequential search, algorithm BINV of
 * Kachitvichyanukul, V. and Schmeiser, B. W. (1988), "Binomial random variate
 * generation", Communications of the ACM 31(2), 216-222: one uniform u, then
 * the probabilities P(X = x) from P(0) = q^n by the ratio
 * P(x) / P(x - 1) = ((n + 1) s / x - s), s = p / q, until they exceed u; with
 * p above one half it draws the failures instead (n - X). Above that bound
 * (where q^n may underflow and the search grows long) it counts n Bernoulli
 * trials, one uniform each. Both are exact binomial draws.
 *
 * Cost: O(1 + n p) for BINV, O(n) above its bound.
 */
import type { RandomSource } from '../random.js';

/** n min(p, 1 - p) below which BINV is used (the authors' own switch to their BTPE algorithm). */
const INVERSION_LIMIT = 30;

/**
 * @param trials n, a whole number >= 0
 * @param probability p in [0, 1]
 * @example
 *   binomialDraw(20, 0.7, createRandomSource(1)); // a whole number from 0 to 20
 */
export function binomialDraw(trials: number, probability: number, random: RandomSource): number {
  if (probability <= 0 || trials === 0) return 0;
  if (probability >= 1) return trials;
  const flipped = probability > 0.5;
  const p = flipped ? 1 - probability : probability;
  let draws: number;
  if (trials * p < INVERSION_LIMIT) {
    const q = 1 - p;
    const ratio = p / q;
    const step = (trials + 1) * ratio;
    let mass = q ** trials;
    let uniform = random();
    draws = 0;
    while (uniform > mass && draws < trials) {
      uniform -= mass;
      draws += 1;
      mass *= step / draws - ratio;
    }
  } else {
    draws = 0;
    for (let trial = 0; trial < trials; trial += 1) if (random() < p) draws += 1;
  }
  return flipped ? trials - draws : draws;
}
