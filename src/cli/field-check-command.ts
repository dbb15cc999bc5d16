/** `lagparity field-check`: the command's options and help; the run code (`field-check-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { FieldCheckOptions } from './field-check-run.js';

export function registerFieldCheck(program: Command): void {
  program
    .command('field-check')
    .description('Check live play against the model its scales came from: does compensation hold across latency bands, and is the model still right?')
    .argument('<telemetry>', 'live trials (lagparity/trials@1) with a `player` column; `scale` is the scale the match applied. A CSV file, or a Parquet file or quoted glob of shards (read through DuckDB, latencies kept to 0.001 ms)')
    .requiredOption('--model <file>', 'the model file (lagparity/model@1) the scales were computed from')
    .option('--rules <file>', 'the rules (lagparity/rules@1) the scales were computed under: their target kind, latency limit, floor and cap')
    .option('--margin <gap>', 'the largest gap in hit probability, either way, that counts as equal play', '0.02')
    .option('--bands <cuts>', 'latency band cut points in ms (the last band is open)', '40,80,120,160,200')
    .option('--attribute <kind>', 'what the live scales multiplied, hit_area or timing_window (checked against the model\'s attribute)')
    .option('--threads <n>', 'threads for the calibration fits (default: the processors available, at most 4; each worker holds its own copy of the data); the answer does not depend on it')
    .option('--json', 'write one JSON document (lagparity/field-check@1, schema in docs/schemas/) to stdout')
    .addHelpText(
      'after',
      `
The verdict compares the worst-connected latency band with the best-connected one (or the band of
the rules' reference latency, or their fixed target) at the file's difficulty mix, with intervals
cluster-robust by player, by two one-sided tests against --margin: holds, under_compensates,
over_compensates, not_enough_data (with the players and rounds that would decide) or
nothing_compensated. The model's calibration and a refit of its terms say keep or refit, with the
command that refits. Bands with fewer than 10 players stay in the table but are not compared.

Examples:
  lagparity field-check matches/live-telemetry.csv --model matches/model.json --rules matches/league-rules.json
  lagparity field-check live.csv --model model.json --margin 0.03 --bands 50,100,150 --json
  lagparity field-check "season-3/*.parquet" --model matches/model.json --rules matches/league-rules.json

Exit codes: 0 compensation holds and the model is kept; 1 any other verdict, or refit;
2 bad input (a file that cannot be read, a model the telemetry does not belong to).`,
    )
    .action(async (telemetry: string, options: FieldCheckOptions) => {
      const { runFieldCheck } = await import('./field-check-run.js');
      process.exitCode = await runFieldCheck(telemetry, options);
    });
}
