/**
 * The refits of a fit's report as independent jobs: the least-squares
 * baseline, one reduced model per likelihood-ratio test, one fit per
 * cross-validation fold. Each job needs only the {@link RefitContext}
 * (plain data: it crosses to a worker thread by structured clone) and gives
 * the same result wherever it runs, so the report does not depend on how
 * many threads ran them (`fit-model.ts` runs them in turn,
 * `fit-model-threads.ts` on worker threads as well).
 */
import { type FoldAssignment, type FoldFit, fitFold } from './cross-validation.js';
import { type TermDesign, buildDesign } from './design.js';
import type { LeastSquaresBaseline } from './fit-report-types.js';
import { leastSquaresBaseline } from './least-squares-baseline.js';
import { type ReducedFit, type TestedFactor, fitReduced } from './likelihood-ratio-tests.js';
import type { Prepared } from './prepared-fit.js';
import { type SharedEstimates, awaitFoldStart } from './shared-estimates.js';

/** What every refit of one report shares. */
export interface RefitContext {
  readonly prepared: Prepared;
  /** The folds, when the report cross-validates. */
  readonly assignment: FoldAssignment | null;
  /** Each fold's start, published by the calling thread once it has it (`shared-estimates.ts`): a fold's job waits for it. */
  readonly estimates: SharedEstimates;
}

export type RefitJob = { readonly kind: 'baseline' } | { readonly kind: 'reduced'; readonly factor: TestedFactor } | { readonly kind: 'fold'; readonly fold: number };

export type RefitResult =
  | { readonly kind: 'baseline'; readonly baseline: LeastSquaresBaseline | null }
  | { readonly kind: 'reduced'; readonly reduced: ReducedFit }
  | { readonly kind: 'fold'; readonly fold: number; readonly fit: FoldFit };

/**
 * Run one job. `fullDesign` gives the full design (`fullDesign(context)`, built by a thread at most
 * once for all its jobs), which only a per-round file's baseline reads: the reduced models and the
 * folds fit their own merged rows, and a fold predicts its held-out rows from their design rows as
 * it goes. The baseline and the reduced models need nothing of the full fit; a fold waits for its
 * start. When the full fit ended the report (no start will come), a fold returns at once with a
 * result nobody reads.
 */
export function runRefit(context: RefitContext, job: RefitJob, fullDesign: () => TermDesign): RefitResult {
  const { prepared } = context;
  if (job.kind === 'baseline') return { kind: 'baseline', baseline: leastSquaresBaseline(prepared, fullDesign) };
  if (job.kind === 'reduced') return { kind: 'reduced', reduced: fitReduced(prepared, job.factor) };
  const start = awaitFoldStart(context.estimates, job.fold);
  if (start === null) return { kind: 'fold', fold: job.fold, fit: { status: 'not_fitted', players: null, heldAttempts: 0, scores: null } };
  return { kind: 'fold', fold: job.fold, fit: fitFold(prepared, context.assignment as FoldAssignment, job.fold, start, { merged: true }) };
}

/** The full fit's design, built from the context's rows (the same values the fit had). */
export function fullDesign(context: RefitContext): TermDesign {
  return buildDesign(context.prepared.data, context.prepared.terms, context.prepared.coding);
}

/** What a job is, for a progress line. */
export function refitLabel(job: RefitJob, folds: number): string {
  if (job.kind === 'baseline') return 'least-squares baseline';
  if (job.kind === 'reduced') return `likelihood ratio: ${job.factor}`;
  return `fold ${job.fold + 1} of ${folds}`;
}
