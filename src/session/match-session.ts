/**
 * A live match: latency samples arrive per player while it runs, and the
 * scales are brought up to date only at the safe points the game marks (a
 * round's start), never in the middle of an exchange.
 *
 * - Estimate. Each player's latency is smoothed as TCP smooths round-trip
 *   times (RFC 6298, "Computing TCP's Retransmission Timer", section 2): the
 *   first sample R sets SRTT = R and RTTVAR = R / 2; each later sample R'
 *   updates RTTVAR <- (1 - beta) RTTVAR + beta |SRTT - R'| and then
 *   SRTT <- (1 - alpha) SRTT + alpha R', with the RFC's alpha = 1/8 and
 *   beta = 1/4 by default. SRTT is the latency the solver uses; RTTVAR is
 *   reported as the player's jitter. O(1) a sample.
 * - Safe point. The present players with at least one sample make a lobby
 *   with their SRTT as point latencies; it is balanced under the rules
 *   (balanceLobby), which gives the scales the session moves towards.
 * - First safe point. The match's first safe point that balances anyone
 *   (before round one) sets the scales to the answer outright: there is
 *   nothing in play yet to disturb.
 * - Deadband and rate, at every later safe point. If no scale would move by
 *   more than `deadband`, the scales stay as they are. Otherwise all move
 *   together towards the answer by the same fraction, the largest that moves
 *   no scale by more than `maxStep`: the applied vector is a convex
 *   combination of the previous one and the answer. The floor and the caps
 *   hold all along (both vectors satisfy them, and each is a bound per
 *   player); the ratio limit and the budget are convex too, so they hold
 *   along the move when the previous scales satisfied them for the lobby as
 *   it is now, which a join, a leave or a changed estimate can break until
 *   the answer is reached. With a quantisation step each scale is then
 *   rounded to the grid towards its previous value (so never past the
 *   answer), and `maxStep` must be at least one step so that the scale
 *   farthest from its answer always moves. A player who joins after the
 *   first safe point enters at scale 1 and moves at the same rate.
 * - Join, leave, reconnect. A player who leaves keeps their scale and is
 *   left out of the lobby until they join again; a reconnect starts a new
 *   estimate (the network path may have changed) and keeps the scale.
 * - Record. Every decision is an event (`SessionEvent`), given to the
 *   caller's `record` callback to append as one JSON line: the start (rules,
 *   options, the model's fingerprint), joins, leaves and each safe point with
 *   the estimates it used and the scales it applied. Samples are not recorded
 *   (thousands a second); the estimates at each safe point are enough for
 *   `replaySession` to reproduce every scale bit for bit.
 * - Logging. Nothing is written to the console; `logger` (the usual
 *   `info/warn/error(object, message)` shape) receives structured events.
 */
import { LagparityInputError, error, show } from '../issues.js';
import { compiledInputIssues } from '../solver/entry-checks.js';
import { readSafely } from '../validated.js';
import { isForbiddenKey } from '../formats/json-structure.js';
import { type LobbyFile, MAX_PLAYERS } from '../formats/lobby-types.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from '../solver/rules.js';
import { type BalanceResult, balanceLobby } from '../solver/balance-lobby.js';

/** The logger shape most Node loggers share (pino, bunyan, a console wrapper). */
export interface SessionLogger {
  info(object: Record<string, unknown>, message: string): void;
  warn(object: Record<string, unknown>, message: string): void;
  error(object: Record<string, unknown>, message: string): void;
}

export interface SessionOptions {
  /** RFC 6298 gains: SRTT's alpha (default 1/8) and RTTVAR's beta (default 1/4), each in (0, 1]. */
  readonly alpha?: number;
  readonly beta?: number;
  /** Scales stay unless one would move by more than this (default 0.02). */
  readonly deadband?: number;
  /** No scale moves by more than this at one safe point (default 0.1). */
  readonly maxStep?: number;
  /** Receives every decision, to append as a JSON line (`JSON.stringify(event)`). */
  readonly record?: (event: SessionEvent) => void;
  /** Receives structured log events; nothing goes to the console. */
  readonly logger?: SessionLogger;
}

export interface MatchInfo {
  readonly match_id: string;
  readonly attribute: LobbyFile['attribute'];
  readonly difficulty: number | string;
}

export const SESSION_FORMAT = 'lagparity/session-log@1';

export type SessionEvent =
  | {
      readonly type: 'start';
      readonly format: typeof SESSION_FORMAT;
      readonly at: number;
      readonly match: MatchInfo;
      readonly rules: CompiledRules;
      readonly options: { readonly alpha: number; readonly beta: number; readonly deadband: number; readonly maxStep: number };
      /** The model's link and coefficients, to check that a replay uses the same model. */
      readonly model: string;
    }
  | { readonly type: 'join'; readonly at: number; readonly id: string; readonly team: string | null; readonly reconnect: boolean }
  | { readonly type: 'leave'; readonly at: number; readonly id: string }
  | {
      readonly type: 'safe_point';
      readonly at: number;
      /** SRTT per present, measured player, in the order they joined. */
      readonly estimates: readonly { readonly id: string; readonly team: string | null; readonly latency_ms: number }[];
      readonly status: BalanceResult['status'] | 'no_players';
      /** The answer's scales (the lobby balanced now), by id. */
      readonly answer: Readonly<Record<string, number>>;
      /** `kept` (within the deadband), `moved` (part way, at most maxStep) or `reached` (the whole way). */
      readonly decision: 'kept' | 'moved' | 'reached';
      /** The scales in force after this safe point, by id (every player ever joined). */
      readonly applied: Readonly<Record<string, number>>;
    };

function isName(value: unknown): value is string {
  return typeof value === 'string' && value.length >= 1 && value.length <= 128;
}

interface PlayerState {
  readonly id: string;
  team: string | null;
  present: boolean;
  samples: number;
  srtt: number;
  rttvar: number;
  scale: number;
}

/** The model's fingerprint in the log: its link and coefficients as JSON. */
export function modelFingerprint(model: CompiledModel): string {
  return JSON.stringify({ link: model.link.name, coefficients: Array.from(model.coefficients) });
}

/** A player's scale in a map by id (1 when absent), from its own keys only. */
export function scaleOf(scales: Readonly<Record<string, number>>, id: string): number {
  return Object.hasOwn(scales, id) ? (scales[id] as number) : 1;
}

/**
 * The scales after a safe point: `previous` moved towards `answer` (see the
 * module comment). Pure; shared by the session and its replay.
 */
export function moveScales(previous: Readonly<Record<string, number>>, answer: Readonly<Record<string, number>>, deadband: number, maxStep: number, step: number | null): { applied: Record<string, number>; decision: 'kept' | 'moved' | 'reached' } {
  let largest = 0;
  for (const [id, target] of Object.entries(answer)) largest = Math.max(largest, Math.abs(target - scaleOf(previous, id)));
  // Keyed by player id without a prototype: an id "toString" or "__proto__" is a player, not Object's.
  const applied: Record<string, number> = Object.assign(Object.create(null) as Record<string, number>, previous);
  for (const id of Object.keys(answer)) if (!Object.hasOwn(applied, id)) applied[id] = 1;
  if (!(largest > deadband)) return { applied, decision: 'kept' };
  const fraction = largest <= maxStep ? 1 : maxStep / largest;
  for (const [id, target] of Object.entries(answer)) {
    const from = scaleOf(previous, id);
    let scale = fraction === 1 ? target : from + fraction * (target - from);
    if (step !== null && fraction < 1) {
      // Towards the previous value: never past the answer.
      const units = scale / step;
      scale = (target >= from ? Math.floor(units + 1e-9) : Math.ceil(units - 1e-9)) * step;
      if ((target >= from && scale < from) || (target < from && scale > from)) scale = from;
    }
    applied[id] = scale;
  }
  return { applied, decision: fraction === 1 ? 'reached' : 'moved' };
}

export class MatchSession {
  private readonly players = new Map<string, PlayerState>();
  private readonly order: PlayerState[] = [];
  private readonly alpha: number;
  private readonly beta: number;
  private readonly deadband: number;
  private readonly maxStep: number;
  /** Whether a safe point has balanced anyone yet (the first sets the scales outright). */
  private settled = false;
  /** Players present now. */
  private present = 0;

  /** The match as read once at the start (a plain copy: the caller's object is not read again). */
  private readonly match: MatchInfo;

  constructor(
    private readonly model: CompiledModel,
    private readonly rules: CompiledRules,
    input: MatchInfo,
    private readonly options: SessionOptions = {},
    at = 0,
  ) {
    // The model, the rules and the match are data: wrong ones throw a LagparityInputError carrying issues.
    const issues = compiledInputIssues(model, rules);
    const copied = readSafely<MatchInfo | string>(input, () => ({ match_id: input?.match_id, attribute: input?.attribute, difficulty: input?.difficulty }), (message) => message);
    if (typeof copied === 'string') {
      throw new LagparityInputError([...issues, error('invalid_match', 'match', `\`match\` requires { match_id, attribute, difficulty }, got a value that throws when read: ${JSON.stringify(copied)}`)]);
    }
    const match = copied;
    this.match = match;
    const line = issues.length === 0 ? model.lineAt(match.difficulty) : null;
    if (line !== null && !line.ok) issues.push(...line.issues.map((issue) => ({ ...issue, location: `match.${issue.location}` })));
    if (typeof match?.match_id !== 'string' || match.match_id === '') issues.push(error('invalid_match', 'match.match_id', `\`match.match_id\` requires a non-empty string, got ${show(match?.match_id)}`));
    if (match?.attribute !== 'hit_area' && match?.attribute !== 'timing_window') issues.push(error('invalid_match', 'match.attribute', `\`match.attribute\` requires "hit_area" or "timing_window", got ${show(match?.attribute)}`));
    if (issues.length > 0) throw new LagparityInputError(issues);
    this.alpha = options.alpha ?? 1 / 8;
    this.beta = options.beta ?? 1 / 4;
    this.deadband = options.deadband ?? 0.02;
    this.maxStep = options.maxStep ?? 0.1;
    for (const [name, value, low, high] of [
      ['alpha', this.alpha, 0, 1],
      ['beta', this.beta, 0, 1],
      ['maxStep', this.maxStep, 0, Infinity],
    ] as const) {
      if (!(value > low && value <= high)) throw new RangeError(`\`options.${name}\` requires a number in (${low}, ${high}], got ${String(value)}`);
    }
    if (!(this.deadband >= 0 && this.deadband < Infinity)) throw new RangeError(`\`options.deadband\` requires a finite number >= 0, got ${String(this.deadband)}`);
    if (rules.quantisation_step !== null && this.maxStep < rules.quantisation_step) {
      throw new RangeError(`\`options.maxStep\` requires at least the rules' quantisation_step (${String(rules.quantisation_step)}) so that scales can move on the grid, got ${String(this.maxStep)}`);
    }
    this.emit({ type: 'start', format: SESSION_FORMAT, at, match, rules, options: { alpha: this.alpha, beta: this.beta, deadband: this.deadband, maxStep: this.maxStep }, model: modelFingerprint(model) });
  }

  private emit(event: SessionEvent): void {
    this.options.record?.(event);
  }

  /**
   * A player joins (or reconnects: a new estimate, the scale kept). Returns
   * false, and logs a warning, for an id or team that is not 1 to 128
   * characters, an id named `__proto__`, `constructor` or `prototype` (ids
   * are keys of the log's scales, and a log with such a key is refused, so
   * the match could not be replayed), or a match that already has
   * MAX_PLAYERS players present.
   */
  join(id: string, team: string | null = null, at = 0): boolean {
    const known = this.players.get(id);
    const problem = !isName(id)
      ? 'join with an id that is not 1 to 128 characters: ignored'
      : isForbiddenKey(id)
        ? `join with the id ${JSON.stringify(id)}, which the session log cannot hold as a key: ignored`
        : team !== null && !isName(team)
        ? 'join with a team that is not 1 to 128 characters: ignored'
        : known?.present !== true && this.present >= MAX_PLAYERS
          ? `join beyond ${MAX_PLAYERS} players present: ignored`
          : null;
    if (problem !== null) {
      this.options.logger?.warn({ match_id: this.match.match_id, id, team }, problem);
      return false;
    }
    if (known !== undefined) {
      if (!known.present) this.present += 1;
      known.present = true;
      known.team = team;
      known.samples = 0;
      this.emit({ type: 'join', at, id, team, reconnect: true });
      this.options.logger?.info({ match_id: this.match.match_id, id }, 'player reconnected');
      return true;
    }
    const state: PlayerState = { id, team, present: true, samples: 0, srtt: 0, rttvar: 0, scale: 1 };
    this.players.set(id, state);
    this.order.push(state);
    this.present += 1;
    this.emit({ type: 'join', at, id, team, reconnect: false });
    return true;
  }

  /** A player leaves: left out of the lobby until they join again, their scale kept. False (and a warning) if they were not present. */
  leave(id: string, at = 0): boolean {
    const state = this.players.get(id);
    if (state === undefined || !state.present) {
      this.options.logger?.warn({ match_id: this.match.match_id, id }, 'leave for a player who is not in the match: ignored');
      return false;
    }
    state.present = false;
    this.present -= 1;
    this.emit({ type: 'leave', at, id });
    return true;
  }

  /**
   * One latency sample in milliseconds (the hot path: O(1), nothing
   * recorded). Returns false, and logs a warning, for a player not in the
   * match or a value that is not a latency (negative, not finite, above a
   * minute).
   */
  sample(id: string, latencyMs: number): boolean {
    const state = this.players.get(id);
    if (state === undefined || !state.present || !(latencyMs >= 0 && latencyMs <= 60_000)) {
      this.options.logger?.warn({ match_id: this.match.match_id, id, latency_ms: latencyMs }, state === undefined || !state.present ? 'sample for a player who is not in the match: ignored' : 'sample that is not a latency in milliseconds (0 to 60000): ignored');
      return false;
    }
    if (state.samples === 0) {
      state.srtt = latencyMs;
      state.rttvar = latencyMs / 2;
    } else {
      const deviation = state.srtt > latencyMs ? state.srtt - latencyMs : latencyMs - state.srtt;
      state.rttvar = (1 - this.beta) * state.rttvar + this.beta * deviation;
      state.srtt = (1 - this.alpha) * state.srtt + this.alpha * latencyMs;
    }
    state.samples += 1;
    return true;
  }

  /** A player's smoothed latency (SRTT) and jitter (RTTVAR), or null before their first sample. */
  estimate(id: string): { latency_ms: number; jitter_ms: number; samples: number } | null {
    const state = this.players.get(id);
    return state === undefined || state.samples === 0 ? null : { latency_ms: state.srtt, jitter_ms: state.rttvar, samples: state.samples };
  }

  /** The scale in force for a player (1 until a safe point has given them one). */
  scale(id: string): number {
    return this.players.get(id)?.scale ?? 1;
  }

  /** Every player's scale in force, by id. */
  scales(): Record<string, number> {
    return Object.fromEntries(this.order.map((state) => [state.id, state.scale]));
  }

  /**
   * A safe point (a round starts): balance the present, measured players and
   * move the scales towards the answer. Returns the event it recorded.
   */
  safePoint(at = 0): Extract<SessionEvent, { type: 'safe_point' }> {
    const estimates = this.order.filter((state) => state.present && state.samples > 0).map((state) => ({ id: state.id, team: state.team, latency_ms: state.srtt }));
    const previous = this.scales();
    const event = decideSafePoint(this.model, this.rules, this.match, estimates, previous, { deadband: this.deadband, maxStep: this.maxStep, settled: this.settled }, at);
    this.settled ||= settlesSession(event);
    for (const state of this.order) state.scale = event.applied[state.id] ?? state.scale;
    if (event.status === 'rejected') this.options.logger?.error({ match_id: this.match.match_id, at }, 'the lobby cannot be solved at this safe point: scales kept');
    else this.options.logger?.info({ match_id: this.match.match_id, at, decision: event.decision, players: estimates.length }, `safe point: scales ${event.decision}`);
    this.emit(event);
    return event;
  }
}

/** Whether a safe point balanced anyone (after it, the deadband and the rate apply). */
export function settlesSession(event: Extract<SessionEvent, { type: 'safe_point' }>): boolean {
  return event.status !== 'no_players' && event.status !== 'rejected';
}

/** How a safe point moves the scales: the options' deadband and rate, and whether an earlier safe point has set them. */
export interface MovePolicy {
  readonly deadband: number;
  readonly maxStep: number;
  readonly settled: boolean;
}

/** One safe point's decision from its estimates and the scales before it. Pure; shared by the session and its replay. */
export function decideSafePoint(
  model: CompiledModel,
  rules: CompiledRules,
  match: MatchInfo,
  estimates: readonly { readonly id: string; readonly team: string | null; readonly latency_ms: number }[],
  previous: Readonly<Record<string, number>>,
  policy: MovePolicy,
  at: number,
): Extract<SessionEvent, { type: 'safe_point' }> {
  if (estimates.length === 0) return { type: 'safe_point', at, estimates, status: 'no_players', answer: {}, decision: 'kept', applied: { ...previous } };
  const lobby: LobbyFile = {
    format: 'lagparity/lobby@1',
    match_id: match.match_id,
    attribute: match.attribute,
    difficulty: match.difficulty,
    players: estimates.map((estimate) => (estimate.team === null ? { id: estimate.id, latency_ms: estimate.latency_ms } : { id: estimate.id, team: estimate.team, latency_ms: estimate.latency_ms })),
  };
  const result = balanceLobby(lobby, model, rules);
  if (result.status === 'rejected') return { type: 'safe_point', at, estimates, status: 'rejected', answer: {}, decision: 'kept', applied: { ...previous } };
  const answer = Object.fromEntries(result.players.map((player) => [player.id, player.scale]));
  const moved = policy.settled ? moveScales(previous, answer, policy.deadband, policy.maxStep, rules.quantisation_step) : moveScales(previous, answer, 0, Infinity, null);
  return { type: 'safe_point', at, estimates, status: result.status, answer, decision: moved.decision, applied: moved.applied };
}
