/**
 * The data's training ranges (latency, scale, difficulty, players) and the
 * slope of the linear predictor in the scale term at the corners of that
 * range: a compensation scale must help at every latency the model was
 * trained on, so a slope that is not positive there is a warning.
 */
import { extent } from '../stats/extent.js';
import type { CollapsedTrials } from './collapsed-trials.js';
import type { TermDesign } from './design.js';
import type { ScaleEffect, TrainingRanges } from './fit-report-types.js';
import type { Prepared } from './prepared-fit.js';
import { predictorLine } from './predictor-line.js';
import { type DifficultyCoding, scaleForm } from './terms.js';

export function trainingRanges(data: CollapsedTrials, coding: DifficultyCoding, players: number | null): TrainingRanges {
  let attempts = 0;
  for (let i = 0; i < data.rows; i += 1) attempts += data.attempts[i] as number;
  return {
    latency_ms: extent(data.latency),
    scale: extent(data.scale),
    difficulty: coding.kind === 'levels' ? [...coding.levels] : extent(data.difficulty),
    rows: data.sourceRows,
    attempts,
    ...(players === null ? {} : { players }),
  };
}

/** The slope of the linear predictor in the scale term at the corners of the training range. */
export function scaleEffectOf(prepared: Prepared, design: Pick<TermDesign, 'columns'>, coefficients: ArrayLike<number>, training: TrainingRanges): ScaleEffect {
  if (scaleForm(prepared.terms) === 'none') return { increasing: false, smallest_slope: null, at_latency_ms: null, at_difficulty: null };
  const difficulties: (number | string)[] = Array.isArray(training.difficulty)
    ? [...(training.difficulty as readonly string[])]
    : [(training.difficulty as { min: number }).min, (training.difficulty as { max: number }).max];
  let smallest = Infinity;
  let atLatency = training.latency_ms.min;
  let atDifficulty: number | string = difficulties[0] ?? 0;
  for (const difficulty of difficulties) {
    const line = predictorLine(design.columns, coefficients, prepared.coding, difficulty);
    if (!line.ok) continue;
    for (const latency of [training.latency_ms.min, training.latency_ms.max]) {
      const slope = line.value.scaleSlope + line.value.scaleSlopePerMs * latency;
      if (slope < smallest) {
        smallest = slope;
        atLatency = latency;
        atDifficulty = difficulty;
      }
    }
  }
  return { increasing: smallest > 0, smallest_slope: smallest, at_latency_ms: atLatency, at_difficulty: atDifficulty };
}
