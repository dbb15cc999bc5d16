/**
 * Link functions for a binomial GLM: g(mu) = linear predictor, its inverse,
 * and d mu / d(linear predictor).
 *
 * McCullagh, P. and Nelder, J. A. (1989), *Generalized Linear Models*, 2nd
 * ed., Chapman & Hall, §4.3.1 (logit, probit, complementary log-log).
 *
 * Every inverse is computed in a form that keeps full relative accuracy in
 * both tails, and `inverseComplement` gives 1 - mu directly, so that
 * log(1 - mu) never suffers the cancellation of `1 - inverse(x)`:
 *
 * - logit: mu = 1 / (1 + exp(-x)) for x >= 0 and exp(x) / (1 + exp(x)) for x < 0;
 * - probit: mu = normalCdf(x), 1 - mu = normalUpperTail(x);
 * - cloglog: mu = -expm1(-exp(x)), 1 - mu = exp(-exp(x)).
 *
 * Nothing is clamped here. (R's `binomial()` family clamps: the logit inverse
 * at |x| > 30, the probit linear predictor at +-qnorm(DBL_EPSILON), cloglog mu
 * into [eps, 1 - eps], and every dmu/dx below at DBL_EPSILON. We do not copy
 * those clamps; the fitting code instead treats a row whose weight underflows
 * to 0 as carrying no information, as R's `glm.fit` drops rows with
 * dmu/dx == 0 from an iteration's weighted least squares.)
 */
import { normalCdf, normalDensity, normalQuantile, normalUpperTail } from '../stats/distributions.js';

export type LinkName = 'logit' | 'probit' | 'cloglog';

export interface Link {
  readonly name: LinkName;
  /** g(mu): probability to linear predictor. */
  link(mu: number): number;
  /** g^{-1}(linearPredictor): the probability. */
  inverse(linearPredictor: number): number;
  /** 1 - g^{-1}(linearPredictor), computed without cancellation. */
  inverseComplement(linearPredictor: number): number;
  /** d mu / d(linear predictor) at the linear predictor. */
  derivative(linearPredictor: number): number;
  /** d^2 mu / d(linear predictor)^2, for Newton steps with the observed information. */
  secondDerivative(linearPredictor: number): number;
}

/** The names accepted by {@link linkFor}. */
export const LINK_NAMES: readonly LinkName[] = ['logit', 'probit', 'cloglog'];

function logisticInverse(linearPredictor: number): number {
  if (linearPredictor >= 0) return 1 / (1 + Math.exp(-linearPredictor));
  const exponential = Math.exp(linearPredictor);
  return exponential / (1 + exponential);
}

const logit: Link = {
  name: 'logit',
  link: (mu) => Math.log(mu) - Math.log1p(-mu),
  inverse: logisticInverse,
  inverseComplement: (linearPredictor) => logisticInverse(-linearPredictor),
  derivative: (linearPredictor) => {
    // mu (1 - mu) = exp(-|x|) / (1 + exp(-|x|))^2, no overflow for large |x|.
    const exponential = Math.exp(-Math.abs(linearPredictor));
    const denominator = 1 + exponential;
    return exponential / (denominator * denominator);
  },
  // mu (1 - mu) (1 - 2 mu), with 1 - 2 mu = (1 - mu) - mu.
  secondDerivative: (linearPredictor) => {
    const exponential = Math.exp(-Math.abs(linearPredictor));
    const denominator = 1 + exponential;
    const mu = logisticInverse(linearPredictor);
    return (exponential / (denominator * denominator)) * (logisticInverse(-linearPredictor) - mu);
  },
};

const probit: Link = {
  name: 'probit',
  link: (mu) => normalQuantile(mu),
  inverse: (linearPredictor) => normalCdf(linearPredictor),
  inverseComplement: (linearPredictor) => normalUpperTail(linearPredictor),
  derivative: (linearPredictor) => normalDensity(linearPredictor),
  secondDerivative: (linearPredictor) => -linearPredictor * normalDensity(linearPredictor),
};

const complementaryLogLog: Link = {
  name: 'cloglog',
  link: (mu) => Math.log(-Math.log1p(-mu)),
  inverse: (linearPredictor) => -Math.expm1(-Math.exp(linearPredictor)),
  inverseComplement: (linearPredictor) => Math.exp(-Math.exp(linearPredictor)),
  // exp(x) exp(-exp(x)) = exp(x - exp(x)); tends to 0 at both ends without overflow.
  derivative: (linearPredictor) => Math.exp(linearPredictor - Math.exp(linearPredictor)),
  // exp(x - exp(x)) (1 - exp(x)); the first factor underflows to 0 before the second overflows.
  secondDerivative: (linearPredictor) => {
    const first = Math.exp(linearPredictor - Math.exp(linearPredictor));
    return first === 0 ? 0 : first * -Math.expm1(linearPredictor);
  },
};

const links: Readonly<Record<LinkName, Link>> = { logit, probit, cloglog: complementaryLogLog };

/**
 * The link object for a name.
 *
 * @example
 * linkFor('logit').inverse(0); // 0.5
 */
export function linkFor(name: LinkName): Link {
  return links[name];
}
