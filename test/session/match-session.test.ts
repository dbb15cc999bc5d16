import fc from 'fast-check';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MatchSession, type SessionEvent, moveScales } from '../../src/session/match-session.js';
import { replaySession } from '../../src/session/replay-session.js';
import { parseSessionLog } from '../../src/session/session-log-file.js';
import { compileModel } from '../../src/model/compile.js';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
import { MATCHES, readJson } from '../helpers/demo.js';
import { rulesOf } from '../solver/arbitraries.js';

const compiledModel = compileModel(readJson(join(MATCHES, 'model.json')));
if (!compiledModel.ok) throw new Error('the demo model must compile');
const model = compiledModel.value;
const match = { match_id: 'cup-final', attribute: 'hit_area' as const, difficulty: 'veteran' };

function recorded(rules = rulesOf({ scale_cap: 1.5 }), options: ConstructorParameters<typeof MatchSession>[3] = {}) {
  const events: SessionEvent[] = [];
  const session = new MatchSession(model, rules, match, { ...options, record: (event) => events.push(JSON.parse(JSON.stringify(event)) as SessionEvent) });
  return { session, events };
}

describe('MatchSession estimates (RFC 6298, section 2)', () => {
  it('sets SRTT = R and RTTVAR = R / 2 on the first sample, then smooths with alpha 1/8 and beta 1/4', () => {
    const { session } = recorded();
    session.join('ash');
    session.sample('ash', 40);
    expect(session.estimate('ash')).toEqual({ latency_ms: 40, jitter_ms: 20, samples: 1 }); // RFC 6298 (2.2)
    session.sample('ash', 80);
    // RFC 6298 (2.3): RTTVAR <- 3/4 x 20 + 1/4 x |40 - 80| = 25; SRTT <- 7/8 x 40 + 1/8 x 80 = 45.
    expect(session.estimate('ash')).toEqual({ latency_ms: 45, jitter_ms: 25, samples: 2 });
  });

  it('ignores, with a warning and a false, samples of unknown players and values that are not latencies', () => {
    const warnings: string[] = [];
    const { session } = recorded(undefined, { logger: { info: () => {}, warn: (_, message) => warnings.push(message), error: () => {} } });
    session.join('ash');
    expect([session.sample('nobody', 20), session.sample('ash', -1), session.sample('ash', Number.NaN), session.sample('ash', 1e9)]).toEqual([false, false, false, false]);
    expect(session.estimate('ash')).toBeNull();
    expect(warnings).toHaveLength(4);
  });
});

describe('MatchSession safe points', () => {
  it('moves the scales to the answer balanceLobby gives the smoothed latencies, at a safe point only', () => {
    const rules = rulesOf({ scale_cap: 1.5 });
    const { session } = recorded(rules, { maxStep: 1 });
    session.join('ash', 'red');
    session.join('birch', 'blue');
    for (const [id, latency] of [['ash', 20], ['birch', 90], ['ash', 24], ['birch', 110]] as const) session.sample(id, latency);
    expect(session.scales()).toEqual({ ash: 1, birch: 1 });
    const event = session.safePoint(1000);
    const reference = balanceLobby({ format: 'lagparity/lobby@1', ...match, players: [{ id: 'ash', team: 'red', latency_ms: 20.5 }, { id: 'birch', team: 'blue', latency_ms: 92.5 }] }, model, rules);
    if (reference.status === 'rejected') throw new Error('rejected');
    expect(event.decision).toBe('reached');
    expect(session.scales()).toEqual(Object.fromEntries(reference.players.map((player) => [player.id, player.scale]))); // balanceLobby at SRTT 20.5 and 92.5 ms
  });

  it('keeps the scales within the deadband and moves at most maxStep, all together', () => {
    const previous = { ash: 1, birch: 1.1 };
    expect(moveScales(previous, { ash: 1.01, birch: 1.11 }, 0.02, 0.1, null)).toEqual({ applied: previous, decision: 'kept' });
    const moved = moveScales(previous, { ash: 1, birch: 1.5 }, 0.02, 0.1, null);
    expect(moved.decision).toBe('moved');
    expect(moved.applied.birch).toBeCloseTo(1.2, 15); // 1.1 + (0.1 / 0.4) x 0.4
    expect(moveScales(previous, { ash: 1.2, birch: 1.5 }, 0.02, 0.1, null).applied.ash).toBeCloseTo(1.05, 15); // the same fraction, 1/4
    // On a grid, rounded towards the previous value.
    expect(moveScales(previous, { ash: 1, birch: 1.5 }, 0.02, 0.13, 0.05).applied.birch).toBeCloseTo(1.2, 12);
  });

  it('sets the scales outright at the first safe point, then moves them at most maxStep a safe point', () => {
    const rules = rulesOf({ scale_cap: 1.8 });
    const { session } = recorded(rules, { maxStep: 0.05, deadband: 0.01 });
    session.join('ash');
    session.join('birch');
    expect(session.safePoint(0)).toMatchObject({ status: 'no_players', decision: 'kept' }); // nobody measured yet: not the first
    session.sample('ash', 15);
    session.sample('birch', 60);
    const first = session.safePoint(1);
    expect(first.decision).toBe('reached');
    expect(session.scales()).toEqual(first.answer);
    for (let index = 0; index < 40; index += 1) session.sample('birch', 200); // birch's path gets much worse
    const before = session.scales();
    const second = session.safePoint(2);
    expect(second.decision).toBe('moved');
    const moves = Object.keys(before).map((id) => Math.abs((second.applied[id] as number) - (before[id] as number)));
    expect(Math.max(...moves)).toBeCloseTo(0.05, 12);
  });

  it('refuses a maxStep below the quantisation step, and ids or teams that are not names', () => {
    expect(() => recorded(rulesOf({ scale_cap: 1.5, quantisation_step: 0.05 }), { maxStep: 0.04 })).toThrow(/maxStep.*quantisation_step \(0.05\)/);
    const warnings: string[] = [];
    const { session, events } = recorded(undefined, { logger: { info: () => {}, warn: (_, message) => warnings.push(message), error: () => {} } });
    expect([session.join(''), session.join('x'.repeat(129)), session.join('ash', ''), session.leave('ash'), session.join('ash', 'red')]).toEqual([false, false, false, false, true]);
    expect(events.map((event) => event.type)).toEqual(['start', 'join']);
    expect(warnings).toHaveLength(4);
  });

  it('keeps a leaving player\'s scale, leaves them out of the lobby, and restarts their estimate on reconnect', () => {
    const { session, events } = recorded(rulesOf({ scale_cap: 1.5 }), { maxStep: 1 });
    session.join('ash');
    session.join('birch');
    session.sample('ash', 20);
    session.sample('birch', 120);
    session.safePoint(1);
    const birch = session.scale('birch');
    session.leave('birch', 2);
    const without = session.safePoint(3);
    expect(without.estimates.map((estimate) => estimate.id)).toEqual(['ash']);
    expect(session.scale('birch')).toBe(birch);
    session.join('birch', null, 4);
    expect(session.estimate('birch')).toBeNull();
    expect(events.filter((event) => event.type === 'join').map((event) => (event.type === 'join' ? event.reconnect : null))).toEqual([false, false, true]);
  });
});

describe('replaySession()', () => {
  it('property (60 seeded matches): a replay of the log reproduces every scale of the live session bit for bit', () => {
    const operation = fc.oneof(
      fc.record({ kind: fc.constant('join' as const), player: fc.integer({ min: 0, max: 7 }) }),
      fc.record({ kind: fc.constant('leave' as const), player: fc.integer({ min: 0, max: 7 }) }),
      fc.record({ kind: fc.constant('samples' as const), player: fc.integer({ min: 0, max: 7 }), base: fc.integer({ min: 5, max: 250 }), count: fc.integer({ min: 1, max: 40 }) }),
      fc.record({ kind: fc.constant('safe' as const) }),
    );
    const rulesSpace = fc.constantFrom(rulesOf({ scale_cap: 1.5 }), rulesOf({ scale_cap: 1.5, quantisation_step: 0.05, max_scale_ratio: 1.3 }), rulesOf({ scale_cap: 2, assistance_budget: 0.6, latency_limit_ms: 200 }));
    fc.assert(
      fc.property(rulesSpace, fc.array(operation, { minLength: 5, maxLength: 80 }), fc.double({ min: 0, max: 0.05, noNaN: true }), fc.double({ min: 0.05, max: 0.5, noNaN: true }), (rules, operations, deadband, maxStep) => {
        const { session, events } = recorded(rules, { deadband, maxStep });
        const live: Record<string, number>[] = [];
        let clock = 0;
        for (const step of operations) {
          clock += 1;
          const id = `player-${'player' in step ? step.player : 0}`;
          if (step.kind === 'join') session.join(id, step.player % 2 === 0 ? 'red' : null, clock);
          else if (step.kind === 'leave') session.leave(id, clock);
          else if (step.kind === 'samples') for (let index = 0; index < step.count; index += 1) session.sample(id, step.base + ((index * 37) % 23));
          else {
            session.safePoint(clock);
            live.push(session.scales());
          }
        }
        const text = events.map((event) => JSON.stringify(event)).join('\n');
        const parsed = parseSessionLog(text);
        if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
        const replay = replaySession(parsed.value, model);
        if (!replay.ok) throw new Error(JSON.stringify(replay.issues));
        expect(replay.value).toMatchObject({ status: 'reproduced', safe_points: live.length, difference: null });
        const applied = parsed.value.filter((event) => event.type === 'safe_point').map((event) => (event.type === 'safe_point' ? event.applied : {}));
        expect(applied).toEqual(live);
      }),
      { seed: 1604, numRuns: 60 },
    );
  });

  it('finds a changed scale and names the safe point and the player', () => {
    const { session, events } = recorded(rulesOf({ scale_cap: 1.5 }), { maxStep: 1 });
    session.join('ash');
    session.join('birch');
    session.sample('ash', 20);
    session.sample('birch', 150);
    session.safePoint(7);
    const tampered = events.map((event) => (event.type === 'safe_point' ? { ...event, applied: { ...event.applied, birch: 1.2345 } } : event));
    const replay = replaySession(tampered, model);
    expect(replay.ok && replay.value).toMatchObject({ status: 'differs', difference: { at: 7, field: 'applied.birch', logged: 1.2345 } });
  });

  it('refuses another model, and a log that does not start with a start event, naming the line', () => {
    const { events } = recorded();
    const other = compileModel({ ...(readJson(join(MATCHES, 'model.json')) as Record<string, unknown>), link: 'probit' });
    if (!other.ok) throw new Error('model');
    expect(replaySession(events, other.value)).toMatchObject({ ok: false, issues: [{ code: 'model_mismatch' }] });
    expect(parseSessionLog('{"type":"join","at":0,"id":"a","team":null,"reconnect":false}\nnot json\n', 'match.jsonl')).toMatchObject({ ok: false, issues: [{ code: 'invalid_json', location: 'match.jsonl:2' }] });
    expect(parseSessionLog('{"type":"join","at":0,"id":"a","team":null,"reconnect":false}\n', 'match.jsonl')).toMatchObject({ ok: false, issues: [{ code: 'invalid_log', location: 'match.jsonl:1' }] });
  });

  it('names the line and the field of an event that is not well formed, and never throws', () => {
    const { session, events } = recorded();
    session.join('ash');
    session.sample('ash', 30);
    session.safePoint(1);
    const lines = events.map((event) => JSON.stringify(event));
    const broken = [...lines.slice(0, 2), lines[2]?.replace('"latency_ms":30', '"latency_ms":-4')].join('\n');
    expect(parseSessionLog(broken, 'match.jsonl')).toMatchObject({ ok: false, issues: [{ code: 'out_of_range', location: 'match.jsonl:3:estimates[0].latency_ms' }] });
    expect(parseSessionLog('{"type":"pause","at":1}', 'match.jsonl')).toMatchObject({ ok: false, issues: [{ location: expect.stringMatching(/^match\.jsonl:1/) }] });
    expect(parseSessionLog([...lines, lines[0]].join('\n'), 'match.jsonl')).toMatchObject({ ok: false, issues: [{ code: 'invalid_log', location: 'match.jsonl:4' }] });
    fc.assert(
      fc.property(fc.string(), fc.nat({ max: lines.join('\n').length }), (noise, position) => {
        const text = lines.join('\n');
        const result = parseSessionLog(text.slice(0, position) + noise + text.slice(position), 'match.jsonl');
        if (result.ok) expect(replaySession(result.value, model).ok).toBeTypeOf('boolean');
      }),
      { seed: 16, numRuns: 300 },
    );
  });

  // Before: a key twice kept its last value, and a `__proto__` key became the prototype of the
  // parsed rules (whose fields zod then read through it): the log was read two ways.
  it('refuses a line with a key twice, a prototype key or nesting beyond 64, naming the line', () => {
    const { session, events } = recorded();
    session.join('ash');
    const [start, join] = events.map((event) => JSON.stringify(event)) as [string, string];
    const cases: [string, string, string][] = [
      [join.replace('"id":"ash"', '"id":"ash","id":"birch"'), 'duplicate_key', 'match.jsonl:2:id'],
      [start.replace('"rules":{', '"rules":{"__proto__":{"scale_cap":9},'), 'forbidden_key', 'match.jsonl:1:rules.__proto__'],
      [start.replace('"rules":{', '"rules":{"c\\u006fnstructor":1,'), 'forbidden_key', 'match.jsonl:1:rules.constructor'],
      [join.replace('"at":0', `"at":${'['.repeat(100)}${']'.repeat(100)}`), 'too_deep', 'match.jsonl:2:'],
    ];
    for (const [line, code, location] of cases) {
      const text = line.startsWith('{"type":"start"') ? `${line}\n${join}` : `${start}\n${line}`;
      const result = parseSessionLog(text, 'match.jsonl');
      expect(result.ok || result.issues[0]).toMatchObject({ code, location: expect.stringContaining(location) });
    }
  });

  it('throws a TypeError naming the argument when the text is not a string', () => {
    expect(() => parseSessionLog(42 as unknown as string)).toThrow(/`text` requires a string/);
  });
});
