/**
 * The server-choice lobby (`lagparity/lobby-servers@1`): one match's players
 * with their latency to each candidate server, so that the matchmaker can
 * pick the server on which compensation leaves the lobby fairest. An
 * extension of the lobby format (`lagparity/lobby@1`): the same fields, and
 * `latency_ms` keyed by server. Free of the schema library (see
 * lobby-types.ts); the schema is in server-lobby-file.ts.
 */
export const SERVER_LOBBY_FORMAT = 'lagparity/lobby-servers@1';

/** A lobby names at most this many candidate servers. */
export const MAX_SERVERS = 64;

export interface ServerLobbyPlayer {
  id: string;
  team?: string | undefined;
  /** Per server id: one latency in milliseconds, or the measured samples. */
  latency_ms: Record<string, number | number[]>;
}

export interface ServerLobbyFile {
  format: 'lagparity/lobby-servers@1';
  match_id: string;
  attribute: 'hit_area' | 'timing_window';
  difficulty: string | number;
  /** The candidate servers, in the matchmaker's order of preference (the last tie-break). */
  servers: string[];
  players: ServerLobbyPlayer[];
}
