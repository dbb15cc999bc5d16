/** `lagparity replay`: the command's options and help; the run code (`replay-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { ReplayOptions } from './replay-run.js';

export function registerReplay(program: Command): void {
  program
    .command('replay')
    .description('Replay a match session\'s event log and check that it reproduces every scale the match applied, bit for bit.')
    .argument('<log>', 'session log (lagparity/session-log@1, JSON lines), or - for standard input')
    .requiredOption('--model <file>', 'the model file (lagparity/model@1) the match ran with')
    .option('--json', 'write one JSON document (lagparity/session-replay@1) to stdout instead of text')
    .addHelpText(
      'after',
      `
Each safe point is decided again from the estimates the log recorded and the scales in force
before it, under the rules and options of the log's start event, and compared with the scales
the log says were applied.

Example:
  lagparity replay cup-final.session.jsonl --model matches/model.json

Exit codes: 0 every scale reproduced; 1 a scale differs (the first difference is named);
2 bad input (a line that is not an event, or not the model the match ran with).`,
    )
    .action(async (log: string, options: ReplayOptions) => {
      const { runReplay } = await import('./replay-run.js');
      process.exitCode = await runReplay(log, options);
    });
}
