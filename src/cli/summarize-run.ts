/** `lagparity summarize`, run: per-condition counts, mean accuracy and box statistics of a trials file (options and help: `summarize-command.ts`). */
import type { Issue } from '../issues.js';
import { readTrialsFile } from '../io/read-trials.js';
import { parseBinSpec } from '../summary/bins.js';
import { type TrialsSummary, parseFactorList, summarizeTrials } from '../summary/summarize-trials.js';
import { compactTable } from './table.js';
import { EXIT_BAD_INPUT, EXIT_OK, fixed, reportIssues, writeOut } from './output.js';

export interface SummarizeCommandOptions {
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
    `Box: Tukey's hinges, whiskers to the most extreme rounds within 1.5 hinge spreads of the hinges (Tukey 1977); outliers are the rounds beyond (counted here, listed by --json).`,
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
