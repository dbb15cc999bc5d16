/** `lagparity validate`: the command's options and help; the run code (`validate-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import { FILE_KINDS as KINDS } from '../formats/file-kinds.js';
import type { ValidateOptions } from './validate-run.js';

export function registerValidate(program: Command): void {
  program
    .command('validate')
    .description('Check trials, lobby, server-choice lobby, model, rules and playtest plan files against their formats; report every problem with its place.')
    .argument('<files...>', 'files to check: *.csv trials, or JSON lobby / server-choice lobby / model / rules / plan files (told apart by their `format` tag)')
    .option('--kind <kind>', `read every file as this kind: ${KINDS.join(', ')}`)
    .option('--json', 'write one JSON document (lagparity/validation@1) to stdout')
    .addHelpText('after', '\nExample:\n  lagparity validate matches/*.lobby.json matches/league-rules.json matches/playtest-trials.csv\n\nExit codes: 0 every file valid (warnings allowed); 2 some file invalid.')
    .action(async (files: string[], options: ValidateOptions) => {
      const { runValidate } = await import('./validate-run.js');
      process.exitCode = await runValidate(files, options);
    });
}
