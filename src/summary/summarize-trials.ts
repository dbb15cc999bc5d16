/**
 * `summarizeTrials(trials, { by })`: per-condition counts, mean accuracy and
 * box statistics of per-round accuracy, for looking at a playtest before (and
 * after) fitting a model to it.
 *
 * Conditions are the combinations of the groups of the covariates in `by`
 * (any of latency, scale, difficulty, in the order given; none gives one
 * condition, the whole file). Each covariate is grouped as `bins.ts` says:
 * kept as levels when it has few distinct values, cut into bins otherwise,
 * and the bins are stated in the result.
 *
 * A round is one row of a per-round file. In a per-attempt file a round is all
 * attempts of one player in one cell of the full grid latency group x scale
 * group x difficulty group, whatever `by` is, so the rounds do not change
 * with the view; without a `player` column all attempts in a cell form one
 * round (and a warning says so). Per-round accuracy is hits / attempts.
 *
 * Box statistics are R's `boxplot.stats` (see `stats/box-stats.ts`): Tukey's
 * hinges (Tukey, J. W. (1977), Exploratory Data Analysis), whiskers to the
 * most extreme rounds within 1.5 hinge spreads of the hinges, the rounds
 * beyond as outliers. The type 7 quartiles (Hyndman, R. J. and Fan, Y. (1996),
 * The American Statistician 50(4), 361-365; R's default) are given beside
 * them. Mean accuracy is attempt-weighted: total hits / total attempts.
 *
 * The `weight` column (a prior weight for fitting) is not used: summaries
 * describe the rows as recorded.
 */
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import type { Trials } from '../formats/trials-types.js';
import { boxStats } from '../stats/box-stats.js';
import { quantileSorted, sortedCopy } from '../stats/quantile.js';
import { type BinSpec, type Grouping, groupLevels, groupNumeric } from './bins.js';

export const SUMMARY_FORMAT = 'lagparity/summary@1';

export const FACTORS = ['latency', 'scale', 'difficulty'] as const;
export type Factor = (typeof FACTORS)[number];

export interface SummarizeOptions {
  /** The covariates that define a condition, in display order. Default: latency, scale, difficulty. */
  readonly by?: readonly Factor[];
  /** How to group latency; default `auto` (levels if at most 12 distinct values, else 6 quantile bins). */
  readonly latencyBins?: BinSpec;
  /** How to group a numeric scale; default `auto`. */
  readonly scaleBins?: BinSpec;
  /** How to group a numeric difficulty; default `auto`. Named levels are always kept. */
  readonly difficultyBins?: BinSpec;
  /** Whisker length in hinge spreads; default 1.5 (Tukey 1977). */
  readonly coefficient?: number;
}

/** Box statistics of the per-round accuracies of one condition. */
export interface AccuracyBox {
  readonly lower_whisker: number;
  readonly lower_hinge: number;
  readonly median: number;
  readonly upper_hinge: number;
  readonly upper_whisker: number;
  /** Round accuracies beyond the whiskers, in file order. */
  readonly outliers: readonly number[];
  /** Type 7 quartiles (R's `quantile()` default), beside Tukey's hinges. */
  readonly quartiles_type7: readonly [number, number];
  readonly iqr_type7: number;
  /** median -/+ 1.58 hinge spread / sqrt(n) (McGill, Tukey and Larsen 1978). */
  readonly notch: readonly [number, number];
  /** Unweighted mean of the round accuracies (mean_accuracy is the attempt-weighted one). */
  readonly mean_of_rounds: number;
}

export interface ConditionSummary {
  /** The group label of each `by` covariate, e.g. `{ latency: '[8.3, 47.25) ms', scale: '1.5' }`. */
  readonly condition: Readonly<Partial<Record<Factor, string>>>;
  /** The group index of each `by` covariate, into `groupings[factor].groups`. */
  readonly group: Readonly<Partial<Record<Factor, number>>>;
  readonly rounds: number;
  readonly attempts: number;
  readonly hits: number;
  /** Total hits / total attempts. */
  readonly mean_accuracy: number;
  /** Attempt-weighted mean latency of the condition's rows, ms. */
  readonly mean_latency_ms: number;
  /** Attempt-weighted mean scale. */
  readonly mean_scale: number;
  /** Attempt-weighted mean difficulty when difficulty is numeric; else null. */
  readonly mean_difficulty: number | null;
  readonly accuracy: AccuracyBox;
}

export interface TrialsSummary {
  readonly format: typeof SUMMARY_FORMAT;
  readonly file: string;
  readonly shape: Trials['shape'];
  readonly by: readonly Factor[];
  readonly rows: number;
  readonly rounds: number;
  readonly attempts: number;
  readonly hits: number;
  /** How rounds were formed, in words. */
  readonly round_definition: string;
  /** How the box statistics were computed, in words. */
  readonly box_definition: string;
  /** The groups of every `by` covariate, with the bins stated. */
  readonly groupings: Readonly<Partial<Record<Factor, Omit<Grouping, 'codes'>>>>;
  /** Conditions with at least one round, ordered by the `by` covariates' groups. */
  readonly conditions: readonly ConditionSummary[];
}

/** Parse a `--by` list such as `latency,scale` (`none` or an empty list: the whole file as one condition). */
export function parseFactorList(text: string, where = '--by'): Result<Factor[]> {
  const names = text.split(',').map((part) => part.trim()).filter((part) => part !== '' && part !== 'none');
  const unknown = names.filter((name) => !(FACTORS as readonly string[]).includes(name));
  if (unknown.length > 0) {
    return fail([error('unknown_factor', where, `\`${where}\` requires a comma-separated list of ${FACTORS.join(', ')} (or none), got ${show(unknown.join(','))}`)]);
  }
  return ok([...new Set(names as Factor[])]);
}

function checkOptions(options: SummarizeOptions): Issue[] {
  const issues: Issue[] = [];
  const by = options.by ?? FACTORS;
  for (const factor of by) {
    if (!(FACTORS as readonly string[]).includes(factor)) issues.push(error('unknown_factor', 'by', `\`by\` requires names from ${FACTORS.join(', ')}, got ${show(factor)}`));
  }
  if (new Set(by).size !== by.length) issues.push(error('duplicate_factor', 'by', `\`by\` requires each covariate once, got ${show(by.join(','))}`));
  const coefficient = options.coefficient ?? 1.5;
  if (!(coefficient >= 0 && Number.isFinite(coefficient))) issues.push(error('out_of_range', 'coefficient', `\`coefficient\` requires a finite number >= 0, got ${show(coefficient)}`));
  return issues;
}

/** The groupings of the three covariates, row by row. */
export function groupTrials(trials: Trials, options: SummarizeOptions = {}): Result<Record<Factor, Grouping>> {
  const latency = groupNumeric(trials.latency, options.latencyBins ?? { kind: 'auto' }, 'latency', 'ms', `${trials.file}:latency_ms`);
  const scale = groupNumeric(trials.scale, options.scaleBins ?? { kind: 'auto' }, 'scale', '', `${trials.file}:scale`);
  const difficulty =
    trials.difficulty.kind === 'levels'
      ? ok(groupLevels(trials.difficulty.levels, trials.difficulty.codes, 'difficulty'))
      : groupNumeric(trials.difficulty.values, options.difficultyBins ?? { kind: 'auto' }, 'difficulty', '', `${trials.file}:difficulty`);
  const issues = [latency, scale, difficulty].flatMap((result) => (result.ok ? [] : result.issues));
  if (!latency.ok || !scale.ok || !difficulty.ok) return fail(issues);
  return ok({ latency: latency.value, scale: scale.value, difficulty: difficulty.value });
}

interface Rounds {
  readonly count: number;
  readonly hits: Float64Array;
  readonly attempts: Float64Array;
  /** A row of the round, to read its groups from. */
  readonly firstRow: Int32Array;
}

function formRounds(trials: Trials, groupings: Record<Factor, Grouping>): Rounds {
  if (trials.shape === 'per_round') {
    const firstRow = new Int32Array(trials.rows);
    for (let row = 0; row < trials.rows; row += 1) firstRow[row] = row;
    return { count: trials.rows, hits: trials.successes, attempts: trials.attempts, firstRow };
  }
  const scaleGroups = groupings.scale.groups.length;
  const difficultyGroups = groupings.difficulty.groups.length;
  const cells = groupings.latency.groups.length * scaleGroups * difficultyGroups;
  const index = new Map<number, number>();
  const hits: number[] = [];
  const attempts: number[] = [];
  const firstRow: number[] = [];
  for (let row = 0; row < trials.rows; row += 1) {
    const cell =
      ((groupings.latency.codes[row] as number) * scaleGroups + (groupings.scale.codes[row] as number)) * difficultyGroups +
      (groupings.difficulty.codes[row] as number);
    const key = trials.player === null ? cell : (trials.player.codes[row] as number) * cells + cell;
    let round = index.get(key);
    if (round === undefined) {
      round = hits.length;
      index.set(key, round);
      hits.push(0);
      attempts.push(0);
      firstRow.push(row);
    }
    hits[round] = (hits[round] as number) + (trials.successes[row] as number);
    attempts[round] = (attempts[round] as number) + (trials.attempts[row] as number);
  }
  return { count: hits.length, hits: Float64Array.from(hits), attempts: Float64Array.from(attempts), firstRow: Int32Array.from(firstRow) };
}

function accuracyBox(accuracies: Float64Array, coefficient: number): AccuracyBox {
  const box = boxStats(accuracies, { coefficient });
  const sorted = sortedCopy(accuracies);
  return {
    lower_whisker: box.lowerWhisker,
    lower_hinge: box.lowerHinge,
    median: box.median,
    upper_hinge: box.upperHinge,
    upper_whisker: box.upperWhisker,
    outliers: box.outliers,
    quartiles_type7: [quantileSorted(sorted, 0.25, 7), quantileSorted(sorted, 0.75, 7)],
    iqr_type7: box.interquartileRange,
    notch: box.notch,
    mean_of_rounds: box.mean,
  };
}

/**
 * Summarise a trials file by condition. Use it to see the spread of accuracy
 * per condition before trusting a fitted curve, or to feed a report.
 *
 * Cost: O(n) to group plus O(r log r) to sort the r round accuracies.
 *
 * @param trials columns from `parseTrialsCsv` or `readTrialsFile`.
 * @param options.by covariates defining a condition; default all three.
 * @returns the summary, with warnings (`weights_ignored`, `no_player_column`),
 *   or issues for bad options (`unknown_factor`, `duplicate_factor`,
 *   `too_many_groups`).
 * @example
 *   const summary = summarizeTrials(trials, { by: ['latency'] });
 *   summary.ok && summary.value.conditions[0]?.accuracy.median;
 */
export function summarizeTrials(trials: Trials, options: SummarizeOptions = {}): Result<TrialsSummary> {
  const optionIssues = checkOptions(options);
  if (optionIssues.length > 0) return fail(optionIssues);
  const by = [...(options.by ?? FACTORS)];
  const coefficient = options.coefficient ?? 1.5;
  const grouped = groupTrials(trials, options);
  if (!grouped.ok) return grouped;
  const groupings = grouped.value;
  const warnings: Issue[] = [];
  if (trials.weight !== null) {
    warnings.push(warning('weights_ignored', `${trials.file}:weight`, 'the summary counts rounds and attempts as recorded; the `weight` column (a prior weight for fitting) is not used'));
  }
  if (trials.shape === 'per_attempt' && trials.player === null) {
    warnings.push(warning('no_player_column', trials.file, 'a per-attempt file without a `player` column: all attempts in one condition cell form one round, so the box plots show cells, not rounds'));
  }

  // Condition key: mixed radix over the `by` groupings, so sorting keys orders conditions.
  const radices = by.map((factor) => groupings[factor].groups.length);
  const keyOfRow = (row: number): number => by.reduce((key, factor, index) => key * (radices[index] as number) + (groupings[factor].codes[row] as number), 0);
  const rounds = formRounds(trials, groupings);

  interface Accumulator {
    rows: number;
    rounds: number;
    hits: number;
    attempts: number;
    latencySum: number;
    scaleSum: number;
    difficultySum: number;
    firstRow: number;
  }
  const accumulators = new Map<number, Accumulator>();
  const numericDifficulty = trials.difficulty.kind === 'numeric' ? trials.difficulty.values : null;
  for (let row = 0; row < trials.rows; row += 1) {
    const key = keyOfRow(row);
    let accumulator = accumulators.get(key);
    if (accumulator === undefined) {
      accumulator = { rows: 0, rounds: 0, hits: 0, attempts: 0, latencySum: 0, scaleSum: 0, difficultySum: 0, firstRow: row };
      accumulators.set(key, accumulator);
    }
    const attempts = trials.attempts[row] as number;
    accumulator.rows += 1;
    accumulator.hits += trials.successes[row] as number;
    accumulator.attempts += attempts;
    accumulator.latencySum += attempts * (trials.latency[row] as number);
    accumulator.scaleSum += attempts * (trials.scale[row] as number);
    if (numericDifficulty !== null) accumulator.difficultySum += attempts * (numericDifficulty[row] as number);
  }
  const keys = [...accumulators.keys()].sort((left, right) => left - right);
  const slot = new Map(keys.map((key, index) => [key, index]));

  // Counting sort of the round accuracies by condition, keeping file order within one.
  const roundSlot = new Int32Array(rounds.count);
  const counts = new Int32Array(keys.length);
  for (let round = 0; round < rounds.count; round += 1) {
    const position = slot.get(keyOfRow(rounds.firstRow[round] as number)) as number;
    roundSlot[round] = position;
    counts[position] = (counts[position] as number) + 1;
  }
  const offsets = new Int32Array(keys.length + 1);
  for (let index = 0; index < keys.length; index += 1) offsets[index + 1] = (offsets[index] as number) + (counts[index] as number);
  const accuracies = new Float64Array(rounds.count);
  const fill = offsets.slice(0, keys.length);
  for (let round = 0; round < rounds.count; round += 1) {
    const position = roundSlot[round] as number;
    accuracies[fill[position] as number] = (rounds.hits[round] as number) / (rounds.attempts[round] as number);
    fill[position] = (fill[position] as number) + 1;
  }

  const conditions: ConditionSummary[] = keys.map((key, index) => {
    const accumulator = accumulators.get(key) as Accumulator;
    const condition: Partial<Record<Factor, string>> = {};
    const group: Partial<Record<Factor, number>> = {};
    for (const factor of by) {
      const code = groupings[factor].codes[accumulator.firstRow] as number;
      group[factor] = code;
      condition[factor] = groupings[factor].groups[code]?.label ?? '';
    }
    const values = accuracies.subarray(offsets[index] as number, offsets[index + 1] as number);
    return {
      condition,
      group,
      rounds: values.length,
      attempts: accumulator.attempts,
      hits: accumulator.hits,
      mean_accuracy: accumulator.hits / accumulator.attempts,
      mean_latency_ms: accumulator.latencySum / accumulator.attempts,
      mean_scale: accumulator.scaleSum / accumulator.attempts,
      mean_difficulty: numericDifficulty === null ? null : accumulator.difficultySum / accumulator.attempts,
      accuracy: accuracyBox(values, coefficient),
    };
  });

  let hits = 0;
  let attempts = 0;
  for (let row = 0; row < trials.rows; row += 1) {
    hits += trials.successes[row] as number;
    attempts += trials.attempts[row] as number;
  }
  const groupingsOut: Partial<Record<Factor, Omit<Grouping, 'codes'>>> = {};
  for (const factor of by) {
    const { method, description, groups } = groupings[factor];
    groupingsOut[factor] = { method, description, groups };
  }
  return ok(
    {
      format: SUMMARY_FORMAT,
      file: trials.file,
      shape: trials.shape,
      by,
      rows: trials.rows,
      rounds: rounds.count,
      attempts,
      hits,
      round_definition:
        trials.shape === 'per_round'
          ? 'one row of the file is one round; its accuracy is hits / attempts'
          : trials.player === null
            ? 'per-attempt file without players: all attempts in one cell of latency group x scale group x difficulty group form one round'
            : 'per-attempt file: all attempts of one player in one cell of latency group x scale group x difficulty group form one round; its accuracy is hits / attempts',
      box_definition: `Tukey hinges (R fivenum / boxplot.stats), whiskers to the most extreme rounds within ${coefficient} hinge spreads of the hinges (Tukey 1977), outliers beyond; quartiles_type7 are Hyndman & Fan (1996) type 7`,
      groupings: groupingsOut,
      conditions,
    },
    warnings,
  );
}
