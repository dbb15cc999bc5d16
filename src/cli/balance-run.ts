/** `lagparity balance`, run: per-player scales for one or more lobbies (options and help: `balance-command.ts`). */
import { basename } from 'node:path';
import { at } from '../issues.js';
import type { BalanceResult } from '../solver/balance-lobby.js';
import { balanceDocument, balanceForOutput } from '../formats/result-documents.js';
import { loadLobbies, loadModel, loadRules } from './inputs.js';
import { CAUTION, renderBalance } from './render-balance.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';

export interface BalanceOptions {
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
  const results: BalanceResult[] = lobbies.value.map(({ lobby }) => {
    const result = balanceForOutput(lobby, model.value, rules.value);
    return options.strict ? refuseExtrapolation(result) : result;
  });
  results.forEach((result, index) => {
    const file = lobbies.value[index]?.path ?? '';
    const name = file === '-' ? 'stdin' : basename(file);
    // A solver issue located at `model.<field>` is about the model file, one at `rules.<field>` about the rules file; the others name a place in the lobby.
    const place = (location: string) =>
      location.startsWith('model.') ? at(basename(options.model), location.slice('model.'.length)) : location.startsWith('rules.') && options.rules !== undefined ? at(basename(options.rules), location.slice('rules.'.length)) : at(name, location);
    if (result.status === 'rejected') reportIssues(result.issues.map((issue) => ({ ...issue, location: place(issue.location) })));
    reportIssues(result.warnings.map((issue) => ({ ...issue, location: place(issue.location) })));
  });
  if (options.json) {
    writeOut(JSON.stringify(balanceDocument(results), null, 2));
  } else {
    writeOut(results.map(renderBalance).join('\n\n'));
    process.stderr.write(`\n${CAUTION}\n`);
  }
  return results.some((result) => result.status === 'rejected') ? EXIT_BAD_INPUT : EXIT_OK;
}

/**
 * Under --strict, a prediction outside the model's training range is an error, not a warning: the
 * lobby is rejected with those issues, so neither the table nor --json prints scales for it (they
 * printed the answer, then exited 2).
 */
function refuseExtrapolation(result: BalanceResult): BalanceResult {
  const refused = result.warnings.filter((issue) => issue.code === 'outside_training_range');
  if (refused.length === 0) return result;
  return {
    status: 'rejected',
    match_id: result.match_id,
    issues: [...refused.map((issue) => ({ ...issue, severity: 'error' as const })), ...(result.status === 'rejected' ? result.issues : [])],
    warnings: result.warnings.filter((issue) => issue.code !== 'outside_training_range'),
  };
}
