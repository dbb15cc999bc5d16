/** The demo report (matches/), built by the library as `lagparity report` would. Shared by the browser test and tools/render-report-screenshot.ts. */
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { readJsonFile } from '../../src/io/read-json.js';
import { readTrialsFile } from '../../src/io/read-trials.js';
import { safeParseLobby } from '../../src/formats/lobby.js';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { renderReport } from '../../src/report/render-report.js';
import { unwrap } from '../../src/issues.js';

export const DEMO = fileURLToPath(new URL('../../matches/', import.meta.url));

export async function buildDemoReport(): Promise<string> {
  const trials = unwrap(await readTrialsFile(join(DEMO, 'playtest-trials.csv')));
  const model = unwrap(compileModel(unwrap(await readJsonFile(join(DEMO, 'model.json'))), 'model.json'));
  const rules = unwrap(compileRules(unwrap(await readJsonFile(join(DEMO, 'league-rules.json'))), 'league-rules.json'));
  const names = readdirSync(DEMO).filter((name) => name.endsWith('.lobby.json')).sort();
  const lobbies = [];
  for (const name of names) lobbies.push({ name, lobby: unwrap(safeParseLobby(unwrap(await readJsonFile(join(DEMO, name))), name)) });
  const report = unwrap(await renderReport({ trials, model, modelName: 'model.json', lobbies, rules, rulesName: 'league-rules.json' }));
  return report.html;
}
