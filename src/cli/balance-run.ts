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
  const results: BalanceResult[] = lobbies.value.map(({ lobby }) => balanceForOutput(lobby, model.value, rules.value));
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
    writeOut(JSON.stringify(balanceDocument(results), null, 2));
  } else {
    writeOut(results.map(renderBalance).join('\n\n'));
    process.stderr.write(`\n${CAUTION}\n`);
  }
  return extrapolated || results.some((result) => result.status === 'rejected') ? EXIT_BAD_INPUT : EXIT_OK;
}
