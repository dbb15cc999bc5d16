/**
 * The lobby format's types and constants (`lagparity/lobby@1`), free of the
 * schema library, so that the published declarations do not depend on it.
 * The schema in lobby-file.ts is checked against them at compile time.
 */
export { MAX_LATENCY_MS } from './limits.js';

export const LOBBY_FORMAT = 'lagparity/lobby@1';

/**
 * Documented limits: a lobby holds at most this many players (a battle royale
 * of 100-150 fits; every command answers within a few seconds at the limits,
 * `npm run bench:limits`) ...
 */
export const MAX_PLAYERS = 256;
/** ... one player at most this many latency samples ... */
export const MAX_LATENCY_SAMPLES = 4096;
/**
 * ... and the whole lobby at most this many latency values (a point latency
 * counts one). The audit's exploit view solves the lobby twice per player; with
 * pooled samples (`all_samples`) and a ratio limit or a budget each solve
 * costs O(all samples), so the audit costs O(players x all samples): an
 * audit with pooled samples, a ratio and a budget took 42 s at 1,024 players
 * with 16 samples each and about 2 s at 256 with 64 (a busy machine).
 * 16,384 is 100 players with 160 samples each.
 */
export const MAX_LOBBY_SAMPLES = 16_384;

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
