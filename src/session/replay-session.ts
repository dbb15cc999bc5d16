/**
 * Replaying a match session's event log (match-session.ts): every safe
 * point's decision is computed again from the estimates the log recorded and
 * the scales in force before it, under the rules and options of its start
 * event and the model given, and compared with what the log says was applied,
 * bit for bit (`Object.is` on every number). A difference means the model,
 * the rules or the code is not what ran the match.
 *
 * Read the log with `parseSessionLog` (session-log-file.ts) first.
 */
import { isCompiledModel, readSafely } from '../validated.js';
import { checkSessionEvents } from './session-log-file.js';
import { type Result, error, fail, ok } from '../issues.js';
import type { CompiledModel } from '../model/compile.js';
import { compileRules } from '../solver/rules.js';
import { type SessionEvent, decideSafePoint, modelFingerprint, settlesSession } from './match-session.js';

export interface ReplayReport {
  readonly status: 'reproduced' | 'differs';
  readonly match_id: string;
  readonly events: number;
  readonly safe_points: number;
  /** The first safe point whose replay differs from the log, and where. */
  readonly difference: { readonly event: number; readonly at: number; readonly field: string; readonly logged: unknown; readonly replayed: unknown } | null;
}

/** Replay a parsed log under `model` (the model the match ran with). */
export function replaySession(events: readonly SessionEvent[], model: CompiledModel): Result<ReplayReport> {
  if (!Array.isArray(events as unknown)) return fail([error('invalid_log', 'events', 'a replay requires the list of events parseSessionLog returns')]);
  if (!isCompiledModel(model)) return fail([error('uncompiled_model', 'model', 'the replay requires the value compileModel() returns')]);
  // Events built by hand (or edited after parseSessionLog) are checked as a log's lines are; the replay reads the checked copies.
  const checked = readSafely(
    events,
    () => checkSessionEvents(events),
    (message) => fail<SessionEvent[]>([error('unreadable_input', 'events', `the events require plain data, got a value that throws when read: ${JSON.stringify(message)}`)]),
  );
  if (!checked.ok) return checked;
  return replayChecked(checked.value, model);
}

function replayChecked(events: readonly SessionEvent[], model: CompiledModel): Result<ReplayReport> {
  const start = events[0];
  if (start === undefined || start.type !== 'start') return fail([error('invalid_log', 'events[0]', 'a session log requires a start event first, got none')]);
  if (modelFingerprint(model) !== start.model) {
    return fail([error('model_mismatch', 'model', 'the replay requires the model the match ran with (the same link and coefficients as the start event records), got another')]);
  }
  const rules = compileRules(start.rules, 'start.rules');
  if (!rules.ok) return fail(rules.issues);
  const { deadband, maxStep } = start.options;
  // Keyed by player id without a prototype (moveScales says why).
  let scales: Record<string, number> = Object.create(null) as Record<string, number>;
  let safePoints = 0;
  let settled = false;
  for (let index = 1; index < events.length; index += 1) {
    const event = events[index] as SessionEvent;
    if (event.type === 'join') {
      if (!Object.hasOwn(scales, event.id)) scales[event.id] = 1;
      continue;
    }
    if (event.type !== 'safe_point') continue;
    safePoints += 1;
    const replayed = decideSafePoint(model, rules.value, start.match, event.estimates, scales, { deadband, maxStep, settled }, event.at);
    settled ||= settlesSession(replayed);
    const difference = firstDifference(event, replayed);
    if (difference !== null) {
      return ok({ status: 'differs', match_id: start.match.match_id, events: events.length, safe_points: safePoints, difference: { event: index, at: event.at, ...difference } });
    }
    scales = Object.assign(Object.create(null) as Record<string, number>, replayed.applied);
  }
  return ok({ status: 'reproduced', match_id: start.match.match_id, events: events.length, safe_points: safePoints, difference: null });
}

function firstDifference(logged: Extract<SessionEvent, { type: 'safe_point' }>, replayed: Extract<SessionEvent, { type: 'safe_point' }>): { field: string; logged: unknown; replayed: unknown } | null {
  if (logged.status !== replayed.status) return { field: 'status', logged: logged.status, replayed: replayed.status };
  if (logged.decision !== replayed.decision) return { field: 'decision', logged: logged.decision, replayed: replayed.decision };
  for (const field of ['answer', 'applied'] as const) {
    const ids = new Set([...Object.keys(logged[field]), ...Object.keys(replayed[field])]);
    for (const id of ids) {
      const before = Object.hasOwn(logged[field], id) ? logged[field][id] : undefined;
      const after = Object.hasOwn(replayed[field], id) ? replayed[field][id] : undefined;
      if (!Object.is(before, after)) return { field: `${field}.${id}`, logged: before, replayed: after };
    }
  }
  return null;
}
