#!/usr/bin/env node
/** The `lagparity` command line. Library modules never import this file. */
import { Command, CommanderError } from 'commander';
import { registerAudit } from './audit-command.js';
import { registerBalance } from './balance-command.js';
import { registerChooseServer } from './choose-server-command.js';
import { registerFieldCheck } from './field-check-command.js';
import { registerFit } from './fit-command.js';
import { registerPlan } from './plan-command.js';
import { registerGroupingSql } from './grouping-sql-command.js';
import { registerReplay } from './replay-command.js';
import { registerReport } from './report-command.js';
import { registerServe } from './serve-command.js';
import { registerSummarize } from './summarize-command.js';
import { registerValidate } from './validate-command.js';
import { EXIT_BAD_INPUT } from './output.js';
import { escapeControlCharacters } from '../formats/control-characters.js';

const program = new Command();
program
  .name('lagparity')
  .description('Latency compensation numbers for online matches: fit hit probability against latency, balance lobbies, audit rule sets.')
  .version('0.1.0')
  .exitOverride()
  .configureOutput({ writeErr: (text) => process.stderr.write(escapeControlCharacters(text)), writeOut: (text) => process.stdout.write(escapeControlCharacters(text)) })
  .addHelpText('after', '\nExit codes: 0 success; 1 a check failed (audit, replay, field-check); 2 bad input.');

// Options and help only: each command's action imports its run code (`X-run.ts`) when it runs,
// so a command loads what it needs and nothing else; errors from there reach the catch below.
registerBalance(program);
registerChooseServer(program);
registerFit(program);
registerPlan(program);
registerGroupingSql(program);
registerAudit(program);
registerSummarize(program);
registerFieldCheck(program);
registerReport(program);
registerReplay(program);
registerServe(program);
registerValidate(program);

try {
  await program.parseAsync(process.argv);
} catch (cause) {
  if (cause instanceof CommanderError) {
    process.exitCode = cause.exitCode === 0 ? 0 : EXIT_BAD_INPUT;
  } else {
    process.stderr.write(escapeControlCharacters(`lagparity: internal error: ${(cause as Error).message}\n`));
    process.exitCode = EXIT_BAD_INPUT;
  }
}
