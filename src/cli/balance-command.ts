/** `lagparity balance`: per-player scales for one or more lobbies. */
import { basename } from 'node:path';
import type { Command } from 'commander';
import { at } from '../issues.js';
import { balanceLobby, type BalanceResult } from '../solver/balance-lobby.js';
import { loadLobbies, loadModel, loadRules } from './inputs.js';
import { CAUTION, renderBalance } from './render-balance.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';

export const BALANCE_FORMAT = 'lagparity/balance-result@1';

interface BalanceOptions {
  model: string;
  rules?: string;
  json?: boolean;
  strict?: boolean;
}

export async function runBalance(paths: string[], options: BalanceOptions): Promise<number> {
  const [model, rules, lobbies] = await Promise.all([loadModel(options.model), loadRules(options.rules), loadLobbies(paths)]);
  const issues = [...(model.ok ? [] : model.issues), ...(rules.ok ? [] : rules.issues), ...(lobbies.ok ? [] : lobbies.issues)];
  if (!model.ok || !rules.ok || !lobbies.ok) {
    reportIssues(issues);
    return EXIT_BAD_INPUT;
  }
  const results: BalanceResult[] = lobbies.value.map(({ lobby }) => balanceLobby(lobby, model.value, rules.value));
  let extrapolated = false;
  results.forEach((result, index) => {
    const file = lobbies.value[index]?.path ?? '';
    const name = file === '-' ? 'stdin' : basename(file);
    const warnings = result.warnings.map((issue) => ({ ...issue, location: at(name, issue.location) }));
    // Under --strict, a prediction outside the model's training range is an error, not a warning.
    const judged = warnings.map((issue) => (options.strict && issue.code === 'outside_training_range' ? { ...issue, severity: 'error' as const } : issue));
    const errors = judged.filter((issue) => issue.severity === 'error');
    if (errors.length > 0) extrapolated = true;
    reportIssues([...errors, ...judged.filter((issue) => issue.severity !== 'error')]);
    // A solver issue located at `model.<field>` is about the model file; the others name a place in the lobby.
    const modelName = basename(options.model);
    const place = (location: string) => (location.startsWith('model.') ? at(modelName, location.slice('model.'.length)) : at(name, location));
    if (result.status === 'rejected') reportIssues(result.issues.map((issue) => ({ ...issue, location: place(issue.location) })));
  });
  if (options.json) {
    writeOut(JSON.stringify({ format: BALANCE_FORMAT, lobbies: results }, null, 2));
  } else {
    writeOut(results.map(renderBalance).join('\n\n'));
    process.stderr.write(`\n${CAUTION}\n`);
  }
  return extrapolated || results.some((result) => result.status === 'rejected') ? EXIT_BAD_INPUT : EXIT_OK;
}

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
      process.exitCode = await runBalance(paths, options);
    });
}
