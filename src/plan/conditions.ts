/**
 * The conditions of a playtest: every combination of its latency, scale and
 * difficulty levels (a full factorial), numbered latency-major, then scale,
 * then difficulty, so that condition ids follow the plan's own order.
 */
export interface Condition {
  readonly latency_ms: number;
  readonly scale: number;
  readonly difficulty: number | string;
}

/** Every combination of the levels, latency-major. Cost: O(product of the level counts). */
export function crossConditions(levels: { readonly latency_ms: readonly number[]; readonly scale: readonly number[]; readonly difficulty: readonly (number | string)[] }): Condition[] {
  const conditions: Condition[] = [];
  for (const latency of levels.latency_ms) {
    for (const scale of levels.scale) {
      for (const difficulty of levels.difficulty) conditions.push({ latency_ms: latency, scale, difficulty });
    }
  }
  return conditions;
}

/**
 * The condition of practice round `index` (0-based): the lowest latency, the
 * scale level nearest 1 (the lower of two as near), and the difficulty levels
 * in turn. Practice rounds warm players up at the game as it normally plays.
 */
export function practiceCondition(levels: { readonly latency_ms: readonly number[]; readonly scale: readonly number[]; readonly difficulty: readonly (number | string)[] }, index: number): Condition {
  let nearest = levels.scale[0] as number;
  for (const scale of levels.scale) if (Math.abs(scale - 1) < Math.abs(nearest - 1)) nearest = scale;
  return { latency_ms: levels.latency_ms[0] as number, scale: nearest, difficulty: levels.difficulty[index % levels.difficulty.length] as number | string };
}
