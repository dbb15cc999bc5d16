import { describe, expect, it } from 'vitest';
import type { Trials } from '../../src/formats/trials-csv.js';
import { collapseTrials } from '../../src/model/collapse.js';

/** Seeded rows like the bench's: latency at 0.01 ms over 0-150 ms, three scales, three levels, optional weights and players. */
function seededTrials(rows: number, withWeights: boolean, withPlayers: boolean): Trials {
  let state = 987654321;
  const random = () => {
    state = (Math.imul(state, 1103515245) + 12345) >>> 0;
    return state / 2 ** 32;
  };
  const latency = Float64Array.from({ length: rows }, () => Math.round(random() * 15_000) / 100);
  const scale = Float64Array.from({ length: rows }, () => [1, 1.5, 2][Math.floor(random() * 3)] as number);
  const codes = Int32Array.from({ length: rows }, () => Math.floor(random() * 3));
  const successes = Float64Array.from({ length: rows }, () => (random() < 0.6 ? 1 : 0));
  const weight = withWeights ? Float64Array.from({ length: rows }, () => [1, 0.5, 2][Math.floor(random() * 3)] as number) : null;
  const player = withPlayers ? { ids: Array.from({ length: 40 }, (_, k) => `p${k}`), codes: Int32Array.from({ length: rows }, () => Math.floor(random() * 40)) } : null;
  return {
    file: 'seeded.csv',
    shape: 'per_attempt',
    rows,
    latency,
    scale,
    difficulty: { kind: 'levels', levels: ['standard', 'veteran', 'elite'], codes },
    successes,
    attempts: new Float64Array(rows).fill(1),
    weight,
    player,
  };
}

/** The same grouping by a string key per row in a Map (common practice, written plainly): key -> [successes, attempts], first appearance first. */
function naiveGroups(trials: Trials): Map<string, [number, number]> {
  const groups = new Map<string, [number, number]>();
  const codes = trials.difficulty.kind === 'levels' ? trials.difficulty.codes : trials.difficulty.values;
  for (let i = 0; i < trials.rows; i += 1) {
    const key = `${trials.latency[i]}|${trials.scale[i]}|${codes[i]}|${trials.weight?.[i] ?? 1}|${trials.player?.codes[i] ?? 0}`;
    const counts = groups.get(key) ?? [0, 0];
    counts[0] += trials.successes[i] as number;
    counts[1] += trials.attempts[i] as number;
    groups.set(key, counts);
  }
  return groups;
}

describe('collapseTrials() on many distinct points', () => {
  it.each([
    ['no weights or players', false, false],
    ['weights and players', true, true],
  ])('gives the groups and counts of a plain string-keyed grouping, %s, with points found through hash collisions', (_, withWeights, withPlayers) => {
    // 80,000 rows over 45,000 to 80,000 distinct points: enough that some keys share a 32-bit hash.
    const trials = seededTrials(80_000, withWeights, withPlayers);
    const collapsed = collapseTrials(trials);
    const expected = naiveGroups(trials);
    const got = new Map<string, [number, number]>();
    for (let g = 0; g < collapsed.rows; g += 1) {
      const key = `${collapsed.latency[g]}|${collapsed.scale[g]}|${collapsed.difficulty[g]}|${collapsed.weight[g]}|${collapsed.player?.[g] ?? 0}`;
      expect(got.has(key), `group ${key} appears twice`).toBe(false);
      got.set(key, [collapsed.successes[g] as number, collapsed.attempts[g] as number]);
    }
    expect(got.size).toBe(expected.size);
    let differing = 0;
    for (const [key, counts] of expected) {
      const found = got.get(key);
      if (found === undefined || found[0] !== counts[0] || found[1] !== counts[1]) differing += 1;
    }
    expect(differing).toBe(0);
    expect(collapsed.sourceRows).toBe(trials.rows);
    // Points found through a collision come after the other new points of their batch, so the order
    // differs from first appearance somewhere: the collision path ran (with the FNV mix of collapse.ts).
    const firstAppearance = [...expected.keys()];
    const order = [...got.keys()];
    expect(order.some((key, g) => key !== firstAppearance[g])).toBe(true);
  });
});
