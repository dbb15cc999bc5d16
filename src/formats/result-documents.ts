/**
 * The JSON documents the command line prints with `--json` and the service
 * answers with, built in one place so that both give the same bytes for the
 * same inputs: `lagparity balance --json` and `POST /v1/balance`,
 * `lagparity choose-server --json` and `POST /v1/server`, the audit (whose
 * builder is `auditLobbies`) and `POST /v1/audit`, and the ranking of
 * candidate lobbies (`POST /v1/rank`).
 */
import type { CompiledModel } from '../model/compile.js';
import { escapeControlCharacters } from './control-characters.js';
import type { CompiledRules } from '../solver/rules.js';
import type { LobbyFile } from './lobby-types.js';
import type { ServerLobbyFile } from './server-lobby-types.js';
import { type BalanceResult, balanceLobby } from '../solver/balance-lobby.js';
import { type ServerChoice, chooseServer } from '../solver/choose-server.js';
import { type RankResult, rankLobbies } from '../solver/rank-lobbies.js';

export const BALANCE_FORMAT = 'lagparity/balance-result@1';
export const SERVER_CHOICE_FORMAT = 'lagparity/server-choice@1';
export const LOBBY_RANKING_FORMAT = 'lagparity/lobby-ranking@1';

/** A lobby balanced as `lagparity balance` balances it (with the ordering view). */
export function balanceForOutput(lobby: LobbyFile, model: CompiledModel, rules: CompiledRules): BalanceResult {
  return balanceLobby(lobby, model, rules, { views: { ordering: true } });
}

export function balanceDocument(results: readonly BalanceResult[]): { format: typeof BALANCE_FORMAT; lobbies: readonly BalanceResult[] } {
  return { format: BALANCE_FORMAT, lobbies: results };
}

/** The server choice as `lagparity choose-server --json` prints it. */
export function serverChoiceDocument(lobby: ServerLobbyFile, model: CompiledModel, rules: CompiledRules): { format: typeof SERVER_CHOICE_FORMAT; match_id: string } & ServerChoice {
  return { format: SERVER_CHOICE_FORMAT, match_id: lobby.match_id, ...chooseServer(lobby, model, rules, { views: { ordering: true } }) };
}

/** Candidate lobbies ranked, with the best one's full balance (the ordering view on, as everywhere a document is printed). */
export function rankingDocument(pool: LobbyFile, candidates: readonly (readonly string[])[], model: CompiledModel, rules: CompiledRules): { format: typeof LOBBY_RANKING_FORMAT; match_id: string } & RankResult {
  return { format: LOBBY_RANKING_FORMAT, match_id: pool.match_id, ...rankLobbies(pool, candidates, model, rules, { views: { ordering: true } }) };
}

/**
 * A document as the command line prints it: two-space indentation, a final
 * newline, and the characters a terminal would obey written as JSON escapes
 * (the same strings, control-characters.ts).
 */
export function documentText(document: unknown): string {
  return escapeControlCharacters(`${JSON.stringify(document, null, 2)}\n`);
}
