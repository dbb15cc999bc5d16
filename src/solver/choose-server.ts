/**
 * `chooseServer(lobby, model, rules)`: on which candidate server to start a
 * match. The players' latencies to each server (a `lagparity/lobby-servers@1`
 * document) make one lobby per server; each is balanced under the rules and
 * the servers are ranked as `rankLobbies` ranks candidate lobbies: by the
 * residual gaps compensation cannot remove (largest first, leximin), then
 * Jain's index after compensation, then the mean latency, then the order the
 * lobby lists the servers in.
 *
 * The answer says why: each server's worst gap, Jain's index, mean latency
 * and the players who would be ineligible there, and which of the criteria
 * put the chosen server ahead of the next one.
 *
 * Cost: one lobby solve per server, plus the full balance of the chosen one.
 */
import { checkBalanceOptions, compiledInputIssues, parsedServerLobby } from './entry-checks.js';
import { type Issue, show } from '../issues.js';
import type { LobbyFile } from '../formats/lobby-types.js';
import type { ServerLobbyFile } from '../formats/server-lobby-types.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from './rules.js';
import { type BalanceOptions, type BalanceResult, balanceLobby } from './balance-lobby.js';
import { type CandidateFigures, candidateFigures, compareCandidates } from './rank-lobbies.js';

export interface ServerFigures extends Omit<CandidateFigures, 'candidate'> {
  readonly server: string;
}

export type ServerChoice =
  | {
      readonly status: 'chosen';
      readonly server: string;
      /** One sentence: what decided the choice, with the runner-up's figures. */
      readonly reason: string;
      /** Every server, best first. */
      readonly servers: readonly ServerFigures[];
      /** The full balance of the match on the chosen server. */
      readonly best: BalanceResult;
    }
  | { readonly status: 'rejected'; readonly reason: string; readonly servers: readonly ServerFigures[]; readonly issues: readonly Issue[] };

/**
 * The lobby of one server: each player's latency to it. Throws a RangeError for a server the lobby
 * does not list (a programming error: the latencies would be missing, and a server named
 * "toString" read Object.prototype's function as a latency).
 */
export function lobbyOnServer(lobby: ServerLobbyFile, server: string): LobbyFile {
  if (!lobby.servers.includes(server)) throw new RangeError(`\`server\` requires one of the lobby's servers (${lobby.servers.map((name) => show(name)).join(', ')}), got ${show(server)}`);
  return {
    format: 'lagparity/lobby@1',
    match_id: lobby.match_id,
    attribute: lobby.attribute,
    difficulty: lobby.difficulty,
    players: lobby.players.map((player) => {
      const latency = (Object.hasOwn(player.latency_ms, server) ? player.latency_ms[server] : undefined) as number | number[];
      return player.team === undefined ? { id: player.id, latency_ms: latency } : { id: player.id, team: player.team, latency_ms: latency };
    }),
  };
}

const three = (value: number | null) => (value === null ? '-' : value.toFixed(3));

/** Which criterion put `first` ahead of `second`, in words. */
function decidedBy(first: CandidateFigures, second: CandidateFigures): string {
  const length = Math.max(first.gaps.length, second.gaps.length);
  for (let index = 0; index < length; index += 1) {
    const a = first.gaps[index] ?? 0;
    const b = second.gaps[index] ?? 0;
    if (a !== b) return index === 0 ? `its worst residual gap is smaller (${three(a)} against ${three(b)})` : `its worst gaps tie, and its gap number ${index + 1} from the worst is smaller (${three(a)} against ${three(b)})`;
  }
  if (first.jain !== second.jain) return `its residual gaps tie, and Jain's index after compensation is higher (${(first.jain ?? 0).toFixed(4)} against ${(second.jain ?? 0).toFixed(4)})`;
  if (first.mean_latency_ms !== second.mean_latency_ms) return `its residual gaps and Jain's index tie, and its mean latency is lower (${(first.mean_latency_ms ?? 0).toFixed(1)} ms against ${(second.mean_latency_ms ?? 0).toFixed(1)} ms)`;
  return 'every figure ties, and the lobby lists it first';
}

/**
 * Choose the server for a match. Validate the document with
 * `safeParseServerLobby` first.
 *
 * @returns `chosen` with the server, the reason, every server's figures and the
 *   full balance there; `rejected` when the model cannot solve the lobby on
 *   any server (each server's issues are in its figures).
 * @example
 *   const choice = chooseServer(lobby, model, rules);
 *   if (choice.status === 'chosen') startMatch(choice.server, choice.best);
 */
export function chooseServer(input: ServerLobbyFile, model: CompiledModel, rules: CompiledRules, options: BalanceOptions = {}): ServerChoice {
  checkBalanceOptions(options);
  const uncompiled = compiledInputIssues(model, rules);
  const parsed = parsedServerLobby(input);
  if (uncompiled.length > 0 || !parsed.ok) {
    return { status: 'rejected', reason: 'the inputs are not what chooseServer requires', servers: [], issues: [...uncompiled, ...(parsed.ok ? [] : parsed.issues)] };
  }
  const lobby = parsed.value;
  const figures = lobby.servers.map((server, index) => ({ server, figures: candidateFigures(lobbyOnServer(lobby, server), index, model, rules) }));
  const ranked = [...figures].sort((left, right) => compareCandidates(left.figures, right.figures));
  const servers: ServerFigures[] = ranked.map(({ server, figures: { candidate: _candidate, ...rest } }) => ({ server, ...rest }));
  const first = ranked[0] as (typeof ranked)[number];
  if (first.figures.status === 'rejected') {
    const issues = ranked.flatMap(({ server, figures: entry }) => entry.issues.map((issue) => ({ ...issue, location: `servers.${server}:${issue.location}` })));
    return { status: 'rejected', reason: 'the model cannot solve the lobby on any of the servers', servers, issues };
  }
  const second = ranked[1];
  const ineligible = first.figures.ineligible.length === 0 ? 'every player eligible' : `ineligible there: ${first.figures.ineligible.join(', ')}`;
  const reason =
    second === undefined
      ? `${first.server} is the only server (worst residual gap ${three(first.figures.worst_gap)}, ${ineligible})`
      : `${first.server} rather than ${second.server}: ${decidedBy(first.figures, second.figures)}; ${ineligible}${second.figures.ineligible.length > 0 ? `; on ${second.server} ineligible: ${second.figures.ineligible.join(', ')}` : ''}`;
  const best = balanceLobby(lobbyOnServer(lobby, first.server), model, rules, options);
  return { status: 'chosen', server: first.server, reason, servers, best };
}
