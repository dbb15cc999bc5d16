import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { buildSchedule, conditionOrders, participantId } from '../../src/plan/build-schedule.js';
import { williamsSequenceCount } from '../../src/plan/williams-design.js';
import { adjacentPairCounts, positionCounts } from './balance.js';

const basePlan = {
  label: 'Harbourline preseason playtest',
  seed: 7,
  latency_ms: [0, 60, 120],
  scale: [1, 1.5],
  difficulty: ['standard', 'elite'],
  repetitions: 2,
  participants: 24,
  practice_rounds: 2,
  round_seconds: 40,
  pause_seconds: 10,
  session_limit_minutes: 45,
};

/** Each participant's condition ids of repetition block `block`. */
function blocks(orders: number[][], t: number, block: number): number[][] {
  return orders.map((order) => order.slice(block * t, (block + 1) * t));
}

/** What every schedule promises: each participant meets each condition `repetitions` times, once per block; under a Williams design, within each block and across participants, each ordered pair of different conditions is adjacent equally often and each condition stands equally often in each position. */
function checkPromises(orders: number[][], t: number, repetitions: number, kind: string): void {
  for (const order of orders) {
    const met = new Array<number>(t).fill(0);
    for (const condition of order) met[condition] = (met[condition] as number) + 1;
    expect(met).toEqual(new Array<number>(t).fill(repetitions));
  }
  for (let block = 0; block < repetitions; block += 1) {
    for (const part of blocks(orders, t, block)) expect([...part].sort((a, b) => a - b)).toEqual(Array.from({ length: t }, (_, i) => i));
  }
  if (kind !== 'williams' || t < 2) return;
  const participants = orders.length;
  for (let block = 0; block < repetitions; block += 1) {
    const part = blocks(orders, t, block);
    const each = participants / t;
    const wanted = Array.from({ length: t * t }, (_, index) => (Math.floor(index / t) === index % t ? 0 : each));
    expect(adjacentPairCounts(part, t)).toEqual(wanted);
    expect(new Set(positionCounts(part, t))).toEqual(new Set([participants / t]));
  }
}

describe('conditionOrders()', () => {
  it('gives every participant every condition `repetitions` times, and a Williams design balanced in every block when the count allows (property, 300 runs)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 12 }), fc.integer({ min: 1, max: 4 }), fc.integer({ min: 1, max: 4 }), fc.integer(), fc.boolean(), (t, repetitions, groups, seed, multiple) => {
        const count = williamsSequenceCount(t);
        const participants = multiple ? groups * count : groups * count + 1 + (seed & 1);
        const { kind, orders } = conditionOrders(t, participants, repetitions, seed);
        expect(kind).toBe(participants % count === 0 ? 'williams' : 'randomised_blocks');
        checkPromises(orders, t, repetitions, kind);
      }),
      { seed: 2301, numRuns: 300 },
    );
  });

  it('gives the same orders for the same seed and other orders for another', () => {
    expect(conditionOrders(6, 12, 2, 99)).toEqual(conditionOrders(6, 12, 2, 99));
    expect(conditionOrders(6, 12, 2, 99).orders).not.toEqual(conditionOrders(6, 12, 2, 100).orders);
    expect(conditionOrders(6, 13, 2, 99)).toEqual(conditionOrders(6, 13, 2, 99));
  });
});

describe('buildSchedule()', () => {
  it('keeps the promises on every schedule, read back from the rows by their levels (property, 150 runs)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 4 }),
        fc.integer({ min: 1, max: 3 }),
        fc.integer({ min: 1, max: 2 }),
        fc.integer({ min: 1, max: 3 }),
        fc.integer({ min: 0, max: 3 }),
        fc.integer({ min: 1, max: 30 }),
        fc.integer(),
        (latencies, scales, difficulties, repetitions, practice, participants, seed) => {
          const plan = {
            ...basePlan,
            seed,
            latency_ms: Array.from({ length: latencies }, (_, i) => 40 * i),
            scale: Array.from({ length: scales }, (_, i) => 1 + 0.25 * i),
            difficulty: ['standard', 'elite'].slice(0, difficulties),
            repetitions,
            practice_rounds: practice,
            participants,
            session_limit_minutes: 1440,
          };
          const schedule = buildSchedule(plan);
          // Condition ids from the levels, independently of the schedule's own numbering.
          const key = (latency: number, scale: number, difficulty: number | string) => plan.latency_ms.indexOf(latency) * scales * difficulties + plan.scale.indexOf(scale) * difficulties + plan.difficulty.indexOf(difficulty as string);
          const t = latencies * scales * difficulties;
          const orders = schedule.participants.map((participant) => {
            const rounds = schedule.rounds.filter((round) => round.player === participant.id);
            expect(rounds.map((round) => round.round)).toEqual(Array.from({ length: practice + t * repetitions }, (_, i) => i + 1));
            expect(rounds.slice(0, practice).every((round) => round.practice)).toBe(true);
            return rounds.filter((round) => !round.practice).map((round) => key(round.latency_ms, round.scale, round.difficulty));
          });
          expect(orders).toHaveLength(participants);
          checkPromises(orders, t, repetitions, schedule.design.kind);
        },
      ),
      { seed: 2305, numRuns: 150 },
    );
  });

  it('says it used a Williams design for 24 participants and 12 conditions, with practice rounds first', () => {
    const schedule = buildSchedule(basePlan);
    expect(schedule.design.kind).toBe('williams');
    expect(schedule.design.williams_sequences).toBe(12);
    expect(schedule.conditions).toHaveLength(12);
    expect(schedule.rounds).toHaveLength(24 * (2 + 24));
    const first = schedule.rounds.filter((round) => round.player === 'P01');
    expect(first.map((round) => round.round)).toEqual(Array.from({ length: 26 }, (_, i) => i + 1));
    expect(first.slice(0, 2).map((round) => [round.practice, round.latency_ms, round.scale, round.difficulty])).toEqual([
      [true, 0, 1, 'standard'],
      [true, 0, 1, 'elite'],
    ]);
    expect(first.slice(2).every((round) => !round.practice && round.condition !== null)).toBe(true);
    expect(schedule.warnings).toEqual([]);
  });

  it('states the session length (26 rounds of 40 s with 10 s between: 21.5 minutes) and warns above the limit', () => {
    expect(buildSchedule(basePlan).session).toEqual({ rounds: 26, practice_rounds: 2, minutes: (26 * 40 + 25 * 10) / 60, limit_minutes: 45, over_limit: false });
    const long = buildSchedule({ ...basePlan, repetitions: 6 });
    expect(long.session.over_limit).toBe(true);
    expect(long.warnings.map((issue) => issue.code)).toEqual(['long_session']);
    expect(long.warnings[0]?.message).toContain('got 61.5 (74 rounds of 40 s with 10 s between)');
  });

  it('falls back to randomised blocks for 10 participants and says why', () => {
    const schedule = buildSchedule({ ...basePlan, participants: 10 });
    expect(schedule.design.kind).toBe('randomised_blocks');
    expect(schedule.design.carryover_balanced).toBe(false);
    expect(schedule.warnings.map((issue) => issue.message)).toEqual([
      'a design balanced for carry-over requires a multiple of 12 `participants` for 12 conditions, got 10; the orders are randomised blocks (12 participants would give a Williams design)',
    ]);
  });

  it('names participants P01.. padded to the count', () => {
    expect(participantId(0, 24)).toBe('P01');
    expect(participantId(122, 150)).toBe('P123');
    expect(participantId(4, 1000)).toBe('P0005');
  });
});
