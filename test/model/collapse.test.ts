import { describe, expect, it } from 'vitest';
import type { Trials } from '../../src/formats/trials-types.js';
import fc from 'fast-check';
import { EVERY_COVARIATE, collapseOver, collapseTrials, groupTrials, mergedOverPlayers, mergedWithout } from '../../src/model/collapse.js';
import { gatherCollapsed } from '../../src/model/collapsed-trials.js';
import type { CollapsedTrials } from '../../src/model/collapsed-trials.js';
import { GRID_MIN_ROWS, GroupAccumulator } from '../../src/model/group-accumulator.js';

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

/** The groups of a collapse by the same string key, checking that no key appears twice. */
function groupsOf(collapsed: CollapsedTrials): Map<string, [number, number]> {
  const got = new Map<string, [number, number]>();
  for (let g = 0; g < collapsed.rows; g += 1) {
    const key = `${collapsed.latency[g]}|${collapsed.scale[g]}|${collapsed.difficulty[g]}|${collapsed.weight[g]}|${collapsed.player?.[g] ?? 0}`;
    expect(got.has(key), `group ${key} appears twice`).toBe(false);
    got.set(key, [collapsed.successes[g] as number, collapsed.attempts[g] as number]);
  }
  return got;
}

/** Keys of `expected` whose counts `got` lacks or differs on, plus keys only `got` has. */
function differences(expected: Map<string, [number, number]>, got: Map<string, [number, number]>): string[] {
  const differing: string[] = [];
  for (const [key, counts] of expected) {
    const found = got.get(key);
    if (found === undefined || found[0] !== counts[0] || found[1] !== counts[1]) differing.push(key);
  }
  for (const key of got.keys()) if (!expected.has(key)) differing.push(key);
  return differing;
}

/** Collapse per-attempt trials without weights or players through an accumulator, with the direct index on or off. */
function accumulate(trials: Trials, grid: boolean): CollapsedTrials {
  const accumulator = new GroupAccumulator({ weight: false, player: false, merge: true, expectedRows: trials.rows, grid });
  const difficulty = trials.difficulty.kind === 'levels' ? trials.difficulty.codes : trials.difficulty.values;
  accumulator.addRows({ latency: trials.latency, scale: trials.scale, difficulty, weight: null, player: null, successes: trials.successes, attempts: trials.attempts }, trials.rows);
  return accumulator.finish();
}

describe('collapseTrials() on many distinct points', () => {
  it.each([
    ['no weights or players (hash table alone)', false, false],
    ['weights and players', true, true],
  ])('gives the groups and counts of a plain string-keyed grouping, %s, with points found through hash collisions', (_, withWeights, withPlayers) => {
    // 80,000 rows over 45,000 to 80,000 distinct points: enough that some keys share a 32-bit hash.
    const trials = seededTrials(80_000, withWeights, withPlayers);
    const collapsed = withWeights || withPlayers ? collapseTrials(trials) : accumulate(trials, false);
    const expected = naiveGroups(trials);
    const got = groupsOf(collapsed);
    expect(got.size).toBe(expected.size);
    expect(differences(expected, got)).toEqual([]);
    expect(collapsed.sourceRows).toBe(trials.rows);
    // Points found through a collision come after the other new points of their batch, so the order
    // differs from first appearance somewhere: the collision path ran (with the FNV mix of covariate-hash.ts).
    const firstAppearance = [...expected.keys()];
    const order = [...got.keys()];
    expect(order.some((key, g) => key !== firstAppearance[g])).toBe(true);
  });
});

describe('GroupAccumulator direct index (latency on a 0.01 ms grid)', () => {
  it('is what collapseTrials uses on many rows without weights or players, in order of first appearance', () => {
    const trials = seededTrials(GRID_MIN_ROWS + 1000, false, false);
    const collapsed = collapseTrials(trials);
    const expected = naiveGroups(trials);
    const got = groupsOf(collapsed);
    expect(differences(expected, got)).toEqual([]);
    // Every row qualifies (0.01 ms steps, three scales, three levels): no hash path, so no collision reorders a point.
    expect([...got.keys()]).toEqual([...expected.keys()]);
  });

  it('groups rows on and off the grid exactly once each (off: finer latencies, beyond 1,310.72 ms, negative, a ninth scale, level 8 and up)', () => {
    let state = 1234567;
    const random = () => {
      state = (Math.imul(state, 1103515245) + 12345) >>> 0;
      return state / 2 ** 32;
    };
    const rows = 30_000;
    const latency = Float64Array.from({ length: rows }, () => {
      const kind = Math.floor(random() * 6);
      if (kind === 0) return Math.round(random() * 2_000) / 1000; // 0.001 ms steps: most are off the grid
      if (kind === 1) return 1310.72 + Math.round(random() * 50) / 100; // just beyond the grid
      if (kind === 2) return -Math.round(random() * 50) / 100; // negative, and -0
      return Math.round(random() * 3_000) / 100;
    });
    const scales = [1, 1.1, 1.2, 1.3, 1.4, 1.5, 1.6, 1.7, 1.8, 1.9, 2, 0.5];
    const scale = Float64Array.from({ length: rows }, () => scales[Math.floor(random() * scales.length)] as number);
    const codes = Int32Array.from({ length: rows }, () => Math.floor(random() * 10));
    const trials: Trials = {
      file: 'mixed.csv',
      shape: 'per_attempt',
      rows,
      latency,
      scale,
      difficulty: { kind: 'levels', levels: Array.from({ length: 10 }, (_, k) => `level${k}`), codes },
      successes: Float64Array.from({ length: rows }, () => (random() < 0.5 ? 1 : 0)),
      attempts: new Float64Array(rows).fill(1),
      weight: null,
      player: null,
    };
    const expected = naiveGroups(trials);
    const withGrid = groupsOf(accumulate(trials, true));
    const withoutGrid = groupsOf(accumulate(trials, false));
    expect(differences(expected, withGrid)).toEqual([]);
    expect(differences(expected, withoutGrid)).toEqual([]);
  });

  it('grows its key columns and counts past the rows it expected (a low estimate from the file size)', () => {
    // 20,000 rows over about 16,000 points against an expected 10 rows (4,096 groups reserved).
    const trials = seededTrials(20_000, false, false);
    const accumulator = new GroupAccumulator({ weight: false, player: false, merge: true, expectedRows: 10, grid: true });
    const codes = trials.difficulty.kind === 'levels' ? trials.difficulty.codes : trials.difficulty.values;
    accumulator.addRows({ latency: trials.latency, scale: trials.scale, difficulty: codes, weight: null, player: null, successes: trials.successes, attempts: trials.attempts }, trials.rows);
    const collapsed = accumulator.finish();
    expect(collapsed.rows).toBeGreaterThan(4096);
    expect(differences(naiveGroups(trials), groupsOf(collapsed))).toEqual([]);
  });

  it('keeps rows as they come past the rows it expected (merging off), every column as given', () => {
    // 20,000 rows with weights and players against an expected 10 (4,096 rows reserved): the kept columns grow.
    const trials = seededTrials(20_000, true, true);
    const codes = trials.difficulty.kind === 'levels' ? trials.difficulty.codes : trials.difficulty.values;
    const accumulator = new GroupAccumulator({ weight: true, player: true, merge: false, expectedRows: 10 });
    accumulator.addRows({ latency: trials.latency, scale: trials.scale, difficulty: codes, weight: trials.weight, player: trials.player?.codes ?? null, successes: trials.successes, attempts: trials.attempts }, trials.rows);
    const kept = accumulator.finish();
    expect(kept.rows).toBe(20_000);
    const same = (column: ArrayLike<number> | null, given: ArrayLike<number> | null) => expect(Array.from(column ?? [])).toEqual(Array.from(given ?? [Number.NaN]));
    same(kept.latency, trials.latency);
    same(kept.scale, trials.scale);
    same(kept.difficulty, codes);
    same(kept.weight, trials.weight);
    same(kept.player, trials.player?.codes ?? null);
    same(kept.successes, trials.successes);
    same(kept.attempts, trials.attempts);
  });

  it('treats -0 and 0 as one point, for latency and scale', () => {
    const trials: Trials = {
      file: 'zeros.csv',
      shape: 'per_attempt',
      rows: 4,
      latency: Float64Array.of(0, -0, 0, -0),
      scale: Float64Array.of(1, 1, 0, -0),
      difficulty: { kind: 'levels', levels: ['standard'], codes: Int32Array.of(0, 0, 0, 0) },
      successes: Float64Array.of(1, 0, 1, 1),
      attempts: Float64Array.of(1, 1, 1, 1),
      weight: null,
      player: null,
    };
    const collapsed = accumulate(trials, true);
    expect(collapsed.rows).toBe(2);
    expect([...collapsed.successes]).toEqual([1, 2]);
    expect([...collapsed.attempts]).toEqual([2, 2]);
  });

  it('gives the groups and counts of a string-keyed grouping on random rows near the grid, in batches (property)', () => {
    const row = fc.record({
      latency: fc.oneof(fc.integer({ min: -3, max: 40 }).map((k) => k / 100), fc.integer({ min: 0, max: 40 }).map((k) => k / 1000), fc.constantFrom(1310.71, 1310.72, Number.MAX_VALUE)),
      scale: fc.constantFrom(1, 1.25, 1.5, 2, 3, 4, 5, 6, 7, 8, 0.75),
      level: fc.integer({ min: 0, max: 9 }),
      hit: fc.integer({ min: 0, max: 1 }),
    });
    fc.assert(
      fc.property(fc.array(row, { minLength: 1, maxLength: 20_000 }), (list) => {
        const trials: Trials = {
          file: 'property.csv',
          shape: 'per_attempt',
          rows: list.length,
          latency: Float64Array.from(list, (r) => r.latency),
          scale: Float64Array.from(list, (r) => r.scale),
          difficulty: { kind: 'levels', levels: Array.from({ length: 10 }, (_, k) => `l${k}`), codes: Int32Array.from(list, (r) => r.level) },
          successes: Float64Array.from(list, (r) => r.hit),
          attempts: new Float64Array(list.length).fill(1),
          weight: null,
          player: null,
        };
        expect(differences(naiveGroups(trials), groupsOf(accumulate(trials, true)))).toEqual([]);
      }),
      { numRuns: 30, seed: 20261202 },
    );
  });
});

describe('collapseOver() from the rows merged over the players', () => {
  it('gives the groups and counts of merging the players\' rows directly, for each covariate dropped (what the reduced models read)', () => {
    for (const withWeights of [false, true]) {
      const data = groupTrials(seededTrials(90_000, withWeights, true)).groups;
      const merged = mergedOverPlayers(data);
      expect(mergedOverPlayers(data)).toBe(merged); // computed once per rows object
      expect(merged.rows).toBeLessThan(data.rows);
      for (const used of [
        { latency: false, scale: true, difficulty: true },
        { latency: true, scale: false, difficulty: true },
        { latency: true, scale: true, difficulty: false },
      ]) {
        expect(differences(groupsOf(collapseOver(data, used)), groupsOf(collapseOver(merged, used)))).toEqual([]);
      }
    }
  });
});

describe('mergedWithout() (a fold\'s training rows)', () => {
  it('gives the groups and counts of merging the rows left directly, whole groups held out included', () => {
    for (const [withWeights, offGrid] of [[false, false], [false, true], [true, false]] as const) {
      const trials = seededTrials(90_000, withWeights, true);
      // Some latencies finer than the direct index's 0.01 ms grid: those rows go through the hash table.
      const data = groupTrials(offGrid ? { ...trials, latency: trials.latency.map((value, i) => (i % 7 === 0 ? value + 0.003 : value)) } : trials).groups;
      const player = data.player as Int32Array;
      for (const fold of [0, 3]) {
        // Players 0-9 or 30-39 held out, as a player-wise fold holds them.
        const heldOut = Int32Array.from({ length: data.rows }, (_, i) => i).filter((i) => Math.floor((player[i] as number) / 10) === fold);
        const training = Int32Array.from({ length: data.rows }, (_, i) => i).filter((i) => Math.floor((player[i] as number) / 10) !== fold);
        const left = mergedWithout(data, heldOut);
        if (left === null) throw new Error('whole counts: expected the merged rows');
        expect(differences(groupsOf(collapseOver(gatherCollapsed(data, training), EVERY_COVARIATE)), groupsOf(left))).toEqual([]);
        expect(left.sourceRows).toBe(training.length);
      }
    }
  });

  it('declines counts that are not whole numbers (their differences would not be exact)', () => {
    const data = groupTrials(seededTrials(1_000, false, true)).groups;
    const halves = { ...data, successes: Float64Array.from(data.successes, (value) => value / 2) };
    expect(mergedWithout(halves, Int32Array.of(0, 1, 2))).toBe(null);
  });
});
