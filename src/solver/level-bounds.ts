/** Bounds on the water level's link value (water-level.ts), from the players' predictor lines. */
import type { CurveSet } from './player-curve.js';

/**
 * A finite link value at which every player's curve is at or below the value
 * at their highest scale (so the water level there puts everyone at the top
 * of their range): the largest predictor over all samples at that scale.
 */
export function highestLinked(curves: CurveSet, highTerm: Float64Array): number {
  let highest = -Infinity;
  for (let player = 0; player < curves.count; player += 1) {
    const term = highTerm[player] as number;
    for (let sample = curves.offsets[player] as number; sample < (curves.offsets[player + 1] as number); sample += 1) {
      highest = Math.max(highest, (curves.alphas[sample] as number) + (curves.betas[sample] as number) * term);
    }
  }
  return highest;
}

/**
 * A link value at which every player's curve is at or above the value at their
 * lowest scale (so the water level there leaves everyone at the bottom of
 * their range): the smallest predictor over all samples at that scale.
 */
export function lowestLinked(curves: CurveSet, lowTerm: Float64Array | number): number {
  let lowest = Infinity;
  for (let player = 0; player < curves.count; player += 1) {
    const term = typeof lowTerm === 'number' ? lowTerm : (lowTerm[player] as number);
    for (let sample = curves.offsets[player] as number; sample < (curves.offsets[player + 1] as number); sample += 1) {
      lowest = Math.min(lowest, (curves.alphas[sample] as number) + (curves.betas[sample] as number) * term);
    }
  }
  return lowest;
}
