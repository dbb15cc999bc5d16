/** `lagparity choose-server`: the command's options and help; the run code (`choose-server-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { ChooseServerOptions } from './choose-server-run.js';

export function registerChooseServer(program: Command): void {
  program
    .command('choose-server')
    .description('Pick the server on which compensation leaves a match fairest, from the players\' latencies to each candidate server.')
    .argument('<file>', 'server-choice lobby (lagparity/lobby-servers@1), or - for standard input')
    .requiredOption('--model <file>', 'model file (lagparity/model@1), as written by `lagparity fit`')
    .option('--rules <file>', 'rules file (lagparity/rules@1); default: floor 1, cap 1.5, no other limit')
    .option('--json', 'write one JSON document (lagparity/server-choice@1) to stdout instead of a table')
    .addHelpText(
      'after',
      `
Servers are ranked by the residual gaps compensation cannot remove (the worst first), then Jain's
index after compensation, then the mean latency, then their order in the file.

Example:
  lagparity choose-server matches/cup-final.lobby-servers.json --model matches/model.json --rules matches/league-rules.json

Exit codes: 0 a server chosen; 2 bad input, or the model cannot solve the lobby on any server.`,
    )
    .action(async (file: string, options: ChooseServerOptions) => {
      const { runChooseServer } = await import('./choose-server-run.js');
      process.exitCode = await runChooseServer(file, options);
    });
}
