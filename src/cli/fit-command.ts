/** `lagparity fit`: the command's options and help; the run code (`fit-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { FitOptions } from './fit-run.js';

export function registerFit(program: Command): void {
  program
    .command('fit')
    .description('Fit hit probability against latency, compensation scale and difficulty; print the diagnostics and write a model file.')
    .argument('<trials>', 'trials (lagparity/trials@1): a CSV file, a Parquet file, or a quoted glob of CSV or Parquet shards ("telemetry/*.parquet", read through the optional package @duckdb/node-api); per-attempt `hit` or per-round `hits`/`attempts` rows')
    .option('--out <file>', 'write the model file (lagparity/model@1) here; never replaces a file without --force')
    .option('--link <name>', 'link function: logit, probit or cloglog', 'logit')
    .option('--terms <list>', 'comma-separated terms, e.g. latency,log_scale,difficulty,latency_x_log_scale (intercept implied; add no_intercept to drop it)')
    .option('--cluster <by>', 'cluster-robust (CR1) errors by `player` or `none`; default player when the file has a player column')
    .option('--folds <k>', 'cross-validation folds, whole players held out; 0 for none', '5')
    .option('--seed <n>', 'seed of the fold assignment', '1')
    .option('--lr-tests <which>', 'likelihood-ratio test per factor (one refit each): all or none', 'all')
    .option('--no-baseline', 'skip the least-squares baseline on accuracy (reported as null)')
    .option('--reference <level>', 'reference difficulty level (default: the first level in the file)')
    .option('--attribute <kind>', 'what the scale multiplied in these trials, hit_area or timing_window; recorded in the model file (the field check compares it)')
    .option('--compare <specs>', 'rank candidates by held-out log loss: MODEL[:TERMS] separated by ";", MODEL one of logit, probit, cloglog, least_squares')
    .option('--family <name>', 'binomial, or least_squares (OLS on per-round accuracy; a baseline, not written as a model)', 'binomial')
    .option('--latency-step <ms>', 'group latencies to this resolution in ms before fitting (through DuckDB, as `grouping-sql` prints it); default 1 for Parquet and globs, exact for one CSV file')
    .option('--counts <kind>', '`hits`/`attempts` rows are `rounds` (each a recorded round: grouped likelihood) or `attempts` (counts of independent attempts, e.g. the output of `grouping-sql`: fitted as those attempts)', 'rounds')
    .option('--threads <n>', 'threads for the refits (likelihood-ratio tests, folds, baseline; default: the processors available, at most 4; each worker holds its own copy of the data); the answer does not depend on it')
    .option('--json', 'write the whole result as one JSON document (lagparity/fit-result@1) to stdout')
    .option('--force', 'replace an existing --out file')
    .addHelpText(
      'after',
      `
Examples:
  lagparity fit matches/playtest-trials.csv --out matches/model.json
  lagparity fit trials.csv --out model.json --link probit --terms latency,log_scale,difficulty --cluster none
  lagparity fit trials.csv --folds 0 --lr-tests none --no-baseline --cluster none
    the maximum-likelihood fit alone with its standard errors (a binomial GLM by IRLS;
    McCullagh and Nelder 1989), without the cross-validation, the tests and the baseline
  lagparity fit "telemetry/*.parquet" --out model.json
    reads every shard through embedded DuckDB, grouped per player at 1 ms of latency
  lagparity fit counts.csv --counts attempts --out model.json
    fits the counts a warehouse returned for \`lagparity grouping-sql\` (docs/warehouse.md)
  lagparity fit trials.csv --compare "logit;probit;cloglog:latency,log_scale,difficulty;least_squares"
    fits the main model (--link/--terms) and four candidates: the logit, probit and
    (with fewer terms) cloglog links and least squares on accuracy; a candidate
    without ":TERMS" uses --terms (or the default). Candidates are ranked by
    held-out log loss from player-wise cross-validation (--folds, --seed).

Exit codes: 0 fitted (and written); 2 bad input, a fit without estimates (rank deficiency, separation,
iteration limit), or an --out file that exists without --force.`,
    )
    .action(async (trials: string, options: FitOptions) => {
      const { runFit } = await import('./fit-run.js');
      process.exitCode = await runFit(trials, options);
    });
}
