import { describe, expect, it } from 'vitest';
import { parseLobby, safeParseLobby } from '../../src/formats/lobby.js';
import { LagparityInputError } from '../../src/issues.js';
import { demoLobbyPaths, readJson } from '../helpers/demo.js';

const base = {
  format: 'lagparity/lobby@1',
  match_id: 'm1',
  attribute: 'hit_area',
  difficulty: 'standard',
  players: [
    { id: 'a', team: 'x', latency_ms: 20 },
    { id: 'b', team: 'y', latency_ms: [30, 31, 45] },
  ],
};

function firstIssue(input: unknown) {
  const result = safeParseLobby(input, 'lobby.json');
  if (result.ok) throw new Error('expected a failure');
  return result.issues[0];
}

describe('safeParseLobby()', () => {
  it.each(demoLobbyPaths())('accepts the bundled lobby %s', (path) => {
    expect(safeParseLobby(readJson(path)).ok).toBe(true);
  });

  it('accepts one latency value or a list of samples', () => {
    expect(safeParseLobby(base).ok).toBe(true);
  });

  it('names the field path of a negative latency and what was expected', () => {
    const issue = firstIssue({ ...base, players: [{ id: 'a', latency_ms: 20 }, { id: 'b', latency_ms: [30, -4] }] });
    expect(issue?.location).toBe('lobby.json:players[1].latency_ms[1]');
    expect(issue?.message).toMatch(/requires a latency in milliseconds/);
  });

  it('refuses duplicate player ids, naming both places', () => {
    const issue = firstIssue({ ...base, players: [{ id: 'a', latency_ms: 20 }, { id: 'a', latency_ms: 30 }] });
    expect(issue).toMatchObject({ code: 'duplicate_player', location: 'lobby.json:players[1].id' });
    expect(issue?.message).toContain('players[0]');
  });

  it('refuses an empty lobby and one above the documented player limit', () => {
    expect(firstIssue({ ...base, players: [] })?.message).toMatch(/at least one player/);
    const many = Array.from({ length: 100_000 }, (_, index) => ({ id: `p${index}`, latency_ms: 20 }));
    const started = performance.now();
    expect(firstIssue({ ...base, players: many })?.message).toMatch(/at most 256 players/);
    expect(performance.now() - started).toBeLessThan(2000);
  });

  it('refuses an unknown format version and unknown fields', () => {
    expect(firstIssue({ ...base, format: 'lagparity/lobby@9' })).toMatchObject({ location: 'lobby.json:format' });
    expect(firstIssue({ ...base, colour: 'red' })?.code).toBe('unknown_field');
  });

  it('refuses a non-object document', () => {
    expect(firstIssue([1, 2])?.location).toBe('lobby.json');
  });

  it('returns a lobby frozen all the way down, sample lists included', () => {
    const result = safeParseLobby({ ...base, players: [{ id: 'a', latency_ms: 20 }, { id: 'b', latency_ms: [30, 41] }] });
    if (!result.ok) throw new Error('expected a valid lobby');
    const players = result.value.players;
    const samples = players[1]?.latency_ms as number[];
    expect([Object.isFrozen(result.value), Object.isFrozen(players), Object.isFrozen(players[0]), Object.isFrozen(samples)]).toEqual([true, true, true, true]);
    expect(() => samples.push(50)).toThrow(TypeError);
    expect(() => {
      samples[0] = -1;
    }).toThrow(TypeError);
  });
});

describe('parseLobby()', () => {
  it('throws a LagparityInputError carrying the issues', () => {
    expect(() => parseLobby({ ...base, players: [] })).toThrow(LagparityInputError);
  });
});
