/** `lagparity report`: the command's options and help; the run code (`report-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { ReportOptions } from './report-run.js';

export function registerReport(program: Command): void {
  program
    .command('report')
    .description('Write one self-contained HTML report: accuracy by condition, the fitted curves with their band, calibration, and what compensation does to each lobby.')
    .requiredOption('--trials <file>', 'trials file (CSV), the playtest the model was fitted on')
    .requiredOption('--model <file>', 'model file (lagparity/model@1)')
    .option('--lobbies <paths...>', 'lobby files (*.lobby.json) or folders of them, to show balanced')
    .option('--rules <file>', 'rules file (lagparity/rules@1) for the lobbies; default: floor 1, cap 1.5, no other limit')
    .option('--size-study <file>', 'a size study (lagparity/playtest-size@1, from `lagparity plan size --out`): adds the precision and power against participants')
    .requiredOption('--out <file>', 'the HTML file to write')
    .option('--force', 'replace the output file if it exists')
    .option('--latency-bins <spec>', 'latency groups: auto, levels, quantile:K, width:W (ms) or edges:a,b,... (as for summarize)', 'auto')
    .option('--live <file>', 'live telemetry (trials with a player column and the applied scales): adds the field check by latency band (as lagparity field-check)')
    .option('--live-margin <gap>', 'the field check\'s margin in hit probability', '0.02')
    .option('--live-bands <cuts>', 'the field check\'s latency band cut points in ms', '40,80,120,160,200')
    .addHelpText(
      'after',
      `
The page needs no network: charts are inline SVG, with no scripts and no web fonts.
The file is written to a temporary file beside the target and renamed into place; an existing
file is kept unless --force.

Examples:
  lagparity report --trials matches/playtest-trials.csv --model matches/model.json \\
    --lobbies matches --rules matches/league-rules.json --out report.html
  lagparity plan size matches/preseason-playtest.plan.json --pilot-model matches/model.json --out size.json
  lagparity report --trials matches/playtest-trials.csv --model matches/model.json --size-study size.json --out plan.html
  lagparity report --trials matches/playtest-trials.csv --model matches/model.json \\
    --rules matches/league-rules.json --live matches/live-telemetry.csv --out season.html

Exit codes: 0 written; 2 bad input, or the output exists without --force.`,
    )
    .action(async (options: ReportOptions) => {
      const { runReport } = await import('./report-run.js');
      process.exitCode = await runReport(options);
    });
}
