/** `lagparity fit`, run: fit the hit-probability model to a trials file and write the model file (options and help: `fit-command.ts`). */
import { basename } from 'node:path';
import { type Issue, LagparityInputError, error, show } from '../issues.js';
import { writeFileAtomic } from '../io/write-file.js';
import { fitModelOnThreads } from '../model/fit-model-threads.js';
import type { FitFamily, FitModelOptions, FitReport } from '../model/fit-report-types.js';
import { LINK_NAMES, type LinkName } from '../model/links.js';
import { type TermName, parseTermList } from '../model/terms.js';
import type { Ranked } from './render-fit.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';
import { progressLine } from './progress.js';
import { readGrouped } from './read-grouped.js';
import { latencyStepOption } from './latency-step-option.js';
import { FIT_THREADS_CAP, threadCount } from './thread-count.js';

export const FIT_RESULT_FORMAT = 'lagparity/fit-result@1';

export interface FitOptions {
  out?: string;
  link: string;
  terms?: string;
  cluster?: string;
  folds: string;
  seed: string;
  compare?: string;
  family: string;
  reference?: string;
  attribute?: string;
  json?: boolean;
  force?: boolean;
  lrTests: string;
  baseline: boolean;
  latencyStep?: string;
  counts: string;
  threads?: string;
}

/** One candidate of `--compare`: `MODEL[:TERMS]`, MODEL a link name or `least_squares`. */
export interface Candidate {
  readonly spec: string;
  readonly family: FitFamily;
  readonly link: LinkName;
  readonly terms: readonly TermName[] | undefined;
}

/** Parse `--compare`: candidates separated by `;`, each `MODEL[:TERMS]`. */
export function parseCompare(text: string): { candidates: Candidate[]; issues: Issue[] } {
  const candidates: Candidate[] = [];
  const issues: Issue[] = [];
  for (const raw of text.split(';')) {
    const spec = raw.trim();
    if (spec === '') continue;
    const colon = spec.indexOf(':');
    const model = (colon < 0 ? spec : spec.slice(0, colon)).trim();
    const termText = colon < 0 ? undefined : spec.slice(colon + 1);
    const family: FitFamily = model === 'least_squares' ? 'least_squares' : 'binomial';
    if (model !== 'least_squares' && !(LINK_NAMES as readonly string[]).includes(model)) {
      issues.push(error('invalid_option', '--compare', `\`--compare\` requires each candidate to start with ${[...LINK_NAMES, 'least_squares'].join(', ')}, got ${show(model)} in ${show(spec)}`));
      continue;
    }
    let terms: TermName[] | undefined;
    if (termText !== undefined) {
      const parsed = parseTermList(termText, '--compare');
      if (!parsed.ok) {
        issues.push(...parsed.issues);
        continue;
      }
      terms = parsed.value;
    }
    candidates.push({ spec, family, link: family === 'binomial' ? (model as LinkName) : 'logit', terms });
  }
  if (candidates.length === 0 && issues.length === 0) {
    issues.push(error('invalid_option', '--compare', '`--compare` requires at least one candidate, got none'));
  }
  return { candidates, issues };
}

function integerOption(name: string, text: string, minimum: number, issues: Issue[]): number {
  const value = Number(text);
  if (!Number.isSafeInteger(value) || value < minimum) {
    issues.push(error('invalid_option', name, `\`${name}\` requires a whole number >= ${minimum}, got ${show(text)}`));
  }
  return value;
}

export async function runFit(path: string, options: FitOptions): Promise<number> {
  const issues: Issue[] = [];
  if (!(LINK_NAMES as readonly string[]).includes(options.link)) {
    issues.push(error('invalid_option', '--link', `\`--link\` requires one of ${LINK_NAMES.join(', ')}, got ${show(options.link)}`));
  }
  if (options.family !== 'binomial' && options.family !== 'least_squares') {
    issues.push(error('invalid_option', '--family', `\`--family\` requires binomial or least_squares, got ${show(options.family)}`));
  }
  if (options.cluster !== undefined && options.cluster !== 'player' && options.cluster !== 'none') {
    issues.push(error('invalid_option', '--cluster', `\`--cluster\` requires player or none, got ${show(options.cluster)}`));
  }
  const folds = integerOption('--folds', options.folds, 0, issues);
  if (options.lrTests !== 'all' && options.lrTests !== 'none') {
    issues.push(error('invalid_option', '--lr-tests', `\`--lr-tests\` requires all or none, got ${show(options.lrTests)}`));
  }
  const seed = integerOption('--seed', options.seed, 0, issues);
  let terms: TermName[] | undefined;
  if (options.terms !== undefined) {
    const parsed = parseTermList(options.terms);
    if (parsed.ok) terms = parsed.value;
    else issues.push(...parsed.issues);
  }
  const compare = options.compare === undefined ? null : parseCompare(options.compare);
  if (compare !== null) issues.push(...compare.issues);
  if (options.attribute !== undefined && options.attribute !== 'hit_area' && options.attribute !== 'timing_window') {
    issues.push(error('invalid_option', '--attribute', `\`--attribute\` requires hit_area or timing_window, got ${show(options.attribute)}`));
  }
  if (options.out !== undefined && options.family === 'least_squares') {
    issues.push(error('invalid_option', '--out', '`--out` requires `--family binomial` (a model file holds a binomial model), got least_squares'));
  }
  const latencyStepMs = options.latencyStep === undefined ? undefined : latencyStepOption(options.latencyStep, issues);
  if (options.counts !== 'rounds' && options.counts !== 'attempts') {
    issues.push(error('invalid_option', '--counts', `\`--counts\` requires rounds or attempts, got ${show(options.counts)}`));
  }
  const threads = threadCount(options.threads, issues, FIT_THREADS_CAP);
  if (issues.length > 0) {
    reportIssues(issues);
    return EXIT_BAD_INPUT;
  }

  const progress = progressLine('lagparity fit');
  const read = await readGrouped(path, progress, { ...(latencyStepMs === undefined ? {} : { latencyStepMs }), counts: options.counts as 'rounds' | 'attempts', threads });
  if (!read.ok) {
    progress.done();
    reportIssues(read.issues);
    return EXIT_BAD_INPUT;
  }
  const { grouped, sha256 } = read.value;
  const common: FitModelOptions = {
    link: options.link as LinkName,
    family: options.family as FitFamily,
    ...(terms === undefined ? {} : { terms }),
    ...(options.cluster === undefined ? {} : { cluster: options.cluster as 'player' | 'none' }),
    ...(options.reference === undefined ? {} : { reference: options.reference }),
    folds,
    seed,
    baseline: options.baseline,
  };
  let report: FitReport;
  const ranked: Ranked[] = [];
  try {
    report = await fitModelOnThreads(grouped, { ...common, likelihoodRatioTests: options.lrTests === 'all', onProgress: (stage) => progress.update(() => stage) }, threads);
    for (const candidate of compare?.candidates ?? []) {
      const fitted = await fitModelOnThreads(grouped, {
        ...common,
        family: candidate.family,
        link: candidate.link,
        ...(candidate.terms === undefined ? {} : { terms: candidate.terms }),
        likelihoodRatioTests: false,
        folds: folds >= 2 ? folds : 5,
        onProgress: (stage) => progress.update(() => `${candidate.spec}: ${stage}`),
      }, threads);
      ranked.push({
        spec: candidate.spec,
        status: fitted.status,
        log_loss: fitted.cross_validation?.log_loss ?? null,
        brier: fitted.cross_validation?.brier ?? null,
        calibration_error: fitted.cross_validation?.calibration_error ?? null,
        aic: fitted.statistics?.aic ?? null,
      });
    }
  } catch (cause) {
    progress.done();
    if (cause instanceof LagparityInputError) {
      reportIssues(cause.issues.map((issue) => ({ ...issue, location: issue.location.startsWith(grouped.file) ? issue.location : `--${issue.location}` })));
      return EXIT_BAD_INPUT;
    }
    throw cause;
  }
  progress.done();
  ranked.sort((a, b) => (a.log_loss ?? Infinity) - (b.log_loss ?? Infinity));
  reportIssues([...read.warnings, ...report.warnings]);

  const estimated = report.coefficients.length > 0;
  let written: string | null = null;
  let exit = estimated && (report.status === 'converged' || report.status === 'fitted') ? EXIT_OK : EXIT_BAD_INPUT;
  if (options.out !== undefined && exit === EXIT_OK) {
    // Loaded only here: the model file is checked against its zod schema, which a fit without --out does not need.
    const { toModelFile } = await import('../model/to-model-file.js');
    const attribute = options.attribute as 'hit_area' | 'timing_window' | undefined;
    const model = toModelFile(report, { file: basename(path), rows: grouped.groups.sourceRows, sha256, created_by: 'lagparity fit 0.1.0', ...(attribute === undefined ? {} : { attribute }) });
    if (!model.ok) {
      reportIssues(model.issues);
      exit = EXIT_BAD_INPUT;
    } else {
      const result = await writeFileAtomic(options.out, `${JSON.stringify(model.value, null, 2)}\n`, { force: options.force ?? false });
      if (!result.ok) {
        reportIssues(result.issues);
        exit = EXIT_BAD_INPUT;
      } else written = options.out;
    }
  } else if (options.out !== undefined) {
    reportIssues([error('not_written', options.out, `writing a model requires a converged fit, got status ${report.status}; nothing was written`)]);
  }
  if (options.json) {
    writeOut(JSON.stringify({ format: FIT_RESULT_FORMAT, report, comparison: compare === null ? null : ranked, written, provenance: { file: basename(path), rows: grouped.groups.sourceRows, sha256 } }, null, 2));
  } else {
    // The tables (cli-table3) load only for output to people.
    const { renderComparison, renderFit } = await import('./render-fit.js');
    writeOut(renderFit(report) + (compare === null ? '' : `\n\n${renderComparison(ranked)}`) + (written === null ? '' : `\n\nwrote ${written}`));
  }
  return exit;
}
