/** `lagparity summarize`: per-condition counts, mean accuracy and box statistics of a trials file. */
import type { Command } from 'commander';
import type { Issue } from '../issues.js';
import { readTrialsFile } from '../io/read-trials.js';
import { parseBinSpec } from '../summary/bins.js';
import { type TrialsSummary, parseFactorList, summarizeTrials } from '../summary/summarize-trials.js';
import { compactTable } from './table.js';
import { EXIT_BAD_INPUT, EXIT_OK, fixed, reportIssues, writeOut } from './output.js';

interface SummarizeCommandOptions {
  by: string;
  latencyBins: string;
  json?: boolean;
}


/** The summary as a table for people, with the bins and the box definition stated. */
export function renderSummary(summary: TrialsSummary): string {
  const factorHeads = summary.by.map((factor) => (factor === 'latency' ? 'latency' : factor));
  const table = compactTable(
    [...factorHeads, 'rounds', 'attempts', 'mean acc', 'low whisker', 'lower hinge', 'median', 'upper hinge', 'high whisker', 'outliers'],
    [...summary.by.map(() => 'left' as const), ...Array.from({ length: 9 }, () => 'right' as const)],
  );
  for (const condition of summary.conditions) {
    const box = condition.accuracy;
    table.push([
      ...summary.by.map((factor) => condition.condition[factor] ?? ''),
      String(condition.rounds),
      String(condition.attempts),
      fixed(condition.mean_accuracy),
      fixed(box.lower_whisker),
      fixed(box.lower_hinge),
      fixed(box.median),
      fixed(box.upper_hinge),
      fixed(box.upper_whisker),
      String(box.outliers.length),
    ]);
  }
  const shape = summary.shape === 'per_round' ? 'one row per round' : 'one row per attempt';
  const lines = [
    `${summary.file}: ${summary.rows} rows (${shape}), ${summary.rounds} rounds, ${summary.attempts} attempts, mean accuracy ${fixed(summary.hits / summary.attempts)}`,
    ...summary.by.map((factor) => summary.groupings[factor]?.description ?? ''),
    table.toString(),
    'Accuracy per round = hits / attempts; mean acc = total hits / total attempts.',
    `Box: Tukey's hinges (as R's boxplot.stats), whiskers to the most extreme rounds within 1.5 hinge spreads of the hinges (Tukey 1977); outliers are the rounds beyond (counted here, listed by --json).`,
    `Rounds: ${summary.round_definition}.`,
  ];
  return lines.join('\n');
}

export async function runSummarize(path: string, options: SummarizeCommandOptions): Promise<number> {
  const by = parseFactorList(options.by, '--by');
  const bins = parseBinSpec(options.latencyBins, '--latency-bins');
  const optionIssues: Issue[] = [...(by.ok ? [] : by.issues), ...(bins.ok ? [] : bins.issues)];
  if (!by.ok || !bins.ok) {
    reportIssues(optionIssues);
    return EXIT_BAD_INPUT;
  }
  const trials = await readTrialsFile(path);
  if (!trials.ok) {
    reportIssues(trials.issues);
    return EXIT_BAD_INPUT;
  }
  reportIssues(trials.warnings);
  const summary = summarizeTrials(trials.value, { by: by.value, latencyBins: bins.value });
  if (!summary.ok) {
    reportIssues(summary.issues);
    return EXIT_BAD_INPUT;
  }
  reportIssues(summary.warnings);
  writeOut(options.json ? JSON.stringify(summary.value, null, 2) : renderSummary(summary.value));
  return EXIT_OK;
}

export function registerSummarize(program: Command): void {
  program
    .command('summarize')
    .description('Summarise a trials file per condition: rounds, attempts, mean accuracy and box statistics of per-round accuracy.')
    .argument('<trials>', 'trials file (CSV: one row per round or per attempt)')
    .option('--by <list>', 'covariates that define a condition, comma-separated: latency, scale, difficulty (or none)', 'latency,scale,difficulty')
    .option(
      '--latency-bins <spec>',
      'latency groups: auto (one per value if at most 12 distinct, else quantile:6), levels, quantile:K, width:W (ms) or edges:a,b,...',
      'auto',
    )
    .option('--json', 'write one JSON document (lagparity/summary@1) to stdout instead of a table')
    .addHelpText(
      'after',
      `
Bins are closed on the left, open on the right, [lower, upper); the last quantile or edges bin
also holds its upper end. Quantile bins cut at the Hyndman & Fan (1996) type 7 quantiles.
Box statistics are R's boxplot.stats: Tukey's hinges, whiskers to the most extreme rounds within
1.5 hinge spreads (Tukey 1977), outliers beyond; --json also gives the type 7 quartiles.
In a per-attempt file, a round is all attempts of one player in one latency x scale x difficulty cell.

Example:
  lagparity summarize matches/playtest-trials.csv --by latency,difficulty

Exit codes: 0 success; 2 bad input.`,
    )
    .action(async (path: string, options: SummarizeCommandOptions) => {
      process.exitCode = await runSummarize(path, options);
    });
}
