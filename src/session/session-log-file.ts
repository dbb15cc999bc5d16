/**
 * The session log (`lagparity/session-log@1`): one JSON event a line, as
 * `MatchSession` records them (match-session.ts). A log comes back from disk
 * to be replayed, so every line is validated before anything is computed
 * from it; an issue names the line and the field.
 */
import { z } from 'zod';
import { finiteNumber } from '../formats/finite-number.js';
import { type Issue, type Result, error, fail, ok } from '../issues.js';
import { MAX_LATENCY_MS } from '../formats/limits.js';
import { MAX_PLAYERS } from '../formats/lobby-types.js';
import { matchFields, playerIdentity } from '../formats/lobby-file.js';
import { fromZodIssues } from '../formats/zod-issues.js';
import { checkText, structureIssue } from '../formats/json-input.js';
import { scanJsonStructure } from '../formats/json-structure.js';
import { SESSION_FORMAT, type SessionEvent } from './match-session.js';

const finite = finiteNumber();
const scaleMap = z.record(z.string(), finite.min(0, { error: 'a scale (a finite number >= 0)' }));
const team = playerIdentity.team.unwrap().nullable();

const startEvent = z
  .object({
    type: z.literal('start'),
    format: z.literal(SESSION_FORMAT, { error: `the format tag "${SESSION_FORMAT}" (a string)` }),
    at: finite,
    match: z.object(matchFields).strict(),
    rules: z.record(z.string(), z.unknown()),
    options: z
      .object({
        alpha: finite.gt(0).max(1),
        beta: finite.gt(0).max(1),
        deadband: finite.min(0),
        maxStep: finite.gt(0),
      })
      .strict(),
    model: z.string(),
  })
  .strict();

const joinEvent = z.object({ type: z.literal('join'), at: finite, id: playerIdentity.id, team, reconnect: z.boolean() }).strict();
const leaveEvent = z.object({ type: z.literal('leave'), at: finite, id: playerIdentity.id }).strict();

const safePointEvent = z
  .object({
    type: z.literal('safe_point'),
    at: finite,
    estimates: z
      .array(z.object({ id: playerIdentity.id, team, latency_ms: finite.min(0).max(MAX_LATENCY_MS) }).strict())
      .max(MAX_PLAYERS, { error: `at most ${MAX_PLAYERS} players` })
      .superRefine((estimates, context) => {
        const seen = new Set<string>();
        estimates.forEach((estimate, index) => {
          if (seen.has(estimate.id)) context.addIssue({ code: 'custom', path: [index, 'id'], message: 'a player id used once among the estimates', params: { code: 'duplicate_player' } });
          seen.add(estimate.id);
        });
      }),
    status: z.enum(['balanced', 'capped', 'infeasible', 'rejected', 'no_players']),
    answer: scaleMap,
    decision: z.enum(['kept', 'moved', 'reached']),
    applied: scaleMap,
  })
  .strict();

const eventSchema = z.discriminatedUnion('type', [startEvent, joinEvent, leaveEvent, safePointEvent], {
  error: 'an event whose `type` is one of start, join, leave, safe_point',
});

/**
 * Parse a session log (JSON lines). `file` names the source in issues. Each
 * line's JSON is checked as a JSON file is (json-structure.ts): nesting, a key
 * twice in an object, keys that reach a prototype. Throws a TypeError when
 * `text` is not a string.
 */
export function parseSessionLog(text: string, file = 'session.jsonl'): Result<SessionEvent[]> {
  checkText(text);
  const events: SessionEvent[] = [];
  const lineOf: number[] = [];
  const issues: Issue[] = [];
  const lines = text.split('\n');
  for (let index = 0; index < lines.length && issues.length < 20; index += 1) {
    const line = lines[index] as string;
    if (line.trim() === '') continue;
    const where = `${file}:${index + 1}`;
    let value: unknown;
    try {
      value = JSON.parse(line);
    } catch {
      issues.push(error('invalid_json', where, 'a session log requires one JSON event a line, got a line that is not JSON'));
      continue;
    }
    const problem = scanJsonStructure(line);
    if (problem !== null) {
      issues.push(structureIssue(problem, line, file, index + 1));
      continue;
    }
    const parsed = eventSchema.safeParse(value);
    if (!parsed.success) issues.push(...fromZodIssues(parsed.error.issues, value, where));
    else {
      events.push(parsed.data as SessionEvent);
      lineOf.push(index + 1);
    }
  }
  if (issues.length > 0) return fail(issues);
  const first = events[0];
  if (first === undefined || first.type !== 'start') {
    return fail([error('invalid_log', `${file}:1`, `a session log requires a start event (format "${SESSION_FORMAT}") first, got ${first === undefined ? 'no event' : `a ${first.type} event`}`)]);
  }
  const later = events.findIndex((event, index) => index > 0 && event.type === 'start');
  if (later > 0) return fail([error('invalid_log', `${file}:${String(lineOf[later])}`, 'a session log requires exactly one start event (one match a log), got a second one')]);
  return ok(events);
}

/**
 * Events given as values rather than read from a log (replaySession's input):
 * each checked with a log line's schema, issues at `events[i]:field`. The
 * checked copies are returned, so a value changed after the check is not read.
 */
export function checkSessionEvents(events: readonly unknown[]): Result<SessionEvent[]> {
  const checked: SessionEvent[] = [];
  const issues: Issue[] = [];
  for (let index = 0; index < events.length && issues.length < 20; index += 1) {
    const event = events[index];
    const parsed = eventSchema.safeParse(event);
    if (parsed.success) checked.push(parsed.data as SessionEvent);
    else issues.push(...fromZodIssues(parsed.error.issues, event, `events[${index}]`));
  }
  return issues.length > 0 ? fail(issues) : ok(checked);
}
