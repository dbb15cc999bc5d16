/**
 * When a binomial fit is separated (complete or quasi-complete separation:
 * the maximum-likelihood estimate does not exist): rows whose fitted
 * probability is within BOUNDARY of 0 or 1 and whose linear predictor still
 * moved by more than DIVERGING_STEP in the last step; and which
 * coefficients kept growing. Albert, A. and Anderson, J. A. (1984), On the
 * existence of maximum likelihood estimates in logistic regression models,
 * *Biometrika* 71(1), 1-10, for what separation is; the two thresholds are
 * this project's.
 */
/** Fitted probabilities closer than this to 0 or 1 mark a row as on the boundary. */
export const BOUNDARY = 1e-10;
/** A step that changes a boundary row's linear predictor by more than this means it is still diverging. */
export const DIVERGING_STEP = 1e-6;

/**
 * Whether a logit fit at `linearPredictor` is separated as {@link fitBinomial}
 * judges it: some row's fitted probability within BOUNDARY of 0 or 1 (from
 * the same arithmetic as {@link atEstimate}) that still moved by more than
 * DIVERGING_STEP in the last step.
 */
export function separatedAt(linearPredictor: Float64Array, lastChange: (row: number) => number): boolean {
  for (let i = 0; i < linearPredictor.length; i += 1) {
    const eta = linearPredictor[i] as number;
    const exponential = Math.exp(-Math.abs(eta));
    const small = exponential * (1 / (1 + exponential));
    if (small < BOUNDARY && stillDiverging(eta, lastChange(i))) return true;
  }
  return false;
}

/** Whether a row at linear predictor `eta` that moved by `change` in the last step still diverges: by more than DIVERGING_STEP, relative to |eta| above 1. */
export function stillDiverging(eta: number, change: number): boolean {
  return Math.abs(change) > DIVERGING_STEP * Math.max(1, Math.abs(eta));
}

export function divergingNames(lastStep: Float64Array, names: readonly string[]): string[] {
  let largest = 0;
  for (const step of lastStep) largest = Math.max(largest, Math.abs(step));
  if (!(largest > 0)) return [...names];
  return names.filter((_, j) => Math.abs(lastStep[j] as number) >= 1e-3 * largest);
}
