/** `lagparity balance`: the command's options and help; the run code (`balance-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { BalanceOptions } from './balance-run.js';

export function registerBalance(program: Command): void {
  program
    .command('balance')
    .description('Compute per-player scales that bring every eligible player to the target hit probability, within the rules.')
    .argument('<paths...>', 'lobby files (*.lobby.json), folders of them, or - for standard input')
    .requiredOption('--model <file>', 'model file (lagparity/model@1), as written by `lagparity fit`')
    .option('--rules <file>', 'rules file (lagparity/rules@1); default: floor 1, cap 1.5, no other limit')
    .option('--json', 'write one JSON document (lagparity/balance-result@1) to stdout instead of tables')
    .option('--strict', 'treat a latency or scale outside the model\'s training range as an error (exit 2) instead of a warning')
    .addHelpText(
      'after',
      `
Example:
  lagparity balance matches --model matches/model.json --rules matches/league-rules.json

Exit codes: 0 every lobby solved; 2 bad input, a lobby the model cannot solve, or (with --strict) an extrapolation.`,
    )
    .action(async (paths: string[], options: BalanceOptions) => {
      const { runBalance } = await import('./balance-run.js');
      process.exitCode = await runBalance(paths, options);
    });
}
