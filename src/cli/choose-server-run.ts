/** `lagparity choose-server`, run (options and help: `choose-server-command.ts`). */
import { readJsonDocument } from '../io/read-json.js';
import { safeParseServerLobby } from '../formats/lobby.js';
import { serverChoiceDocument } from '../formats/result-documents.js';
import { loadModel, loadRules } from './inputs.js';
import { CAUTION, renderBalance } from './render-balance.js';
import { compactTable } from './table.js';
import { EXIT_BAD_INPUT, EXIT_OK, fixed, reportIssues, writeOut } from './output.js';

export interface ChooseServerOptions {
  model: string;
  rules?: string;
  json?: boolean;
}

export async function runChooseServer(file: string, options: ChooseServerOptions): Promise<number> {
  const [model, rules, lobby] = await Promise.all([loadModel(options.model), loadRules(options.rules), readJsonDocument(file, safeParseServerLobby)]);
  if (!model.ok || !rules.ok || !lobby.ok) {
    reportIssues([...(model.ok ? [] : model.issues), ...(rules.ok ? [] : rules.issues), ...(lobby.ok ? [] : lobby.issues)]);
    return EXIT_BAD_INPUT;
  }
  const choice = serverChoiceDocument(lobby.value, model.value, rules.value);
  if (options.json) {
    writeOut(JSON.stringify(choice, null, 2));
  } else {
    const table = compactTable(['server', 'status', 'worst gap', "Jain's index", 'mean latency ms', 'ineligible'], ['left', 'left', 'right', 'right', 'right', 'left']);
    for (const server of choice.servers) {
      table.push([server.server, server.status, fixed(server.worst_gap), fixed(server.jain, 4), server.mean_latency_ms === null ? '-' : server.mean_latency_ms.toFixed(1), server.ineligible.join(', ') || '-']);
    }
    const lines = [`${lobby.value.match_id}: servers ranked by what compensation leaves unequal`, table.toString(), `chosen: ${choice.status === 'chosen' ? choice.reason : `none (${choice.reason})`}`];
    if (choice.status === 'chosen') lines.push('', renderBalance(choice.best));
    writeOut(lines.join('\n'));
    process.stderr.write(`\n${CAUTION}\n`);
  }
  if (choice.status === 'rejected') {
    reportIssues(choice.issues);
    return EXIT_BAD_INPUT;
  }
  return EXIT_OK;
}
