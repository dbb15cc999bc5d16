/**
 * The order in which each participant of a playtest meets its conditions.
 *
 * - **Williams design** (`williams-design.ts`) when the number of participants
 *   is a multiple of the design's sequence count (t sequences for t
 *   conditions, t even; 2t for t odd): then, within every repetition block,
 *   each condition comes equally often in each position and each ordered pair
 *   of different conditions stands next to each other equally often across the
 *   participants (balance for first-order carry-over). As is common practice
 *   for cross-over designs (Jones, B. and Kenward, M. G. (2014), *Design and
 *   Analysis of Cross-Over Trials*, 3rd ed., ch. 4), the seed randomises which
 *   condition takes which treatment number, and which participant of each
 *   group of `sequences` takes which sequence; the balance does not depend on
 *   either. Repetition k of a participant given sequence j follows sequence
 *   j + k (mod the count), so every block is balanced on its own.
 * - **Randomised blocks** otherwise: each repetition is a block holding every
 *   condition once, in an order drawn uniformly at random (Fisher-Yates) for
 *   each participant and block. Every condition is met `repetitions` times;
 *   carry-over is balanced only on average, which the schedule says.
 *
 * Practice rounds come first, at the lowest latency and the scale nearest 1
 * (`conditions.ts`), and are marked. Pure: the same plan gives the same
 * schedule (the seed is the plan's).
 *
 * Cost: O(participants x rounds).
 */
import { type Issue, warning } from '../issues.js';
import type { PlanFile } from '../formats/plan-types.js';
import { createRandomSource, shuffledIndices } from '../random.js';
import { type Condition, crossConditions, practiceCondition } from './conditions.js';
import { roundsPerParticipant, sessionMinutes } from './session-length.js';
import { williamsDesign, williamsSequenceCount } from './williams-design.js';

export const SCHEDULE_FORMAT = 'lagparity/playtest-schedule@1';

export type OrderDesign = 'williams' | 'randomised_blocks';

export interface ScheduleRound {
  /** The participant's id, as the trials file's `player` column. */
  readonly player: string;
  /** Position in the participant's session, from 1 (practice rounds first). */
  readonly round: number;
  readonly latency_ms: number;
  readonly scale: number;
  readonly difficulty: number | string;
  readonly practice: boolean;
  /** The condition's id (index into `conditions`), or null for a practice round. */
  readonly condition: number | null;
}

export interface ScheduleParticipant {
  readonly id: string;
  /** The Williams sequence of each repetition block, or null under randomised blocks. */
  readonly sequences: readonly number[] | null;
}

export interface Schedule {
  readonly format: typeof SCHEDULE_FORMAT;
  readonly label: string | null;
  readonly seed: number;
  readonly design: {
    readonly kind: OrderDesign;
    /** Sequences of the Williams design for this many conditions (t or 2t). */
    readonly williams_sequences: number;
    /** Whether every repetition block is balanced for first-order carry-over across the participants. */
    readonly carryover_balanced: boolean;
    readonly reason: string;
  };
  readonly conditions: readonly (Condition & { readonly id: number })[];
  readonly repetitions: number;
  readonly session: {
    readonly rounds: number;
    readonly practice_rounds: number;
    readonly minutes: number;
    readonly limit_minutes: number;
    readonly over_limit: boolean;
  };
  readonly participants: readonly ScheduleParticipant[];
  readonly rounds: readonly ScheduleRound[];
  readonly warnings: readonly Issue[];
}

/** Participant ids P01, P02, ... padded to the width of the count (at least two digits). */
export function participantId(index: number, count: number): string {
  return `P${String(index + 1).padStart(Math.max(2, String(count).length), '0')}`;
}

type SchedulePlan = Pick<PlanFile, 'label' | 'seed' | 'latency_ms' | 'scale' | 'difficulty' | 'repetitions' | 'participants' | 'practice_rounds' | 'round_seconds' | 'pause_seconds' | 'session_limit_minutes'>;

/**
 * Each participant's order of conditions, one block of every condition per
 * repetition: Williams sequences where the participant count allows the
 * design's balance, else randomised blocks. Returns condition ids per
 * participant, in session order (practice rounds not included).
 */
export function conditionOrders(conditions: number, participants: number, repetitions: number, seed: number): { kind: OrderDesign; orders: number[][]; sequences: (number[] | null)[] } {
  const random = createRandomSource(seed);
  const count = williamsSequenceCount(conditions);
  if (participants % count === 0) {
    const design = williamsDesign(conditions);
    const label = shuffledIndices(conditions, random);
    const sequenceOf: number[] = [];
    for (let group = 0; group < participants / count; group += 1) sequenceOf.push(...shuffledIndices(count, random));
    const sequences = sequenceOf.map((first) => Array.from({ length: repetitions }, (_, block) => (first + block) % count));
    const orders = sequences.map((blocks) => blocks.flatMap((sequence) => (design[sequence] as number[]).map((treatment) => label[treatment] as number)));
    return { kind: 'williams', orders, sequences };
  }
  const orders = Array.from({ length: participants }, () => {
    const order: number[] = [];
    for (let block = 0; block < repetitions; block += 1) order.push(...shuffledIndices(conditions, random));
    return order;
  });
  return { kind: 'randomised_blocks', orders, sequences: orders.map(() => null) };
}

/**
 * The schedule of a plan: every round of every participant, the design used
 * and why, the session length, and warnings (a session over the limit, a
 * participant count that leaves carry-over unbalanced).
 *
 * @example
 *   const schedule = buildSchedule(parsePlan(json));
 *   schedule.design.kind; // 'williams' for 24 participants and 12 conditions
 */
export function buildSchedule(plan: SchedulePlan): Schedule {
  const conditions = crossConditions(plan);
  const t = conditions.length;
  const { kind, orders, sequences } = conditionOrders(t, plan.participants, plan.repetitions, plan.seed);
  const williamsSequences = williamsSequenceCount(t);
  const warnings: Issue[] = [];
  const reason =
    kind === 'williams'
      ? `${t} condition(s) give a Williams design of ${williamsSequences} sequence(s) and ${plan.participants} participants are a multiple of ${williamsSequences}: every repetition block is balanced for first-order carry-over`
      : `a Williams design of ${t} conditions has ${williamsSequences} sequences and balances carry-over only for a multiple of ${williamsSequences} participants, got ${plan.participants}: each block's order is drawn at random instead (randomised blocks)`;
  if (kind === 'randomised_blocks') {
    const fewer = Math.floor(plan.participants / williamsSequences) * williamsSequences;
    const more = fewer + williamsSequences;
    warnings.push(
      warning(
        'carryover_not_balanced',
        'participants',
        `a design balanced for carry-over requires a multiple of ${williamsSequences} \`participants\` for ${t} conditions, got ${plan.participants}; the orders are randomised blocks (${fewer > 0 ? `${fewer} or ${more}` : more} participants would give a Williams design)`,
      ),
    );
  }
  const roundsEach = roundsPerParticipant(plan, t, plan.repetitions);
  const minutes = sessionMinutes(plan, roundsEach);
  const overLimit = minutes > plan.session_limit_minutes;
  if (overLimit) {
    warnings.push(
      warning(
        'long_session',
        'session_limit_minutes',
        `a session requires at most \`session_limit_minutes\` (${plan.session_limit_minutes}) minutes, got ${minutes.toFixed(1)} (${roundsEach} rounds of ${plan.round_seconds} s with ${plan.pause_seconds} s between); split it into sessions or lower \`repetitions\``,
      ),
    );
  }
  const rounds: ScheduleRound[] = [];
  const participants: ScheduleParticipant[] = [];
  orders.forEach((order, index) => {
    const player = participantId(index, plan.participants);
    participants.push({ id: player, sequences: sequences[index] ?? null });
    for (let practice = 0; practice < plan.practice_rounds; practice += 1) {
      rounds.push({ player, round: practice + 1, ...practiceCondition(plan, practice), practice: true, condition: null });
    }
    order.forEach((condition, position) => {
      rounds.push({ player, round: plan.practice_rounds + position + 1, ...(conditions[condition] as Condition), practice: false, condition });
    });
  });
  return {
    format: SCHEDULE_FORMAT,
    label: plan.label,
    seed: plan.seed,
    design: { kind, williams_sequences: williamsSequences, carryover_balanced: kind === 'williams', reason },
    conditions: conditions.map((condition, id) => ({ id, ...condition })),
    repetitions: plan.repetitions,
    session: { rounds: roundsEach, practice_rounds: plan.practice_rounds, minutes, limit_minutes: plan.session_limit_minutes, over_limit: overLimit },
    participants,
    rounds,
    warnings,
  };
}
