/**
 * The checks `fitBinomial` makes before it fits: finite design, counts and
 * weights of the design's length, successes at most trials, at least one row
 * with weight, valid options; every problem found becomes an `Issue` and
 * they are thrown together as one `LagparityInputError` (DEVELOPERS.md,
 * "Error grammar").
 */
import { LagparityInputError, error, show, type Issue } from '../issues.js';
import { checkClusters, checkFinite, checkLength } from '../numeric/array-checks.js';
import type { BinomialData, BinomialLikelihood } from './binomial-fit-types.js';
import { LINK_NAMES, type LinkName } from './links.js';

export function checkBinomialInput(
  data: BinomialData,
  settings: {
    linkName: LinkName;
    maxIterations: number;
    tolerance: number;
    likelihood: BinomialLikelihood;
    observationCount: number | undefined;
  },
): void {
  const rows = data.design.rows;
  const issues: Issue[] = [
    ...checkFinite('design', data.design.values),
    ...checkLength('successes', data.successes, rows),
    ...checkLength('trials', data.trials, rows),
  ];
  if (data.priorWeights !== undefined) {
    issues.push(...checkLength('priorWeights', data.priorWeights, rows), ...checkFinite('priorWeights', data.priorWeights, true));
  }
  if (data.clusters !== undefined) issues.push(...checkClusters(data.clusters, rows));
  if (data.offset !== undefined) issues.push(...checkLength('offset', data.offset, rows), ...checkFinite('offset', data.offset));
  if (issues.length === 0) {
    issues.push(...checkFinite('successes', data.successes, true), ...checkFinite('trials', data.trials, true));
  }
  if (issues.length === 0) {
    for (let i = 0; i < rows; i += 1) {
      if ((data.successes[i] as number) > (data.trials[i] as number)) {
        issues.push(
          error('successes_exceed_trials', `successes[${i}]`, `\`successes\` requires at most \`trials\` (${show(data.trials[i])}), got ${show(data.successes[i])}`),
        );
        break;
      }
    }
    let weighted = 0;
    for (let i = 0; i < rows; i += 1) if ((data.trials[i] as number) * (data.priorWeights?.[i] ?? 1) > 0) weighted += 1;
    if (weighted === 0) issues.push(error('no_data', 'trials', '`fitBinomial` requires at least one row with trials and weight > 0, got none'));
  }
  if (!LINK_NAMES.includes(settings.linkName)) {
    issues.push(error('invalid_option', 'link', `\`link\` requires one of ${LINK_NAMES.join(', ')}, got ${show(settings.linkName)}`));
  }
  if (!Number.isInteger(settings.maxIterations) || settings.maxIterations < 1) {
    issues.push(error('invalid_option', 'maxIterations', `\`maxIterations\` requires an integer >= 1, got ${show(settings.maxIterations)}`));
  }
  if (!(settings.tolerance > 0) || !Number.isFinite(settings.tolerance)) {
    issues.push(error('invalid_option', 'tolerance', `\`tolerance\` requires a finite number > 0, got ${show(settings.tolerance)}`));
  }
  if (settings.likelihood !== 'grouped' && settings.likelihood !== 'bernoulli') {
    issues.push(error('invalid_option', 'likelihood', `\`likelihood\` requires 'grouped' or 'bernoulli', got ${show(settings.likelihood)}`));
  }
  const count = settings.observationCount;
  if (count !== undefined && (!Number.isFinite(count) || count <= 0)) {
    issues.push(error('invalid_option', 'observationCount', `\`observationCount\` requires a number > 0, got ${show(count)}`));
  }
  if (issues.length > 0) throw new LagparityInputError(issues);
}
