/**
 * The lobby format's types and constants (`lagparity/lobby@1`), free of the
 * schema library, so that the published declarations do not depend on it.
 * The schema in lobby-file.ts is checked against them at compile time.
 */
export { MAX_LATENCY_MS } from './limits.js';

export const LOBBY_FORMAT = 'lagparity/lobby@1';

/** Documented limits: a lobby holds at most this many players ... */
export const MAX_PLAYERS = 1024;
/** ... and one player at most this many latency samples. */
export const MAX_LATENCY_SAMPLES = 4096;

export interface LobbyPlayer {
  id: string;
  team?: string | undefined;
  /** One latency in milliseconds, or the measured samples. */
  latency_ms: number | number[];
}

export interface LobbyFile {
  format: 'lagparity/lobby@1';
  match_id: string;
  /** What the scale multiplies: the target hit area (spatial) or the timing window width (temporal). */
  attribute: 'hit_area' | 'timing_window';
  difficulty: string | number;
  players: LobbyPlayer[];
}
