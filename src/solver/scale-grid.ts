/**
 * The grid of allowed scales under a `quantisation_step` q: the multiples
 * k q, named by their index k. The solver works on indices, so that "the
 * largest multiple of q at or below x" and the ratio's lift are integer
 * arithmetic, and turns an index into a scale only where a curve is
 * evaluated or a result is written.
 *
 * A step that is a decimal of at most 12 places (0.05, 0.1, 0.025) has its
 * multiples computed as k x numerator / 10^places, the correctly rounded
 * double of the decimal k q: 23 x 0.05 reads 1.15, not 1.1500000000000001,
 * and the floor (a whole multiple of q, which the rules' schema checks) comes
 * out exactly as written. Assistance, sum of (s - 1)+, is then a sum of
 * integers in units of 10^-places, exact and independent of the players'
 * order. Any other step uses k q and floating-point sums.
 *
 * Tolerances: a value within 1e-9 of a step below a multiple counts as on it
 * (as it did before the grid had indices), so a cap of 1.35 with a step of
 * 0.05 allows 1.35 although 1.35 / 0.05 = 26.999999999999996 in doubles.
 */

/** How close (in steps) a value must be to a multiple to count as on it. */
export const ON_GRID_TOLERANCE = 1e-9;

export interface ScaleGrid {
  readonly step: number;
  /** The step as numerator / denominator with a power-of-ten denominator; denominator 0 when the step is not such a decimal. */
  readonly numerator: number;
  readonly denominator: number;
  /** Index of the floor (the floor is a whole multiple of the step). */
  readonly floorIndex: number;
  /** The largest index whose scale is at most 1: steps up to it cost no assistance. Below floorIndex when the floor is above 1. */
  readonly oneIndex: number;
}

/**
 * The grid for a step, floor and largest scale of interest (the cap: it
 * decides whether integer arithmetic stays exact).
 */
export function scaleGrid(step: number, floor: number, largest: number): ScaleGrid {
  let numerator = 0;
  let denominator = 0;
  const indexLimit = Math.ceil(largest / step) + 2;
  for (let places = 0, power = 1; places <= 12; places += 1, power *= 10) {
    const scaled = step * power;
    const whole = Math.round(scaled);
    if (whole >= 1 && Math.abs(scaled - whole) <= 1e-9 * scaled && whole * indexLimit < Number.MAX_SAFE_INTEGER && power * indexLimit < Number.MAX_SAFE_INTEGER) {
      numerator = whole;
      denominator = power;
      break;
    }
  }
  const floorIndex = Math.round(floor / step);
  const partial: ScaleGrid = { step, numerator, denominator, floorIndex, oneIndex: 0 };
  return { ...partial, oneIndex: indexAtOrBelow(partial, 1) };
}

/** The scale at index k. */
export function gridValue(grid: ScaleGrid, index: number): number {
  return grid.denominator === 0 ? index * grid.step : (index * grid.numerator) / grid.denominator;
}

/** The largest index whose scale is at or below `value` (within the tolerance). */
export function indexAtOrBelow(grid: ScaleGrid, value: number): number {
  return Math.floor(value / grid.step + ON_GRID_TOLERANCE);
}

/** The smallest index whose scale is at or above `value` (within the tolerance). */
export function indexAtOrAbove(grid: ScaleGrid, value: number): number {
  return Math.ceil(value / grid.step - ON_GRID_TOLERANCE);
}

/**
 * L: the smallest allowed index whose scale is at or above (the scale at
 * `largest`) / ratio, and never below the floor. Every scale of a lobby whose
 * largest scale has index `largest` must be at L or above for the ratio to
 * hold.
 */
export function liftIndex(grid: ScaleGrid, largest: number, ratio: number): number {
  const index = indexAtOrAbove(grid, gridValue(grid, largest) / ratio);
  return index > grid.floorIndex ? index : grid.floorIndex;
}

/** The largest index m with liftIndex(m) <= lift: the largest scale the ratio allows when nobody is below `lift`. */
export function largestUnderLift(grid: ScaleGrid, lift: number, ratio: number): number {
  let index = indexAtOrBelow(grid, gridValue(grid, lift) * ratio);
  while (liftIndex(grid, index + 1, ratio) <= lift) index += 1;
  while (index > lift && liftIndex(grid, index, ratio) > lift) index -= 1;
  return index;
}

/**
 * Assistance of one scale, max(0, s - 1), in the grid's units: integer units
 * of 1 / denominator for a decimal step (exact), else the plain difference.
 */
export function assistanceUnits(grid: ScaleGrid, index: number): number {
  if (grid.denominator === 0) {
    const excess = index * grid.step - 1;
    return excess > 0 ? excess : 0;
  }
  const excess = index * grid.numerator - grid.denominator;
  return excess > 0 ? excess : 0;
}

/** A budget in the grid's units, with room for the decimal's own rounding (1e-9 of a step). */
export function budgetUnits(grid: ScaleGrid, budget: number): number {
  return grid.denominator === 0 ? budget + ON_GRID_TOLERANCE * grid.step : budget * grid.denominator + ON_GRID_TOLERANCE * grid.numerator;
}

/** Units back to scale: the assistance a sum of units stands for. */
export function unitsToAssistance(grid: ScaleGrid, units: number): number {
  return grid.denominator === 0 ? units : units / grid.denominator;
}
