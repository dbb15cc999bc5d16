/**
 * The checks every public solver entry point makes before any work
 * (validated.ts says why): data that is wrong is a result carrying issues;
 * options that are wrong are the caller's programming error and throw a
 * RangeError or TypeError at once, naming the option (docs/security.md,
 * "Values passed to the module").
 */
import { type Issue, type Result, error, ok, show } from '../issues.js';
import type { LobbyFile } from '../formats/lobby-types.js';
import type { ServerLobbyFile } from '../formats/server-lobby-types.js';
import { safeParseLobby, safeParseServerLobby } from '../formats/lobby.js';
import { isCompiledModel, isCompiledRules, isParsedLobby, isParsedServerLobby, readSafely } from '../validated.js';
import { MAX_UNCERTAINTY_DRAWS } from './views/uncertainty-view.js';

/** Issues when `model` or `rules` did not come from compileModel / compileRules. */
export function compiledInputIssues(model: unknown, rules: unknown): Issue[] {
  const issues: Issue[] = [];
  if (!isCompiledModel(model)) issues.push(error('uncompiled_model', 'model', `\`model\` requires the value compileModel() returns (its \`value\` when \`ok\`), got ${show(model)}`));
  if (!isCompiledRules(rules)) issues.push(error('uncompiled_rules', 'rules', `\`rules\` requires the value compileRules() or defaultRules() returns, got ${show(rules)}`));
  return issues;
}

/** The lobby as safeParseLobby made it: returned as it is if it came from there, else validated now. */
export function parsedLobby(lobby: unknown): Result<LobbyFile> {
  return isParsedLobby(lobby) ? ok(lobby as LobbyFile) : safeParseLobby(lobby);
}

export function parsedServerLobby(lobby: unknown): Result<ServerLobbyFile> {
  return isParsedServerLobby(lobby) ? ok(lobby as ServerLobbyFile) : safeParseServerLobby(lobby);
}

/** A lobby's match id for a rejection, whatever the lobby is. */
export function matchIdOf(lobby: unknown): string {
  return readSafely(
    lobby,
    () => {
      const id = lobby !== null && typeof lobby === 'object' ? (lobby as { match_id?: unknown }).match_id : undefined;
      return typeof id === 'string' ? id : '';
    },
    () => '',
  );
}

/** Throws for balance options that are not what BalanceOptions documents. */
export function checkBalanceOptions(options: unknown): void {
  if (options === undefined) return;
  if (options === null || typeof options !== 'object') throw new TypeError(`\`options\` requires an object (or nothing), got ${show(options)}`);
  const views = (options as { views?: unknown }).views;
  if (views === undefined) return;
  if (views === null || typeof views !== 'object') throw new TypeError(`\`options.views\` requires an object (or nothing), got ${show(views)}`);
  for (const name of ['ordering', 'duel', 'exploit'] as const) {
    const flag = (views as Record<string, unknown>)[name];
    if (flag !== undefined && typeof flag !== 'boolean') throw new TypeError(`\`options.views.${name}\` requires true or false, got ${show(flag)}`);
  }
  const uncertainty = (views as { uncertainty?: unknown }).uncertainty;
  if (uncertainty === undefined || typeof uncertainty === 'boolean') return;
  if (uncertainty === null || typeof uncertainty !== 'object') throw new TypeError(`\`options.views.uncertainty\` requires true, false or { draws, seed, random }, got ${show(uncertainty)}`);
  const { draws, seed, random } = uncertainty as { draws?: unknown; seed?: unknown; random?: unknown };
  if (draws !== undefined && !(Number.isSafeInteger(draws) && (draws as number) >= 1 && (draws as number) <= MAX_UNCERTAINTY_DRAWS)) {
    throw new RangeError(`\`options.views.uncertainty.draws\` requires a whole number from 1 to ${MAX_UNCERTAINTY_DRAWS}, got ${show(draws)}`);
  }
  if (seed !== undefined && !Number.isSafeInteger(seed)) throw new RangeError(`\`options.views.uncertainty.seed\` requires a safe integer, got ${show(seed)}`);
  if (random !== undefined && typeof random !== 'function') throw new TypeError(`\`options.views.uncertainty.random\` requires a function returning uniform draws in [0, 1), got ${show(random)}`);
}
