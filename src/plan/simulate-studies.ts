/**
 * A batch of simulated studies at one size (participants x repetitions), as
 * numbers a worker thread can hand back: one record of `RECORD_LENGTH`
 * numbers per study (`StudyRecord`).
 *
 * Study i of a size draws from its own seeded source, seeded from the plan's
 * seed, the size and i (SplitMix64 of their mix; `random.ts`), so a study's
 * result depends on nothing else: not on the batch it is in, the thread that
 * runs it, or how many threads there are. Every study of a size plays the
 * same schedule, the one `lagparity plan schedule` gives for that size and
 * seed.
 *
 * Cost: per study, one simulation (`simulate-study.ts`) and one fit.
 */
import { splitMix64, createRandomSource } from '../random.js';
import type { AssumedModel } from './assumed-model.js';
import { conditionOrders } from './build-schedule.js';
import type { Condition } from './conditions.js';
import { conditionPredictors, simulateTrials } from './simulate-study.js';
import { OUTCOME_STATUSES, type OutcomeSettings, studyOutcome } from './study-outcome.js';

/** Everything a batch needs, as plain data (it crosses to worker threads by structured clone). */
export interface SimulationPlan {
  readonly difficulty: number[] | string[];
  readonly conditions: Condition[];
  readonly attempts: number;
  readonly seed: number;
  readonly playerSd: number;
  readonly truth: AssumedModel;
  readonly settings: OutcomeSettings;
}

/** One study's numbers: status index, latency detected, scale detected, interval width (NaN: none), covered (NaN: none), scale (NaN: none). */
export const RECORD_LENGTH = 6;

export interface StudyRecord {
  readonly status: (typeof OUTCOME_STATUSES)[number];
  readonly latencyDetected: boolean;
  readonly scaleDetected: boolean;
  readonly width: number | null;
  readonly covered: boolean | null;
  readonly scale: number | null;
}

/** Read study `index` of a batch's records. */
export function readRecord(records: Float64Array, index: number): StudyRecord {
  const at = index * RECORD_LENGTH;
  const value = (offset: number) => records[at + offset] as number;
  const optional = (offset: number) => (Number.isNaN(value(offset)) ? null : value(offset));
  const covered = optional(4);
  return {
    status: OUTCOME_STATUSES[value(0)] as StudyRecord['status'],
    latencyDetected: value(1) === 1,
    scaleDetected: value(2) === 1,
    width: optional(3),
    covered: covered === null ? null : covered === 1,
    scale: optional(5),
  };
}

/** The seed of study `index` at a size: SplitMix64 of the mix of the plan's seed, the size and the index, cut to 53 bits. */
export function studySeed(seed: number, participants: number, repetitions: number, index: number): number {
  const mixed = BigInt.asUintN(64, BigInt(seed) * 0x9e3779b97f4a7c15n + BigInt(participants) * 0xbf58476d1ce4e5b9n + BigInt(repetitions) * 0x94d049bb133111ebn + BigInt(index));
  return Number(splitMix64(mixed)() >> 11n);
}

/** Simulate and fit studies `first` .. `first + count - 1` at a size; their records, in order. */
export function simulateStudies(plan: SimulationPlan, participants: number, repetitions: number, first: number, count: number): Float64Array {
  const { orders } = conditionOrders(plan.conditions.length, participants, repetitions, plan.seed);
  const shape = { difficulty: plan.difficulty, conditions: plan.conditions, orders, attempts: plan.attempts };
  const predictors = conditionPredictors(shape, plan.truth);
  const records = new Float64Array(count * RECORD_LENGTH);
  for (let offset = 0; offset < count; offset += 1) {
    const random = createRandomSource(studySeed(plan.seed, participants, repetitions, first + offset));
    const outcome = studyOutcome(simulateTrials(shape, plan.truth, predictors, plan.playerSd, random), plan.settings);
    records.set(
      [
        OUTCOME_STATUSES.indexOf(outcome.status),
        outcome.latencyDetected ? 1 : 0,
        outcome.scaleDetected ? 1 : 0,
        outcome.interval === null ? Number.NaN : outcome.interval.upper - outcome.interval.lower,
        outcome.covered === null ? Number.NaN : outcome.covered ? 1 : 0,
        outcome.interval === null ? Number.NaN : outcome.interval.scale,
      ],
      offset * RECORD_LENGTH,
    );
  }
  return records;
}
