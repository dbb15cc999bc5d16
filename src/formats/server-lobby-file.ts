/**
 * The schema of the server-choice lobby (`lagparity/lobby-servers@1`, types
 * in server-lobby-types.ts): the lobby format's fields and limits, with
 * `latency_ms` keyed by server. Every player has a measurement to every
 * listed server, and only to those.
 */
import { z } from 'zod';
import { latencySchema, matchFields, playerIdentity, playersOf, tooManyValues } from './lobby-file.js';
import type * as types from './server-lobby-types.js';
import { MAX_SERVERS, SERVER_LOBBY_FORMAT } from './server-lobby-types.js';
import type { Assert, Same } from '../type-equality.js';

export { MAX_SERVERS, SERVER_LOBBY_FORMAT };

const serverPlayerSchema = z
  .object({
    ...playerIdentity,
    latency_ms: z.record(z.string().min(1).max(128), latencySchema).describe('Per server id: the latency to that server in milliseconds, or the measured samples.'),
  })
  .strict();

export const serverLobbyFileSchema = z
  .object({
    format: z.literal(SERVER_LOBBY_FORMAT, { error: `the format tag "${SERVER_LOBBY_FORMAT}" (a string)` }),
    ...matchFields,
    servers: z
      .array(z.string().min(1).max(128))
      .min(1, { error: 'at least one server' })
      .max(MAX_SERVERS, { error: `at most ${MAX_SERVERS} servers` })
      .describe('The candidate servers, in order of preference (the last tie-break).'),
    players: playersOf(serverPlayerSchema),
  })
  .strict()
  .superRefine((lobby, context) => {
    const servers = new Set<string>();
    lobby.servers.forEach((server, index) => {
      if (servers.has(server)) context.addIssue({ code: 'custom', path: ['servers', index], message: 'a server id listed once', params: { code: 'duplicate_server' } });
      servers.add(server);
      tooManyValues(lobby.players.flatMap((player) => (Object.hasOwn(player.latency_ms, server) ? [player.latency_ms[server] as number | number[]] : [])), context, ['players'], `the lobby on each server (${JSON.stringify(server)} here)`);
    });
    const seen = new Map<string, number>();
    lobby.players.forEach((player, index) => {
      const first = seen.get(player.id);
      if (first !== undefined) context.addIssue({ code: 'custom', path: ['players', index, 'id'], message: `a player id used once in the lobby (also at players[${first}])`, params: { code: 'duplicate_player' } });
      else seen.set(player.id, index);
      for (const server of servers) {
        if (!Object.hasOwn(player.latency_ms, server)) context.addIssue({ code: 'custom', path: ['players', index, 'latency_ms', server], message: `a latency to every listed server, got none to ${JSON.stringify(server)}`, params: { code: 'missing_server_latency' } });
      }
      for (const server of Object.keys(player.latency_ms)) {
        if (!servers.has(server)) context.addIssue({ code: 'custom', path: ['players', index, 'latency_ms', server], message: `latencies to listed servers only, got one to ${JSON.stringify(server)}, which \`servers\` does not list`, params: { code: 'unknown_server' } });
      }
    });
  });

/** The hand-written types of server-lobby-types.ts are the schema's (a compile error otherwise). */
type _ServerLobbyTypesAgree = [Assert<Same<z.infer<typeof serverLobbyFileSchema>, types.ServerLobbyFile>>, Assert<Same<z.infer<typeof serverPlayerSchema>, types.ServerLobbyPlayer>>];
