/** Loading the CLI's inputs: model, rules, lobby files and folders. */
import { readdir, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { type Issue, type Result, error, fail, ok } from '../issues.js';
import { readJsonDocument } from '../io/read-json.js';
import { reportIssues } from './output.js';
import { type CompiledModel, compileModel } from '../model/compile.js';
import { type CompiledRules, compileRules, defaultRules } from '../solver/rules.js';
import { type ValidLobby, safeParseLobby } from '../formats/lobby.js';

export const LOBBY_SUFFIX = '.lobby.json';

export async function loadModel(path: string): Promise<Result<CompiledModel>> {
  return reported(await readJsonDocument(path, compileModel));
}

export async function loadRules(path: string | undefined): Promise<Result<CompiledRules>> {
  if (path === undefined) return ok(defaultRules());
  return reported(await readJsonDocument(path, compileRules));
}

/** A loaded input's warnings go to stderr at once (the result keeps its value). */
function reported<T>(result: Result<T>): Result<T> {
  if (result.ok && result.warnings.length > 0) reportIssues(result.warnings);
  return result;
}

/** Expand the PATH arguments: files as given, folders to their `*.lobby.json` files in name order, `-` as stdin. */
export async function expandLobbyPaths(paths: readonly string[]): Promise<Result<string[]>> {
  const files: string[] = [];
  const issues: Issue[] = [];
  for (const path of paths) {
    if (path === '-') {
      files.push(path);
      continue;
    }
    try {
      const info = await stat(path);
      if (info.isDirectory()) {
        const names = (await readdir(path)).filter((name) => name.endsWith(LOBBY_SUFFIX)).sort();
        if (names.length === 0) issues.push(error('no_lobbies', path, `a folder requires at least one *${LOBBY_SUFFIX} file, got none`));
        files.push(...names.map((name) => join(path, name)));
      } else files.push(path);
    } catch {
      issues.push(error('cannot_read', path, 'the input requires an existing file or folder, got no such path'));
    }
  }
  return issues.length > 0 ? fail(issues) : ok(files);
}

export interface LoadedLobby {
  readonly path: string;
  readonly lobby: ValidLobby;
}

/** Load every lobby; collect every file's issues rather than stop at the first. */
export async function loadLobbies(paths: readonly string[]): Promise<Result<LoadedLobby[]>> {
  const expanded = await expandLobbyPaths(paths);
  if (!expanded.ok) return expanded;
  const lobbies: LoadedLobby[] = [];
  const issues: Issue[] = [];
  for (const path of expanded.value) {
    const parsed = await readJsonDocument(path, safeParseLobby);
    if (parsed.ok) lobbies.push({ path, lobby: parsed.value });
    else issues.push(...parsed.issues);
  }
  return issues.length > 0 ? fail(issues) : ok(lobbies);
}
