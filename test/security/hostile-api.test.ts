/**
 * Hostile values handed to the module API by code that skipped validation
 * (issue 15): a table of cases, each with what it must get. The rule
 * (docs/security.md, "Choices"): data that is wrong is a result - `rejected`
 * with an issue code, or a `safeParse*` / `compile*` failure - never NaN in
 * a result and never a TypeError from inside; options that are wrong (and
 * arguments of the wrong type, such as a `text` that is not a string) throw a
 * TypeError or RangeError at the entry, naming the argument.
 *
 * Each row: `name`, `run` (the call), and `expect`, one of
 *   { status, code? }  a result whose `status` is this, with an issue `code`
 *                      among its issues (or its warnings, for an audit);
 *   { failure: code }  a Result with ok false and an issue of this code;
 *   { ok: true }       a Result with ok true;
 *   { value }          a plain return value (MatchSession's booleans);
 *   { throws, message } the documented throw: its class and a message naming
 *                      the argument.
 * Every returned value is also searched for NaN (objects, arrays, typed arrays).
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import {
  LagparityInputError,
  MatchSession,
  auditLobbies,
  auditLobby,
  balanceLobby,
  chooseServer,
  compileModel,
  compileRules,
  defaultRules,
  lobbyOnServer,
  parseJsonText,
  parseSessionLog,
  rankLobbies,
  replaySession,
  safeParseLobby,
  safeParsePlan,
  safeParseServerLobby,
  solveSampledScalesInto,
  solveScalesInto,
} from '../../src/index.js';
import type { CompiledModel, CompiledRules, LobbyFile, ServerLobbyFile } from '../../src/index.js';
import { ROOT } from '../helpers/demo.js';

const FOLDER = join(ROOT, 'test', 'fixtures', 'hostile');
const read = (name: string): Record<string, unknown> => JSON.parse(readFileSync(join(FOLDER, `support-${name}`), 'utf8')) as Record<string, unknown>;
const lobbyDocument = read('lobby.json');
const serverDocument = read('lobby-servers.json');
const modelDocument = read('model.json');
const numericDocument = read('numeric.model.json');
const rulesDocument = read('rules.json');
const planDocument = read('plan.json');

const must = <T>(result: { ok: true; value: T } | { ok: false }): T => {
  if (!result.ok) throw new Error('a support document does not parse');
  return result.value;
};
const model = must(compileModel(modelDocument));
const numericModel = must(compileModel(numericDocument));
const rules = must(compileRules(rulesDocument));
const lobby = must(safeParseLobby(lobbyDocument));
const serverLobby = must(safeParseServerLobby(serverDocument));

/** A fresh, mutable copy of a support document (the parsed ones are frozen). */
const copy = (value: unknown): Record<string, unknown> => structuredClone(value) as Record<string, unknown>;
const copyAs = <T>(value: unknown): T => structuredClone(value) as T;
/** The lobby with one player's field replaced. */
function withPlayer(index: number, field: string, value: unknown): LobbyFile {
  const document = copyAs<{ players: Record<string, unknown>[] }>(lobbyDocument);
  (document.players[index] as Record<string, unknown>)[field] = value;
  return document as unknown as LobbyFile;
}
const boom = (): never => {
  throw new Error('boom');
};
/** A Proxy of `target` that throws on the one trap named. */
const trap = <T extends object>(target: T, name: keyof ProxyHandler<T>): T => new Proxy(target, { [name]: boom });
/** `target` with a getter for `key` that throws. */
/** An array whose `length` throws when read. */
const lengthThrows = (items: unknown[]): unknown[] => new Proxy(items, { get: (target, key) => (key === 'length' ? boom() : Reflect.get(target, key)) });
function throwingGetter<T extends object>(target: T, key: string): T {
  Object.defineProperty(target, key, { get: boom, enumerable: true, configurable: true });
  return target;
}
const as = <T>(value: unknown): T => value as T;

type Expectation =
  | { readonly status: string; readonly code?: string }
  | { readonly failure: string }
  | { readonly ok: true }
  | { readonly value: unknown }
  | { readonly throws: new (...args: never[]) => Error; readonly message: RegExp };

interface ApiCase {
  readonly name: string;
  readonly run: () => unknown;
  readonly expect: Expectation;
}

const uncompiledModel = as<CompiledModel>(modelDocument);
const uncompiledRules = as<CompiledRules>(rulesDocument);
const session = (): MatchSession => new MatchSession(model, rules, { match_id: 'tidewater-api', attribute: 'hit_area', difficulty: 'veteran' });

const cases: ApiCase[] = [
  // balanceLobby: data problems are rejected results with a code.
  { name: 'balanceLobby: a latency of Infinity', run: () => balanceLobby(withPlayer(0, 'latency_ms', Infinity), model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: a latency of NaN', run: () => balanceLobby(withPlayer(0, 'latency_ms', NaN), model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: a latency of -Infinity', run: () => balanceLobby(withPlayer(1, 'latency_ms', -Infinity), model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: a NaN among the samples', run: () => balanceLobby(withPlayer(2, 'latency_ms', [20, NaN, 30]), model, rules), expect: { status: 'rejected', code: 'wrong_type' } },
  { name: 'balanceLobby: a latency of -50 ms', run: () => balanceLobby(withPlayer(2, 'latency_ms', -50), model, rules), expect: { status: 'rejected', code: 'out_of_range' } },
  { name: 'balanceLobby: a latency given as the string "20"', run: () => balanceLobby(withPlayer(0, 'latency_ms', '20'), model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: an empty player list', run: () => balanceLobby({ ...copyAs<LobbyFile>(lobbyDocument), players: [] }, model, rules), expect: { status: 'rejected', code: 'out_of_range' } },
  { name: 'balanceLobby: no players field', run: () => balanceLobby(as<LobbyFile>({ ...copy(lobbyDocument), players: undefined }), model, rules), expect: { status: 'rejected', code: 'missing_field' } },
  { name: 'balanceLobby: players as an object', run: () => balanceLobby(as<LobbyFile>({ ...copy(lobbyDocument), players: { a: 1 } }), model, rules), expect: { status: 'rejected', code: 'wrong_type' } },
  { name: 'balanceLobby: a null lobby', run: () => balanceLobby(as<LobbyFile>(null), model, rules), expect: { status: 'rejected', code: 'wrong_type' } },
  { name: 'balanceLobby: an undefined lobby', run: () => balanceLobby(as<LobbyFile>(undefined), model, rules), expect: { status: 'rejected', code: 'missing_field' } },
  { name: 'balanceLobby: 257 players', run: () => balanceLobby({ ...copyAs<LobbyFile>(lobbyDocument), players: Array.from({ length: 257 }, (_, index) => ({ id: `p${index}`, latency_ms: 30 })) }, model, rules), expect: { status: 'rejected', code: 'out_of_range' } },
  { name: 'balanceLobby: a raw model document (not compiled)', run: () => balanceLobby(lobby, uncompiledModel, rules), expect: { status: 'rejected', code: 'uncompiled_model' } },
  { name: 'balanceLobby: uncompiled rules (the raw document)', run: () => balanceLobby(lobby, model, uncompiledRules), expect: { status: 'rejected', code: 'uncompiled_rules' } },
  { name: 'balanceLobby: a copy of compiled rules (spread)', run: () => balanceLobby(lobby, model, as<CompiledRules>({ ...defaultRules() })), expect: { status: 'rejected', code: 'uncompiled_rules' } },
  { name: 'balanceLobby: a null model', run: () => balanceLobby(lobby, as<CompiledModel>(null), rules), expect: { status: 'rejected', code: 'uncompiled_model' } },
  { name: 'balanceLobby: a Proxy around the compiled model', run: () => balanceLobby(lobby, new Proxy(model, {}), rules), expect: { status: 'rejected', code: 'uncompiled_model' } },
  { name: 'balanceLobby: a players getter that throws', run: () => balanceLobby(throwingGetter(copyAs<LobbyFile>(lobbyDocument), 'players'), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: "balanceLobby: a player's id getter that throws", run: () => balanceLobby(as<LobbyFile>({ ...copy(lobbyDocument), players: [throwingGetter({ latency_ms: 20 }, 'id'), { id: 'b', latency_ms: 30 }] }), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'balanceLobby: a Proxy lobby whose get throws', run: () => balanceLobby(trap(copyAs<LobbyFile>(lobbyDocument), 'get'), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'balanceLobby: a Proxy lobby whose ownKeys throws', run: () => balanceLobby(trap(copyAs<LobbyFile>(lobbyDocument), 'ownKeys'), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'balanceLobby: a Proxy lobby whose getPrototypeOf throws', run: () => balanceLobby(trap(copyAs<LobbyFile>(lobbyDocument), 'getPrototypeOf'), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'balanceLobby: a players array whose length throws', run: () => balanceLobby(as<LobbyFile>({ ...copy(lobbyDocument), players: lengthThrows(copyAs<unknown[]>(lobbyDocument.players)) }), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'balanceLobby: a players array Proxy whose get throws', run: () => balanceLobby(as<LobbyFile>({ ...copy(lobbyDocument), players: trap(copyAs<unknown[]>(lobbyDocument.players), 'get') }), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'balanceLobby: a lobby that holds itself (a cycle)', run: () => {
    const document = copyAs<Record<string, unknown>>(lobbyDocument);
    (document.players as Record<string, unknown>[]).push(document);
    return balanceLobby(as<LobbyFile>(document), model, rules);
  }, expect: { status: 'rejected' } },
  { name: 'balanceLobby: a NaN difficulty on a numeric model', run: () => balanceLobby({ ...copyAs<LobbyFile>(lobbyDocument), difficulty: NaN }, numericModel, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: a difficulty of Infinity on a numeric model', run: () => balanceLobby({ ...copyAs<LobbyFile>(lobbyDocument), difficulty: Infinity }, numericModel, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: a difficulty of 1e308 on a numeric model (flagged, then unsolvable)', run: () => balanceLobby({ ...copyAs<LobbyFile>(lobbyDocument), difficulty: 1e308 }, numericModel, rules), expect: { status: 'rejected', code: 'target_out_of_range' } },
  { name: 'balanceLobby: a difficulty object', run: () => balanceLobby(as<LobbyFile>({ ...copy(lobbyDocument), difficulty: { level: 'veteran' } }), model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: ids that name Object.prototype members', run: () => balanceLobby({ ...copyAs<LobbyFile>(lobbyDocument), players: ['__proto__', 'constructor', 'toString', 'hasOwnProperty'].map((id, index) => ({ id, latency_ms: 20 + 30 * index })) }, model, rules), expect: { status: 'balanced' } },
  { name: 'balanceLobby: a latency getter that changes between reads (validated copy used)', run: () => {
    let reads = 0;
    const player = { id: 'shifty', get latency_ms() {
      reads += 1;
      return reads === 1 ? 30 : NaN;
    } };
    return balanceLobby(as<LobbyFile>({ ...copy(lobbyDocument), players: [player, { id: 'b', latency_ms: 60 }] }), model, rules);
  }, expect: { status: 'balanced' } },
  { name: 'balanceLobby: a BigInt latency', run: () => balanceLobby(withPlayer(0, 'latency_ms', 20n), model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'balanceLobby: a Symbol id', run: () => balanceLobby(withPlayer(0, 'id', Symbol('x')), model, rules), expect: { status: 'rejected', code: 'wrong_type' } },
  // balanceLobby: options errors throw at the entry.
  { name: 'balanceLobby: views.uncertainty.draws 0 throws', run: () => balanceLobby(lobby, model, rules, { views: { uncertainty: { draws: 0 } } }), expect: { throws: RangeError, message: /`options\.views\.uncertainty\.draws` requires a whole number from 1 to 100000, got 0/ } },
  { name: 'balanceLobby: views.uncertainty.draws 1e9 throws', run: () => balanceLobby(lobby, model, rules, { views: { uncertainty: { draws: 1e9 } } }), expect: { throws: RangeError, message: /`options\.views\.uncertainty\.draws`/ } },
  { name: 'balanceLobby: views.uncertainty.seed 1.5 throws', run: () => balanceLobby(lobby, model, rules, { views: { uncertainty: { seed: 1.5 } } }), expect: { throws: RangeError, message: /`options\.views\.uncertainty\.seed`/ } },
  { name: 'balanceLobby: views.uncertainty.random not a function throws', run: () => balanceLobby(lobby, model, rules, as({ views: { uncertainty: { random: 'dice' } } })), expect: { throws: TypeError, message: /`options\.views\.uncertainty\.random`/ } },
  { name: 'balanceLobby: views.duel "yes" throws', run: () => balanceLobby(lobby, model, rules, as({ views: { duel: 'yes' } })), expect: { throws: TypeError, message: /`options\.views\.duel` requires true or false/ } },
  { name: 'balanceLobby: options null throws', run: () => balanceLobby(lobby, model, rules, as(null)), expect: { throws: TypeError, message: /`options` requires an object/ } },

  { name: 'balanceLobby: a latency nested 1,000,000 arrays deep (a value, not text)', run: () => {
    let deep: unknown = 20;
    for (let level = 0; level < 1_000_000; level += 1) deep = [deep];
    return balanceLobby(withPlayer(0, 'latency_ms', deep), model, rules);
  }, expect: { status: 'rejected', code: 'wrong_type' } },
  { name: 'balanceLobby: an unknown field nested 1,000,000 objects deep', run: () => {
    let deep: unknown = 1;
    for (let level = 0; level < 1_000_000; level += 1) deep = { a: deep };
    return balanceLobby(withPlayer(0, 'extra', deep), model, rules);
  }, expect: { status: 'rejected', code: 'unknown_field' } },

  // compileModel / compileRules: failures with a code, never an exception out of them.
  { name: 'compileModel: a coefficients getter that throws', run: () => compileModel(throwingGetter(copy(modelDocument), 'coefficients')), expect: { failure: 'unreadable_input' } },
  { name: 'compileModel: a covariance row that throws when read', run: () => {
    const document = copyAs<{ coefficients: { covariance: unknown[] } }>(modelDocument);
    document.coefficients.covariance[2] = trap(copyAs<unknown[]>(document.coefficients.covariance[2]), 'get');
    return compileModel(document);
  }, expect: { failure: 'unreadable_input' } },
  { name: 'compileModel: an estimates array whose length throws', run: () => {
    const document = copyAs<{ coefficients: { estimates: unknown[] } }>(modelDocument);
    document.coefficients.estimates = lengthThrows([...document.coefficients.estimates]);
    return compileModel(document);
  }, expect: { failure: 'unreadable_input' } },
  { name: 'compileModel: a Proxy whose getPrototypeOf throws', run: () => compileModel(trap(copy(modelDocument), 'getPrototypeOf')), expect: { failure: 'unreadable_input' } },
  { name: 'compileModel: a Proxy whose ownKeys throws', run: () => compileModel(trap(copy(modelDocument), 'ownKeys')), expect: { failure: 'unreadable_input' } },
  { name: 'compileModel: a NaN estimate', run: () => {
    const document = copyAs<{ coefficients: { estimates: number[] } }>(modelDocument);
    document.coefficients.estimates[1] = NaN;
    return compileModel(document);
  }, expect: { failure: 'wrong_type' } },
  { name: 'compileModel: an Infinity covariance entry', run: () => {
    const document = copyAs<{ coefficients: { covariance: number[][] } }>(modelDocument);
    (document.coefficients.covariance[0] as number[])[0] = Infinity;
    return compileModel(document);
  }, expect: { failure: 'wrong_type' } },
  { name: 'compileModel: a covariance entry of 1e101', run: () => {
    const document = copyAs<{ coefficients: { covariance: number[][] } }>(modelDocument);
    (document.coefficients.covariance[0] as number[])[0] = 1e101;
    return compileModel(document);
  }, expect: { failure: 'out_of_range' } },
  { name: 'compileModel: a rank-one covariance near 1e308', run: () => {
    const document = copyAs<{ coefficients: { covariance: number[][] } }>(modelDocument);
    const v = [1.3e154, -1.3e154, 1.3e154, 1.3e154, -1.3e154, 1.3e154];
    document.coefficients.covariance = v.map((a) => v.map((b) => a * b));
    return compileModel(document);
  }, expect: { failure: 'out_of_range' } },
  { name: 'compileModel: a term named twice', run: () => compileModel({ ...copy(modelDocument), terms: ['intercept', 'latency', 'log_scale', 'difficulty', 'latency'] }), expect: { failure: 'duplicate_term' } },
  { name: 'compileModel: null', run: () => compileModel(null), expect: { failure: 'wrong_type' } },
  { name: 'compileModel: a rules document', run: () => compileModel(copy(rulesDocument)), expect: { failure: 'wrong_kind' } },
  { name: 'compileModel: its own compiled model', run: () => compileModel(model), expect: { failure: 'invalid_value' } },
  { name: 'compileModel: a format tag given as an object', run: () => compileModel({ ...copy(modelDocument), format: { tag: 'lagparity/model@1' } }), expect: { failure: 'invalid_value' } },
  { name: 'compileRules: a scale_cap getter that throws', run: () => compileRules(throwingGetter(copy(rulesDocument), 'scale_cap')), expect: { failure: 'unreadable_input' } },
  { name: 'compileRules: a Proxy whose ownKeys throws', run: () => compileRules(trap(copy(rulesDocument), 'ownKeys')), expect: { failure: 'unreadable_input' } },
  { name: 'compileRules: scale_cap NaN', run: () => compileRules({ ...copy(rulesDocument), scale_cap: NaN }), expect: { failure: 'wrong_type' } },
  { name: 'compileRules: scale_cap Infinity', run: () => compileRules({ ...copy(rulesDocument), scale_cap: Infinity }), expect: { failure: 'wrong_type' } },
  { name: 'compileRules: accepted_gap 2 (the range is said)', run: () => compileRules({ ...copy(rulesDocument), accepted_gap: 2 }), expect: { failure: 'out_of_range' } },
  { name: 'compileRules: a quantisation step of 1e-300', run: () => compileRules({ ...copy(rulesDocument), quantisation_step: 1e-300 }), expect: { failure: 'out_of_range' } },
  { name: 'compileRules: a model document', run: () => compileRules(copy(modelDocument)), expect: { failure: 'wrong_kind' } },
  { name: 'compileRules: a misspelt key', run: () => compileRules({ ...copy(rulesDocument), scale_cpa: 2 }), expect: { failure: 'unknown_field' } },
  { name: 'compileRules: a __proto__ own key (from JSON.parse)', run: () => compileRules({ ...copy(rulesDocument), ...(JSON.parse('{"__proto__": {"scale_cap": 9}}') as object) }), expect: { failure: 'unknown_field' } },
  { name: 'defaultRules: an override of NaN throws', run: () => defaultRules({ scale_cap: NaN }), expect: { throws: RangeError, message: /`scale_cap` requires a finite number/ } },

  // safeParse*: failures, never exceptions.
  { name: 'safeParseLobby: a Proxy whose get throws', run: () => safeParseLobby(trap(copy(lobbyDocument), 'get')), expect: { failure: 'unreadable_input' } },
  { name: 'safeParseLobby: an id of 10,000 characters', run: () => safeParseLobby(withPlayer(0, 'id', 'x'.repeat(10_000))), expect: { failure: 'out_of_range' } },
  { name: 'safeParseLobby: a __proto__ own key in a player (from JSON.parse)', run: () => safeParseLobby({ ...copy(lobbyDocument), players: [JSON.parse('{"id": "a", "latency_ms": 20, "__proto__": {"latency_ms": 1}}'), { id: 'b', latency_ms: 30 }] }), expect: { failure: 'unknown_field' } },
  { name: 'safeParseLobby: a server-choice lobby', run: () => safeParseLobby(copy(serverDocument)), expect: { failure: 'wrong_kind' } },
  { name: 'safeParseServerLobby: a Proxy whose ownKeys throws', run: () => safeParseServerLobby(trap(copy(serverDocument), 'ownKeys')), expect: { failure: 'unreadable_input' } },
  { name: 'safeParseServerLobby: a server named toString with no latencies', run: () => safeParseServerLobby({ ...copy(serverDocument), servers: ['quay-north', 'toString'] }), expect: { failure: 'missing_server_latency' } },
  { name: 'safeParsePlan: a getter that throws', run: () => safeParsePlan(throwingGetter(copy(planDocument), 'latency_ms')), expect: { failure: 'unreadable_input' } },
  { name: 'safeParsePlan: a model document', run: () => safeParsePlan(copy(modelDocument)), expect: { failure: 'wrong_kind' } },

  // parseJsonText and parseSessionLog.
  { name: 'parseJsonText: 10,000 nested arrays', run: () => parseJsonText('['.repeat(10_000) + ']'.repeat(10_000), 'deep.json'), expect: { failure: 'too_deep' } },
  { name: 'parseJsonText: 10,000 unclosed objects', run: () => parseJsonText('{"a":'.repeat(10_000), 'deep.json'), expect: { failure: 'too_deep' } },
  { name: 'parseJsonText: a key twice', run: () => parseJsonText('{"scale_cap": 1.5, "scale_cap": 3}', 'rules.json'), expect: { failure: 'duplicate_key' } },
  { name: 'parseJsonText: a lone surrogate escape', run: () => parseJsonText('{"id": "a\\udc00"}', 'lobby.json'), expect: { failure: 'lone_surrogate' } },
  { name: 'parseJsonText: a __proto__ key spelt with an escape', run: () => parseJsonText('{"\\u005f_proto__": {}}', 'lobby.json'), expect: { failure: 'forbidden_key' } },
  { name: 'parseJsonText: text above the byte limit', run: () => parseJsonText(`"${'x'.repeat(100)}"`, 'big.json', 50), expect: { failure: 'too_large' } },
  { name: 'parseJsonText: a comment', run: () => parseJsonText('{"a": 1 // one\n}', 'rules.json'), expect: { failure: 'invalid_json' } },
  { name: 'parseJsonText: a number instead of text throws', run: () => parseJsonText(as<string>(42), 'x.json'), expect: { throws: TypeError, message: /`text` requires a string/ } },
  { name: 'parseSessionLog: a Buffer instead of text throws', run: () => parseSessionLog(as<string>(Buffer.from('{}'))), expect: { throws: TypeError, message: /`text` requires a string/ } },
  { name: 'parseSessionLog: a line with NaN', run: () => parseSessionLog('{"type":"leave","at":NaN,"id":"a"}\n'), expect: { failure: 'invalid_json' } },

  // rankLobbies.
  { name: 'rankLobbies: a candidate naming an id not in the pool', run: () => rankLobbies(lobby, [['kestrelby', 'nobody']], model, rules), expect: { status: 'rejected', code: 'unknown_player' } },
  { name: 'rankLobbies: a pool latency of Infinity', run: () => rankLobbies(withPlayer(0, 'latency_ms', Infinity), [['kestrelby', 'dunmoor']], model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'rankLobbies: uncompiled rules', run: () => rankLobbies(lobby, [['kestrelby', 'dunmoor']], model, uncompiledRules), expect: { status: 'rejected', code: 'uncompiled_rules' } },
  { name: 'rankLobbies: candidates that are not a list', run: () => rankLobbies(lobby, as({ 0: ['kestrelby'] }), model, rules), expect: { status: 'rejected', code: 'invalid_candidates' } },
  { name: 'rankLobbies: a candidate id that is not a string', run: () => rankLobbies(lobby, [as<string[]>([{ toString: boom }])], model, rules), expect: { status: 'rejected', code: 'unknown_player' } },
  { name: 'rankLobbies: a candidate Proxy whose get throws', run: () => rankLobbies(lobby, [trap(['kestrelby', 'dunmoor'], 'get')], model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'rankLobbies: views.uncertainty.draws 0 throws', run: () => rankLobbies(lobby, [['kestrelby', 'dunmoor']], model, rules, { views: { uncertainty: { draws: 0 } } }), expect: { throws: RangeError, message: /`options\.views\.uncertainty\.draws`/ } },

  // chooseServer and lobbyOnServer.
  { name: 'chooseServer: a latency of Infinity to one server', run: () => {
    const document = copyAs<{ players: { latency_ms: Record<string, number> }[] }>(serverDocument);
    (document.players[0] as { latency_ms: Record<string, number> }).latency_ms['quay-north'] = Infinity;
    return chooseServer(as<ServerLobbyFile>(document), model, rules);
  }, expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'chooseServer: a raw model document', run: () => chooseServer(serverLobby, uncompiledModel, rules), expect: { status: 'rejected', code: 'uncompiled_model' } },
  { name: 'chooseServer: a Proxy lobby whose get throws', run: () => chooseServer(trap(copyAs<ServerLobbyFile>(serverDocument), 'get'), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'chooseServer: a plain lobby', run: () => chooseServer(as<ServerLobbyFile>(lobby), model, rules), expect: { status: 'rejected', code: 'wrong_kind' } },
  { name: 'chooseServer: views.uncertainty.draws 0 throws', run: () => chooseServer(serverLobby, model, rules, { views: { uncertainty: { draws: 0 } } }), expect: { throws: RangeError, message: /`options\.views\.uncertainty\.draws`/ } },
  { name: 'lobbyOnServer: a server the lobby does not list throws', run: () => lobbyOnServer(serverLobby, 'toString'), expect: { throws: RangeError, message: /`server` requires one of the lobby's servers/ } },

  // The audit: a lobby it cannot judge carries the issue among its warnings.
  { name: 'auditLobby: a NaN latency', run: () => auditLobby(withPlayer(0, 'latency_ms', NaN), model, rules), expect: { status: 'rejected', code: 'invalid_value' } },
  { name: 'auditLobby: uncompiled rules', run: () => auditLobby(lobby, model, uncompiledRules), expect: { status: 'rejected', code: 'uncompiled_rules' } },
  { name: 'auditLobby: a Proxy lobby whose ownKeys throws', run: () => auditLobby(trap(copyAs<LobbyFile>(lobbyDocument), 'ownKeys'), model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'auditLobbies: an entry whose lobby getter throws', run: () => auditLobbies([throwingGetter({ source: 'x.json' } as { lobby: LobbyFile; source: string }, 'lobby')], model, rules), expect: { status: 'rejected', code: 'unreadable_input' } },
  { name: 'auditLobbies: entries that are not a list throw', run: () => auditLobbies(as(lobby), model, rules), expect: { throws: TypeError, message: /`entries` requires a list/ } },

  // MatchSession: the model, rules and match are data (LagparityInputError); options throw RangeError.
  { name: 'MatchSession: a raw model document', run: () => new MatchSession(uncompiledModel, rules, { match_id: 'm', attribute: 'hit_area', difficulty: 'veteran' }), expect: { throws: LagparityInputError, message: /uncompiled_model/ } },
  { name: 'MatchSession: a match whose every read throws', run: () => new MatchSession(model, rules, trap({ match_id: 'm', attribute: 'hit_area' as const, difficulty: 'veteran' }, 'get')), expect: { throws: LagparityInputError, message: /invalid_match/ } },
  { name: 'MatchSession: a NaN difficulty on a numeric model', run: () => new MatchSession(numericModel, rules, { match_id: 'm', attribute: 'hit_area', difficulty: NaN }), expect: { throws: LagparityInputError, message: /difficulty/ } },
  { name: 'MatchSession: options.alpha 0 throws', run: () => new MatchSession(model, rules, { match_id: 'm', attribute: 'hit_area', difficulty: 'veteran' }, { alpha: 0 }), expect: { throws: RangeError, message: /`options\.alpha`/ } },
  { name: 'MatchSession: a NaN sample is ignored', run: () => {
    const match = session();
    match.join('kestrelby');
    return match.sample('kestrelby', NaN);
  }, expect: { value: false } },
  { name: 'MatchSession: an Infinity sample is ignored', run: () => {
    const match = session();
    match.join('kestrelby');
    return match.sample('kestrelby', Infinity);
  }, expect: { value: false } },
  { name: 'MatchSession: a non-string id is refused', run: () => session().join(as<string>({ toString: boom })), expect: { value: false } },
  { name: 'MatchSession: ids naming Object.prototype members balance without NaN', run: () => {
    const match = session();
    ['toString', 'valueOf', 'hasOwnProperty'].forEach((id, index) => {
      match.join(id);
      for (let sample = 0; sample < 5; sample += 1) match.sample(id, 20 + 40 * index);
    });
    match.safePoint(1);
    return match.safePoint(2);
  }, expect: { status: 'balanced' } },

  // Bulk solves: a rejection leaves 1 in every entry of out.
  { name: 'solveScalesInto: a NaN latency', run: () => {
    const out = new Float64Array(3);
    return { result: solveScalesInto(model, 'veteran', Float64Array.of(20, NaN, 40), rules, out), out: [...out] };
  }, expect: { status: 'rejected', code: 'out_of_range' } },
  { name: 'solveScalesInto: a latency of Infinity', run: () => {
    const out = new Float64Array(2);
    return { result: solveScalesInto(model, 'veteran', Float64Array.of(20, Infinity), rules, out), out: [...out] };
  }, expect: { status: 'rejected', code: 'out_of_range' } },
  { name: 'solveScalesInto: a raw model document', run: () => {
    const out = new Float64Array(2);
    return { result: solveScalesInto(uncompiledModel, 'veteran', Float64Array.of(20, 40), rules, out), out: [...out] };
  }, expect: { status: 'rejected', code: 'uncompiled_model' } },
  { name: 'solveScalesInto: a NaN difficulty on a numeric model', run: () => {
    const out = new Float64Array(2);
    return { result: solveScalesInto(numericModel, NaN, Float64Array.of(20, 40), rules, out), out: [...out] };
  }, expect: { status: 'rejected', code: 'wrong_difficulty' } },
  { name: 'solveScalesInto: a plain array throws', run: () => solveScalesInto(model, 'veteran', as<Float64Array>([20, 40]), rules, new Float64Array(2)), expect: { throws: TypeError, message: /`latencies` requires a Float64Array/ } },
  { name: 'solveScalesInto: out of another length throws', run: () => solveScalesInto(model, 'veteran', Float64Array.of(20, 40), rules, new Float64Array(3)), expect: { throws: RangeError, message: /`out` requires the length of `latencies`/ } },
  { name: 'solveSampledScalesInto: a sample of -50 ms', run: () => {
    const out = new Float64Array(2);
    return { result: solveSampledScalesInto(model, 'veteran', Float64Array.of(20, 21, -50, 41), 2, rules, out), out: [...out] };
  }, expect: { status: 'rejected', code: 'out_of_range' } },
  { name: 'solveSampledScalesInto: zero samples per player throws', run: () => solveSampledScalesInto(model, 'veteran', new Float64Array(0), 0, rules, new Float64Array(0)), expect: { throws: RangeError, message: /`samples` requires `samplesPerPlayer`/ } },

  // replaySession.
  { name: 'replaySession: events that are not a list', run: () => replaySession(as({}), model), expect: { failure: 'invalid_log' } },
  { name: 'replaySession: a raw model document', run: () => replaySession(must(parseSessionLog(readFileSync(join(FOLDER, 'support-session.jsonl'), 'utf8'))), uncompiledModel), expect: { failure: 'uncompiled_model' } },
  { name: 'replaySession: hand-made events with a NaN estimate', run: () => {
    const events = copyAs<Record<string, unknown>[]>(must(parseSessionLog(readFileSync(join(FOLDER, 'support-session.jsonl'), 'utf8'))));
    const point = events.find((event) => event.type === 'safe_point') as { estimates: { latency_ms: number }[] };
    (point.estimates[0] as { latency_ms: number }).latency_ms = NaN;
    return replaySession(as(events), model);
  }, expect: { failure: 'wrong_type' } },
  { name: 'replaySession: a Proxy event list whose get throws', run: () => replaySession(trap([] as unknown[], 'get') as never, model), expect: { failure: 'unreadable_input' } },
  { name: 'MatchSession: an id named __proto__ is refused (the log could not hold it as a key)', run: () => session().join('__proto__'), expect: { value: false } },
  { name: 'replaySession: a log whose players are named toString, valueOf and hasOwnProperty reproduces, without NaN', run: () => {
    const recorded: unknown[] = [];
    const match = new MatchSession(model, rules, { match_id: 'tidewater-proto', attribute: 'hit_area', difficulty: 'veteran' }, { record: (event) => recorded.push(JSON.parse(JSON.stringify(event))) });
    ['toString', 'valueOf', 'hasOwnProperty'].forEach((id, index) => {
      match.join(id);
      for (let sample = 0; sample < 5; sample += 1) match.sample(id, 20 + 50 * index + sample);
    });
    match.safePoint(1);
    match.safePoint(2);
    const report = replaySession(as(recorded), model);
    return report.ok ? report.value : report;
  }, expect: { status: 'reproduced' } },
];

/** The first NaN in a value (objects, arrays, typed arrays), as a path, or null. */
function findNaN(value: unknown, path = 'result', seen = new Set<unknown>()): string | null {
  if (typeof value === 'number') return Number.isNaN(value) ? path : null;
  if (value === null || typeof value !== 'object' || seen.has(value)) return null;
  seen.add(value);
  if (ArrayBuffer.isView(value)) {
    const numbers = value as unknown as ArrayLike<number>;
    for (let index = 0; index < numbers.length; index += 1) if (Number.isNaN(numbers[index])) return `${path}[${index}]`;
    return null;
  }
  for (const [key, inner] of Object.entries(value)) {
    const found = findNaN(inner, `${path}.${key}`, seen);
    if (found !== null) return found;
  }
  return null;
}

/** The issues of a result: its `issues` and warnings, a bulk result's, every audited lobby's. */
function issuesOf(result: Record<string, unknown>): { code: string }[] {
  const inner = (result.result ?? result) as Record<string, unknown>;
  const own = [...((inner.issues as { code: string }[] | undefined) ?? []), ...((inner.warnings as { code: string }[] | undefined) ?? [])];
  const lobbies = Array.isArray(inner.lobbies) ? (inner.lobbies as Record<string, unknown>[]).flatMap(issuesOf) : [];
  return [...own, ...lobbies];
}

/** The status of a result; an audit that could not judge (no target, no figures) reads as rejected. */
function statusOf(result: Record<string, unknown>): unknown {
  const inner = (result.result ?? result) as Record<string, unknown>;
  if ('status' in inner) return inner.status;
  if ('lobbies' in inner) return (inner.lobbies as Record<string, unknown>[]).every((entry) => entry.figures === null) ? 'rejected' : 'judged';
  if ('verdict' in inner) return inner.figures === null ? 'rejected' : 'judged';
  return undefined;
}

describe(`hostile values passed to the module API (${cases.length} cases)`, () => {
  it('holds at least 60 cases', () => {
    expect(cases.length).toBeGreaterThanOrEqual(60);
  });

  it.each(cases.map((entry) => [entry.name, entry] as const))('%s', (_name, entry) => {
    const expected = entry.expect;
    if ('throws' in expected) {
      let thrown: unknown = null;
      try {
        entry.run();
      } catch (cause) {
        thrown = cause;
      }
      expect(thrown, 'the documented throw').toBeInstanceOf(expected.throws);
      expect((thrown as Error).message).toMatch(expected.message);
      return;
    }
    const result = entry.run();
    expect(findNaN(result), 'NaN in the result').toBeNull();
    if ('value' in expected) {
      expect(result).toEqual(expected.value);
    } else if ('ok' in expected) {
      expect((result as { ok: boolean }).ok).toBe(true);
    } else if ('failure' in expected) {
      const failed = result as { ok: boolean; issues?: { code: string }[] };
      expect(failed.ok).toBe(false);
      expect(failed.issues?.map((issue) => issue.code)).toContain(expected.failure);
    } else {
      const record = result as Record<string, unknown>;
      expect(statusOf(record), JSON.stringify(issuesOf(record))).toBe(expected.status);
      if (expected.code !== undefined) expect(issuesOf(record).map((issue) => issue.code)).toContain(expected.code);
      if ('out' in record) expect(record.out, 'a rejection leaves 1 in out').toEqual((record.out as number[]).map(() => 1));
    }
  });
});
