/** `lagparity summarize`: the command's options and help; the run code (`summarize-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { SummarizeCommandOptions } from './summarize-run.js';

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
Box statistics are Tukey's box plot (Tukey 1977): hinges, whiskers to the most extreme rounds
within 1.5 hinge spreads of the hinges, outliers beyond; --json also gives the type 7 quartiles.
In a per-attempt file, a round is all attempts of one player in one latency x scale x difficulty cell.

Example:
  lagparity summarize matches/playtest-trials.csv --by latency,difficulty

Exit codes: 0 success; 2 bad input.`,
    )
    .action(async (path: string, options: SummarizeCommandOptions) => {
      const { runSummarize } = await import('./summarize-run.js');
      process.exitCode = await runSummarize(path, options);
    });
}
