import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { chooseServer, lobbyOnServer } from '../../src/solver/choose-server.js';
import { rankLobbies } from '../../src/solver/rank-lobbies.js';
import { safeParseServerLobby } from '../../src/formats/lobby.js';
import type { ServerLobbyFile } from '../../src/formats/server-lobby-types.js';
import { compileModel } from '../../src/model/compile.js';
import { MATCHES, readJson } from '../helpers/demo.js';
import { type ModelSpec, compiled, rulesOf } from './arbitraries.js';

const spec: ModelSpec = { link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0 };

function serverLobby(latencies: Record<string, number[]>): ServerLobbyFile {
  const servers = Object.keys(latencies);
  const count = (latencies[servers[0] as string] as number[]).length;
  return {
    format: 'lagparity/lobby-servers@1',
    match_id: 'final',
    attribute: 'hit_area',
    difficulty: 0,
    servers,
    players: Array.from({ length: count }, (_, index) => ({ id: `p${index}`, latency_ms: Object.fromEntries(servers.map((server) => [server, (latencies[server] as number[])[index] as number])) })),
  };
}

describe('chooseServer()', () => {
  it('picks the server whose compensated lobby is fairest, and ranks every server as rankLobbies ranks the same lobbies', () => {
    const lobby = serverLobby({ east: [10, 200], central: [40, 80], west: [150, 20] });
    const rules = rulesOf({ scale_cap: 1.3 });
    const choice = chooseServer(lobby, compiled(spec), rules);
    if (choice.status !== 'chosen') throw new Error('rejected');
    // The reference: the three per-server lobbies as candidates of one pool (their ids coincide, so one lobby each).
    const reference = lobby.servers.map((server) => rankLobbies(lobbyOnServer(lobby, server), [['p0', 'p1']], compiled(spec), rules));
    const worst = reference.map((ranking) => (ranking.status === 'ranked' ? (ranking.ranked[0]?.worst_gap as number) : Infinity));
    const fairest = lobby.servers[worst.indexOf(Math.min(...worst))];
    expect(choice.server).toBe(fairest);
    expect(choice.servers.map((server) => server.worst_gap)).toEqual([...worst].sort((a, b) => a - b));
    expect(choice.reason).toMatch(new RegExp(`^${fairest} rather than \\w+: its worst residual gap is smaller`));
    expect(choice.best.status === 'rejected' ? null : choice.best.players.map((player) => player.latency_estimate_ms)).toEqual([40, 80]);
  });

  it('names the players who would be ineligible on a server', () => {
    const lobby = serverLobby({ east: [10, 260], west: [90, 30] });
    const choice = chooseServer(lobby, compiled(spec), rulesOf({ scale_cap: 2, latency_limit_ms: 220 }));
    if (choice.status !== 'chosen') throw new Error('rejected');
    expect(choice.server).toBe('west');
    expect(choice.servers.find((server) => server.server === 'east')?.ineligible).toEqual(['p1']);
    expect(choice.reason).toContain('on east ineligible: p1');
  });

  it('breaks ties by the order the lobby lists the servers in', () => {
    const lobby = serverLobby({ first: [20, 30], second: [20, 30] });
    const choice = chooseServer(lobby, compiled(spec), rulesOf({ scale_cap: 3 }));
    expect(choice.status === 'chosen' ? [choice.server, choice.reason] : null).toEqual(['first', 'first rather than second: every figure ties, and the lobby lists it first; every player eligible']);
  });

  it('chooses midland-central for the demo cup final, where harbour-east would leave driftmoor ineligible', () => {
    const model = compileModel(readJson(join(MATCHES, 'model.json')));
    const lobby = safeParseServerLobby(readJson(join(MATCHES, 'cup-final.lobby-servers.json')));
    if (!model.ok || !lobby.ok) throw new Error('the demo files must parse');
    const choice = chooseServer(lobby.value, model.value, rulesOf(readJson(join(MATCHES, 'league-rules.json')) as Parameters<typeof rulesOf>[0]));
    expect(choice.status === 'chosen' ? choice.server : null).toBe('midland-central');
    expect(choice.servers.find((server) => server.server === 'harbour-east')?.ineligible).toEqual(['driftmoor']);
  });
});

describe('safeParseServerLobby()', () => {
  it('requires a latency to every listed server and none to others, with the place', () => {
    const lobby = serverLobby({ east: [10, 20], west: [30, 40] }) as unknown as { players: { latency_ms: Record<string, number> }[] };
    delete (lobby.players[1] as { latency_ms: Record<string, number> }).latency_ms.west;
    (lobby.players[0] as { latency_ms: Record<string, number> }).latency_ms.north = 5;
    const parsed = safeParseServerLobby(lobby, 'final.json');
    expect(parsed.ok).toBe(false);
    if (!parsed.ok) {
      expect(parsed.issues.map((issue) => [issue.code, issue.location])).toEqual([
        ['unknown_server', 'final.json:players[0].latency_ms.north'],
        ['missing_server_latency', 'final.json:players[1].latency_ms.west'],
      ]);
    }
  });
});
