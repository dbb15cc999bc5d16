/**
 * The lobby (`lagparity/lobby@1`): one match's players and their measured
 * latencies, as a matchmaker sends it or an organiser keeps it on file.
 */
import { z } from 'zod';
import { MAX_LATENCY_MS } from './limits.js';
import type * as types from './lobby-types.js';
import { LOBBY_FORMAT, MAX_LATENCY_SAMPLES, MAX_LOBBY_SAMPLES, MAX_PLAYERS } from './lobby-types.js';
import type { Assert, Same } from '../type-equality.js';

export { LOBBY_FORMAT, MAX_LATENCY_SAMPLES, MAX_LOBBY_SAMPLES, MAX_PLAYERS };
/** A latency above this (one minute) is not a network latency but a broken measurement. */
export { MAX_LATENCY_MS } from './limits.js';

const latencyValue = z
  .number({ error: 'a latency in milliseconds (a finite number >= 0)' })
  .min(0, { error: `a latency in milliseconds between 0 and ${MAX_LATENCY_MS}` })
  .max(MAX_LATENCY_MS, { error: `a latency in milliseconds between 0 and ${MAX_LATENCY_MS}` });


const latencyRange = `a latency in milliseconds between 0 and ${MAX_LATENCY_MS}`;

/**
 * A list of samples. The range of every sample is checked in one loop over
 * the list rather than by a min and a max check per element: zod runs
 * per-element checks one by one, and a lobby of 10 players with 16 samples
 * each took about 40 us to validate that way against about 4 us in a loop,
 * the larger part of a service request. The issue is the same (code
 * `out_of_range`, the sample's index in the path), and so is the JSON Schema
 * (the element's bounds are given as metadata).
 */
const latencySamples = z
  .array(z.number({ error: 'a latency in milliseconds (a finite number >= 0)' }))
  .min(1, { error: 'at least one latency sample' })
  .max(MAX_LATENCY_SAMPLES, { error: `at most ${MAX_LATENCY_SAMPLES} latency samples per player` })
  .check((context) => {
    const samples = context.value;
    for (let index = 0; index < samples.length; index += 1) {
      const sample = samples[index] as number;
      if (!(sample >= 0 && sample <= MAX_LATENCY_MS)) {
        context.issues.push({ code: 'custom', input: sample, path: [index], message: latencyRange, params: { code: 'out_of_range' } });
      }
    }
  })
  .meta({ items: { type: 'number', minimum: 0, maximum: MAX_LATENCY_MS } });

/** One latency or a list of samples (shared with the server-choice lobby). */
export const latencySchema = z.union([latencyValue, latencySamples], { error: 'a latency in milliseconds, or a non-empty list of measured samples in milliseconds' });

/** A player's id and team (shared with the server-choice lobby). */
export const playerIdentity = { id: z.string().min(1).max(128), team: z.string().min(1).max(128).optional() };

/** The fields every match document has besides its format tag and players (shared with the server-choice lobby). */
export const matchFields = {
  match_id: z.string().min(1).max(256),
  attribute: z.enum(['hit_area', 'timing_window']).describe('What the scale multiplies: the target hit area (spatial) or the timing window width (temporal).'),
  difficulty: z.union([z.number(), z.string().min(1).max(128)], { error: 'a numeric difficulty or a level name' }),
};

/** The player list's bounds (shared with the server-choice lobby). */
export const playersOf = <T extends z.ZodType>(player: T) =>
  z
    .array(player)
    .min(1, { error: 'at least one player' })
    .max(MAX_PLAYERS, { error: `at most ${MAX_PLAYERS} players (the documented lobby limit)` });

/** The lobby-wide limit on latency values (MAX_LOBBY_SAMPLES), checked once the players are valid. */
export function tooManyValues(latencies: readonly (number | readonly number[])[], context: z.RefinementCtx, path: (string | number)[], what = 'a lobby'): void {
  let total = 0;
  for (const latency of latencies) total += typeof latency === 'number' ? 1 : latency.length;
  if (total > MAX_LOBBY_SAMPLES) {
    context.addIssue({ code: 'custom', path, message: `${what} with at most ${MAX_LOBBY_SAMPLES} latency values in all (the documented limit; a point latency counts one)`, params: { code: 'too_many_samples', got: total } });
  }
}

export const playerSchema = z.object({ ...playerIdentity, latency_ms: latencySchema }).strict();

export const lobbyFileSchema = z
  .object({
    format: z.literal(LOBBY_FORMAT, { error: `the format tag "${LOBBY_FORMAT}" (a string)` }),
    ...matchFields,
    players: playersOf(playerSchema),
  })
  .strict()
  .superRefine((lobby, context) => {
    tooManyValues(lobby.players.map((player) => player.latency_ms), context, ['players']);
    const seen = new Map<string, number>();
    lobby.players.forEach((player, index) => {
      const first = seen.get(player.id);
      if (first !== undefined) {
        context.addIssue({
          code: 'custom',
          path: ['players', index, 'id'],
          message: `a player id used once in the lobby (also at players[${first}])`,
          params: { code: 'duplicate_player' },
        });
      } else seen.set(player.id, index);
    });
  });

export type { LobbyFile, LobbyPlayer } from './lobby-types.js';

/** The hand-written types of lobby-types.ts are the schema's (a compile error otherwise). */
type _LobbyTypesAgree = [Assert<Same<z.infer<typeof lobbyFileSchema>, types.LobbyFile>>, Assert<Same<z.infer<typeof playerSchema>, types.LobbyPlayer>>];
