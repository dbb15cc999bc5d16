/**
 * The service's request bodies: what each route accepts, validated with the
 * same schemas as the files the command line reads, and the service's limits.
 * A failure is a list of issues `{ code, path, message }` with the CLI's
 * codes; `path` is the field path inside the body (`lobby.players[3].latency_ms`).
 */
import { z } from 'zod';
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';
import { MAX_JSON_BYTES, parseJsonText } from '../formats/json-input.js';
import { lobbyFileSchema } from '../formats/lobby-file.js';
import { safeParseLobby, safeParseServerLobby, type ValidLobby, type ValidServerLobby } from '../formats/lobby.js';
import { MAX_LATENCY_SAMPLES, MAX_PLAYERS } from '../formats/lobby-types.js';
import { rulesFileSchema } from '../formats/rules-file.js';
import { serverLobbyFileSchema } from '../formats/server-lobby-file.js';
import { type CompiledRules, compileRules } from '../solver/rules.js';

/** The service's limits; by default the command line's documented limits (docs/formats.md). */
export interface ServiceLimits {
  /** Largest request body in bytes (413 above it). */
  readonly maxBodyBytes: number;
  /** Most players in a lobby, a pool or a candidate. */
  readonly maxPlayers: number;
  /** Most latency samples per player (per server). */
  readonly maxSamples: number;
  /** Most candidate lobbies in one ranking. */
  readonly maxCandidates: number;
  /** Longest time to receive a whole request, in ms (408 after it). */
  readonly requestTimeoutMs: number;
}

export const MAX_CANDIDATES = 10_000;

export const DEFAULT_LIMITS: ServiceLimits = {
  maxBodyBytes: MAX_JSON_BYTES,
  maxPlayers: MAX_PLAYERS,
  maxSamples: MAX_LATENCY_SAMPLES,
  maxCandidates: MAX_CANDIDATES,
  requestTimeoutMs: 10_000,
};

/** What the service says about a body it refuses. */
export interface ServiceIssue {
  readonly code: string;
  readonly path: string;
  readonly message: string;
}

export function serviceIssues(issues: readonly Issue[]): ServiceIssue[] {
  return issues.map(({ code, location, message }) => ({ code, path: location, message }));
}

// The bodies as schemas, for the OpenAPI document; validation goes through the
// same lobby, server-lobby and rules schemas below, one part at a time.
const candidatesSchema = z
  .array(z.array(z.string().min(1).max(128)).min(1).max(MAX_PLAYERS))
  .min(1)
  .max(MAX_CANDIDATES)
  .describe("Candidate lobbies, each a list of the pool's player ids.");
export const balanceBodySchema = z.object({ lobby: lobbyFileSchema, rules: rulesFileSchema.optional() }).strict();
export const serverBodySchema = z.object({ lobby: serverLobbyFileSchema, rules: rulesFileSchema.optional() }).strict();
export const rankBodySchema = z.object({ pool: lobbyFileSchema, candidates: candidatesSchema, rules: rulesFileSchema.optional() }).strict();

/** Prefix the locations of a part's issues with the part's name (`players[3]` -> `lobby.players[3]`). */
function within(part: string, issues: readonly Issue[]): Issue[] {
  return issues.map((issue) => {
    const location = issue.location === '(root)' ? part : issue.location.startsWith('[') ? `${part}${issue.location}` : `${part}.${issue.location}`;
    // "`players[3].latency_ms` requires ..." names the field as the body has it.
    const named = `\`${issue.location}\``;
    const message = issue.message.startsWith(named) ? `\`${location}\`${issue.message.slice(named.length)}` : issue.message;
    return { ...issue, location, message };
  });
}

/** The body's JSON, as an object with only the given keys (`required` among them). */
function bodyObject(text: string, keys: readonly string[], required: readonly string[], limits: ServiceLimits): Result<Record<string, unknown>> {
  const parsed = parseJsonText(text, 'body', limits.maxBodyBytes);
  // The JSON reader speaks of files; here the JSON is a request body.
  if (!parsed.ok) return fail(parsed.issues.map((issue) => ({ ...issue, message: issue.message.replace('the file requires', 'the request body requires').replace('an empty file', 'an empty body') })));
  const value = parsed.value;
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    return fail([error('wrong_type', 'body', `the request body requires a JSON object with ${keys.map((key) => `\`${key}\``).join(', ')}, got ${show(value)}`)]);
  }
  const body = value as Record<string, unknown>;
  const issues: Issue[] = [];
  for (const key of Object.keys(body)) {
    if (!keys.includes(key)) issues.push(error('unknown_field', key, `the request body requires only ${keys.map((name) => `\`${name}\``).join(', ')}, got ${show(key)}`));
  }
  for (const key of required) if (body[key] === undefined) issues.push(error('missing_field', key, `\`${key}\` requires a value, got nothing`));
  return issues.length > 0 ? fail(issues) : ok(body);
}

function rulesOf(body: Record<string, unknown>, fallback: CompiledRules): Result<CompiledRules> {
  if (body.rules === undefined) return ok(fallback);
  const rules = compileRules(body.rules);
  return rules.ok ? rules : fail(within('rules', rules.issues));
}

/** Players and samples above the service's limits (which may be lower than the formats'). */
function sizeIssues(part: string, players: readonly { readonly latency_ms: unknown }[], limits: ServiceLimits): Issue[] {
  if (players.length > limits.maxPlayers) {
    return [error('too_many_players', `${part}.players`, `\`${part}.players\` requires at most ${limits.maxPlayers} players (the service's --max-players), got ${players.length}`)];
  }
  const issues: Issue[] = [];
  players.forEach((player, index) => {
    const lists = Array.isArray(player.latency_ms) ? [player.latency_ms] : player.latency_ms !== null && typeof player.latency_ms === 'object' ? Object.values(player.latency_ms).filter(Array.isArray) : [];
    const longest = Math.max(0, ...lists.map((list) => list.length));
    if (longest > limits.maxSamples && issues.length < 10) {
      issues.push(error('too_many_samples', `${part}.players[${index}].latency_ms`, `\`${part}.players[${index}].latency_ms\` requires at most ${limits.maxSamples} samples (the service's --max-samples), got ${longest}`));
    }
  });
  return issues;
}

function combine<T>(parts: readonly Result<unknown>[], extra: readonly Issue[], value: () => T): Result<T> {
  const issues = [...parts.flatMap((part) => (part.ok ? [] : part.issues)), ...extra];
  return issues.length > 0 ? fail(issues) : ok(value());
}

/** A body `{ lobby, rules? }` whose lobby `parse` validates. */
function parseLobbyBody<T extends { readonly players: readonly { readonly latency_ms: unknown }[] }>(text: string, fallback: CompiledRules, limits: ServiceLimits, parse: (input: unknown) => Result<T>): Result<{ lobby: T; rules: CompiledRules }> {
  const body = bodyObject(text, ['lobby', 'rules'], ['lobby'], limits);
  if (!body.ok) return body;
  const lobby = parse(body.value.lobby);
  const lobbyResult: Result<T> = lobby.ok ? lobby : fail(within('lobby', lobby.issues));
  const rules = rulesOf(body.value, fallback);
  const sizes = lobby.ok ? sizeIssues('lobby', lobby.value.players, limits) : [];
  return combine([lobbyResult, rules], sizes, () => ({ lobby: (lobby as { value: T }).value, rules: (rules as { value: CompiledRules }).value }));
}

/** `POST /v1/balance` and `/v1/audit`: `{ lobby, rules? }`. */
export function parseBalanceBody(text: string, fallback: CompiledRules, limits: ServiceLimits): Result<{ lobby: ValidLobby; rules: CompiledRules }> {
  return parseLobbyBody(text, fallback, limits, (input) => safeParseLobby(input));
}

/** `POST /v1/server`: `{ lobby: <lobby-servers document>, rules? }`. */
export function parseServerBody(text: string, fallback: CompiledRules, limits: ServiceLimits): Result<{ lobby: ValidServerLobby; rules: CompiledRules }> {
  return parseLobbyBody(text, fallback, limits, (input) => safeParseServerLobby(input));
}

/** `POST /v1/rank`: `{ pool, candidates, rules? }`. Unknown or repeated ids in a candidate are refused here, by place. */
export function parseRankBody(text: string, fallback: CompiledRules, limits: ServiceLimits): Result<{ pool: ValidLobby; candidates: string[][]; rules: CompiledRules }> {
  const body = bodyObject(text, ['pool', 'candidates', 'rules'], ['pool', 'candidates'], limits);
  if (!body.ok) return body;
  const pool = safeParseLobby(body.value.pool);
  const poolResult: Result<ValidLobby> = pool.ok ? pool : fail(within('pool', pool.issues));
  const candidates = candidatesSchema.max(limits.maxCandidates).safeParse(body.value.candidates);
  const candidateIssues: Issue[] = [];
  if (!candidates.success) {
    const first = candidates.error.issues[0];
    const path = first === undefined ? '' : first.path.map((part) => (typeof part === 'number' ? `[${part}]` : `.${String(part)}`)).join('');
    candidateIssues.push(error(first?.code === 'too_big' && first.path.length === 0 ? 'too_many_candidates' : 'invalid_value', `candidates${path}`, `\`candidates\` requires 1 to ${limits.maxCandidates} lists of 1 to ${limits.maxPlayers} player ids: ${first?.message ?? 'a list of lists of ids'}`));
  } else if (pool.ok) {
    const ids = new Set(pool.value.players.map((player) => player.id));
    candidates.data.forEach((candidate, index) => {
      if (candidate.length > limits.maxPlayers) candidateIssues.push(error('too_many_players', `candidates[${index}]`, `\`candidates[${index}]\` requires at most ${limits.maxPlayers} players (the service's --max-players), got ${candidate.length}`));
      const seen = new Set<string>();
      candidate.forEach((id, position) => {
        if (candidateIssues.length >= 20) return;
        if (!ids.has(id)) candidateIssues.push(error('unknown_player', `candidates[${index}][${position}]`, `a candidate requires ids of the pool's players, got ${show(id)}`));
        else if (seen.has(id)) candidateIssues.push(error('duplicate_player', `candidates[${index}][${position}]`, `a player id used once in a candidate, got ${show(id)} again`));
        seen.add(id);
      });
    });
  }
  const rules = rulesOf(body.value, fallback);
  const sizes = pool.ok ? sizeIssues('pool', pool.value.players, limits) : [];
  return combine([poolResult, rules], [...candidateIssues, ...sizes], () => ({
    pool: (pool as { value: ValidLobby }).value,
    candidates: (candidates as { data: string[][] }).data,
    rules: (rules as { value: CompiledRules }).value,
  }));
}
