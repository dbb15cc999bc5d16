/**
 * A fit's options checked and its data prepared (`Prepared`): the family,
 * link, terms, difficulty coding, likelihood (Bernoulli for per-attempt
 * files, grouped for per-round files) and clustering; the factors the data
 * cannot identify; the binomial fit of prepared rows (`fitBinomial`, CR1 by
 * player when clustered); the least-squares response (per-row accuracy) and
 * weights. Every refit of a report (likelihood-ratio tests, folds) goes
 * through these.
 */
import { type Issue, LagparityInputError, error, show } from '../issues.js';
import type { BinomialFit, BinomialLikelihood } from './binomial-fit-types.js';
import type { CollapsedTrials, GroupedTrials } from './collapsed-trials.js';
import { type TermDesign, difficultyCodingOf } from './design.js';
import { fitBinomial } from './fit-binomial.js';
import type { FitFamily, FitModelOptions } from './fit-report-types.js';
import { LINK_NAMES, type LinkName } from './links.js';
import { DEFAULT_TERMS, type DifficultyCoding, type TermName, TERM_NAMES, checkTerms, termFactors } from './terms.js';

export interface Prepared {
  readonly source: GroupedTrials;
  readonly family: FitFamily;
  readonly link: LinkName;
  readonly terms: readonly TermName[];
  readonly coding: DifficultyCoding;
  readonly likelihood: BinomialLikelihood;
  readonly clustered: boolean;
  readonly data: CollapsedTrials;
  readonly maxIterations: number;
}

export function prepare(trials: GroupedTrials, options: FitModelOptions): Prepared {
  const issues: Issue[] = [];
  const family = options.family ?? 'binomial';
  if (family !== 'binomial' && family !== 'least_squares') {
    issues.push(error('invalid_option', 'family', `\`family\` requires binomial or least_squares, got ${show(family)}`));
  }
  const link = options.link ?? 'logit';
  if (!LINK_NAMES.includes(link)) issues.push(error('invalid_option', 'link', `\`link\` requires one of ${LINK_NAMES.join(', ')}, got ${show(link)}`));
  const terms = options.terms ?? DEFAULT_TERMS;
  const unknown = terms.filter((term) => !(TERM_NAMES as readonly string[]).includes(term));
  if (unknown.length > 0) issues.push(error('unknown_term', 'terms', `\`terms\` requires names from ${TERM_NAMES.join(', ')}, got ${show(unknown.join(','))}`));
  const checked = checkTerms(terms, 'terms');
  if (!checked.ok) issues.push(...checked.issues);
  const cluster = options.cluster ?? (trials.players === null ? 'none' : 'player');
  if (cluster !== 'player' && cluster !== 'none') issues.push(error('invalid_option', 'cluster', `\`cluster\` requires player or none, got ${show(cluster)}`));
  if (cluster === 'player' && trials.players === null) {
    issues.push(error('invalid_option', 'cluster', `\`cluster\` player requires a \`player\` column in ${show(trials.file)}, got none`));
  }
  const folds = options.folds ?? 5;
  if (!Number.isInteger(folds) || folds < 0 || folds === 1) issues.push(error('invalid_option', 'folds', `\`folds\` requires 0 (none) or a whole number >= 2, got ${show(folds)}`));
  const seed = options.seed ?? 1;
  if (!Number.isSafeInteger(seed)) issues.push(error('invalid_option', 'seed', `\`seed\` requires a safe integer, got ${show(seed)}`));
  const maxIterations = options.maxIterations ?? 50;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) {
    issues.push(error('invalid_option', 'maxIterations', `\`maxIterations\` requires an integer >= 1, got ${show(maxIterations)}`));
  }
  if (options.reference !== undefined) {
    if (trials.difficulty.kind !== 'levels') {
      issues.push(error('invalid_option', 'reference', `\`reference\` requires named difficulty levels, got numeric difficulty in ${show(trials.file)}`));
    } else if (!trials.difficulty.levels.includes(options.reference)) {
      issues.push(error('invalid_option', 'reference', `\`reference\` requires one of the levels ${trials.difficulty.levels.map((level) => show(level)).join(', ')}, got ${show(options.reference)}`));
    }
  }
  if (issues.length > 0) throw new LagparityInputError(issues);
  const clustered = cluster === 'player';
  // The groups keep players apart whenever there are players: clusters and player-wise folds both need it.
  const data = trials.groups;
  return {
    source: trials,
    family,
    link,
    terms,
    coding: difficultyCodingOf(trials, options.reference),
    likelihood: trials.shape === 'per_attempt' ? 'bernoulli' : 'grouped',
    clustered,
    data,
    maxIterations,
  };
}

/** Factors the terms need but the data cannot identify: fewer than two distinct values. */
export function structuralIssues(prepared: Prepared): { issues: Issue[]; aliased: TermName[] } {
  const { source, data, terms } = prepared;
  const issues: Issue[] = [];
  const aliased: TermName[] = [];
  const needs = (factor: 'latency' | 'scale' | 'difficulty') => terms.filter((term) => term !== 'intercept' && termFactors(term)[factor]);
  const check = (factor: 'latency' | 'scale' | 'difficulty', column: string, distinct: number, example: string, what: string) => {
    const using = needs(factor);
    if (using.length === 0 || distinct >= 2) return;
    aliased.push(...using.filter((term) => !aliased.includes(term)));
    issues.push(
      error(
        'rank_deficient',
        `${source.file}:${column}`,
        `the term list requires at least two ${what} in the data for ${using.map((term) => `\`${term}\``).join(', ')}, got one (${example}); drop ${using.length > 1 ? 'those terms' : 'that term'} or add data`,
      ),
    );
  };
  // The groups hold the distinct values of the rows, in order of first appearance.
  check('latency', 'latency_ms', countDistinct(data.latency, 2), `${show(data.latency[0])} ms`, 'distinct latencies');
  check('scale', 'scale', countDistinct(data.scale, 2), show(data.scale[0]), 'distinct scales');
  const difficulty = source.difficulty;
  const difficultyCount = difficulty.kind === 'numeric' ? countDistinct(data.difficulty, 2) : difficulty.levels.length;
  const difficultyExample = difficulty.kind === 'numeric' ? show(data.difficulty[0]) : show(difficulty.levels[0]);
  check('difficulty', 'difficulty', difficultyCount, difficultyExample, difficulty.kind === 'numeric' ? 'distinct difficulties' : 'difficulty levels');
  return { issues, aliased };
}

export function runBinomial(
  prepared: Prepared,
  data: CollapsedTrials,
  design: TermDesign,
  clustered = prepared.clustered,
  start: Float64Array | null = null,
  tolerance?: number,
): BinomialFit {
  const clusters = clustered && data.player !== null ? data.player : undefined;
  return fitBinomial(
    {
      design: design.matrix,
      successes: data.successes,
      trials: data.attempts,
      priorWeights: data.weight,
      ...(clusters === undefined ? {} : { clusters }),
    },
    { link: prepared.link, likelihood: prepared.likelihood, maxIterations: prepared.maxIterations, ...(start === null ? {} : { start }), ...(tolerance === undefined ? {} : { tolerance }) },
  );
}

/** Distinct codes among non-negative integer codes (player codes: a mark per code, not a set). */
export function countCodes(codes: Int32Array): number {
  let largest = -1;
  for (let i = 0; i < codes.length; i += 1) largest = Math.max(largest, codes[i] as number);
  const seen = new Uint8Array(largest + 1);
  let count = 0;
  for (let i = 0; i < codes.length; i += 1) {
    const code = codes[i] as number;
    if (seen[code] === 0) {
      seen[code] = 1;
      count += 1;
    }
  }
  return count;
}

/** Distinct values, counting no further than `stopAt`. */
export function countDistinct(values: ArrayLike<number>, stopAt = Infinity): number {
  const seen = new Set<number>();
  for (let i = 0; i < values.length; i += 1) {
    seen.add(values[i] as number);
    if (seen.size >= stopAt) return seen.size;
  }
  return seen.size;
}

export function accuracy(data: CollapsedTrials): Float64Array {
  return data.successes.map((value, i) => value / (data.attempts[i] as number));
}

/** Per-round files: one row per round (prior weights only); per-attempt files: attempt-weighted, i.e. OLS on the 0/1 attempts. */
export function leastSquaresWeights(prepared: Prepared, data: CollapsedTrials): Float64Array {
  return prepared.likelihood === 'bernoulli' ? data.weight.map((value, i) => value * (data.attempts[i] as number)) : data.weight;
}

/**
 * Per-attempt files: each collapsed row stands for its attempts, 0/1 outcomes whose weighted sum
 * of squares about the row's accuracy y = s / k is w (s - s^2 / k) (s hits of k, prior weight w),
 * so that least squares on the rows is least squares on the attempts (`fitLeastSquares`'s
 * `groups`); per-round files: none (the rounds are the observations).
 */
export function leastSquaresGroups(prepared: Prepared, data: CollapsedTrials): { readonly counts: Float64Array; readonly withinSumOfSquares: Float64Array } | undefined {
  if (prepared.likelihood !== 'bernoulli') return undefined;
  const within = new Float64Array(data.rows);
  for (let i = 0; i < data.rows; i += 1) {
    const hits = data.successes[i] as number;
    const attempts = data.attempts[i] as number;
    within[i] = attempts > 0 ? (data.weight[i] as number) * (hits - (hits * hits) / attempts) : 0;
  }
  return { counts: data.attempts, withinSumOfSquares: within };
}
