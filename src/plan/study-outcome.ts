/**
 * What one simulated study tells its designer, measured the way the designer
 * would: the study is fitted with the product's own fit (`fitModel`: the
 * binomial GLM by IRLS, cluster-robust CR1 errors by player, no
 * cross-validation, likelihood-ratio tests or baseline, which the size study
 * does not use), then
 *
 * - the latency effect and the scale effect are each tested by a Wald test of
 *   every coefficient whose term involves them (with the CR1 covariance;
 *   `wald-test.ts`), two-sided at `alpha`;
 * - the compensation scale at the named latency and difficulty gets its 90%
 *   interval (`compensation-scale.ts`, delta method, CR1 covariance), and
 *   whether that interval covers the assumed model's own scale.
 *
 * A fit that cannot be used for compensation (no estimates, the iteration
 * limit, a scale effect that does not increase over the training range, or no
 * scale that makes up for the latency) is recorded with its reason.
 */
import type { Trials } from '../formats/trials-types.js';
import { fitModel } from '../model/fit-model.js';
import type { LinkName } from '../model/links.js';
import { type TermName, designColumns, termFactors } from '../model/terms.js';
import { type ScaleForm, neededScaleInterval } from './compensation-scale.js';
import { waldTest } from './wald-test.js';

/** Why a fitted study could not be used for compensation (0: it could). */
export const OUTCOME_STATUSES = ['usable', 'separation', 'iteration_limit', 'rank_deficient', 'scale_not_increasing', 'no_scale_at_latency'] as const;
export type OutcomeStatus = (typeof OUTCOME_STATUSES)[number];

export interface StudyOutcome {
  readonly status: OutcomeStatus;
  readonly latencyDetected: boolean;
  readonly scaleDetected: boolean;
  /** The 90% interval of the compensation scale, or null when the fit cannot be used. */
  readonly interval: { readonly scale: number; readonly lower: number; readonly upper: number } | null;
  /** Whether the interval covers `trueScale`; null without an interval. */
  readonly covered: boolean | null;
}

export interface OutcomeSettings {
  readonly link: LinkName;
  readonly scaleForm: ScaleForm;
  readonly terms: readonly TermName[];
  readonly alpha: number;
  readonly atLatency: number;
  readonly atDifficulty: number | string;
  readonly referenceLatency: number;
  /** The assumed model's compensation scale at `atLatency`. */
  readonly trueScale: number;
}

function flatten(matrix: readonly (readonly number[])[]): Float64Array {
  return Float64Array.from(matrix.flat());
}

/** Fit one simulated study and measure it. Cost: one fit (`fitModel` without refits). */
export function studyOutcome(trials: Trials, settings: OutcomeSettings): StudyOutcome {
  const report = fitModel(trials, { link: settings.link, terms: settings.terms, cluster: 'player', folds: 0, likelihoodRatioTests: false, baseline: false });
  const none = { latencyDetected: false, scaleDetected: false, interval: null, covered: null };
  if (report.status === 'separation' || report.status === 'rank_deficient') return { status: report.status, ...none };
  const matrix = report.robust_covariance ?? report.covariance;
  if (matrix === null) return { status: 'rank_deficient', ...none };
  const covariance = flatten(matrix);
  const estimates = report.coefficients.map((row) => row.estimate);
  const involving = (factor: 'latency' | 'scale') => report.coefficients.flatMap((row, index) => (row.term !== 'intercept' && termFactors(row.term)[factor] ? [index] : []));
  const detected = (indices: number[]) => {
    const test = waldTest(estimates, covariance, indices);
    return test !== null && test.pValue < settings.alpha;
  };
  const tests = { latencyDetected: detected(involving('latency')), scaleDetected: detected(involving('scale')) };
  if (report.status !== 'converged') return { status: 'iteration_limit', ...tests, interval: null, covered: null };
  if (!report.usable_for_compensation) return { status: 'scale_not_increasing', ...tests, interval: null, covered: null };
  const interval = neededScaleInterval(
    { columns: designColumns(report.terms, report.difficulty), coding: report.difficulty, estimates, covariance },
    settings.atDifficulty,
    settings.scaleForm,
    settings.atLatency,
    settings.referenceLatency,
  );
  if (interval === null) return { status: 'no_scale_at_latency', ...tests, interval: null, covered: null };
  return {
    status: 'usable',
    ...tests,
    interval: { scale: interval.scale, lower: interval.lower, upper: interval.upper },
    covered: interval.lower <= settings.trueScale && settings.trueScale <= interval.upper,
  };
}
