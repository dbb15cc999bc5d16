import { describe, expect, it } from 'vitest';
import type { SizeStudyGoal } from '../../src/formats/plan-types.js';
import { createRandomSource } from '../../src/random.js';
import { recommendSize, widthQuantile } from '../../src/plan/summarise-sizes.js';
import type { SizeRow } from '../../src/plan/size-study-types.js';

function row(participants: number, repetitions: number, p90: [number, number, number], power: number, minutes = 30): SizeRow {
  const width = { estimate: p90[0], mc_low: p90[1], mc_high: p90[2] };
  const share = (value: number) => ({ estimate: value, mc_se: Math.sqrt((value * (1 - value)) / 1000) });
  return {
    participants,
    repetitions,
    rounds_per_participant: 24,
    session_minutes: minutes,
    studies: 1000,
    latency_power: share(power),
    scale_power: share(power),
    unusable: share(0),
    unusable_reasons: { separation: 0, iteration_limit: 0, rank_deficient: 0, scale_not_increasing: 0, no_scale_at_latency: 0 },
    width_median: width,
    width_p90: width,
    coverage: share(0.9),
    median_scale: 1.5,
    meets_goal: p90[0] <= 0.2 && power >= 0.8,
  };
}

const goal: SizeStudyGoal = { interval_width: 0.2, width_statistic: 'p90', latency_power: 0.8 };

describe('widthQuantile()', () => {
  it('takes the order statistic and the ranks n q -/+ 1.96 sqrt(n q (1 - q)) (1..100, q = 0.9: 90, ranks 84 and 96)', () => {
    const sorted = Float64Array.from({ length: 100 }, (_, i) => i + 1);
    expect(widthQuantile(sorted, 0.9)).toEqual({ estimate: 90, mc_low: 84, mc_high: 96 }); // Conover (1999) §3.2, large-sample ranks, by hand
  });

  it('is unbounded (null) where the quantile falls on studies without an interval', () => {
    const sorted = Float64Array.from([0.1, 0.2, 0.3, Infinity, Infinity]);
    expect(widthQuantile(sorted, 0.9).estimate).toBeNull();
    expect(widthQuantile(sorted, 0.5).estimate).toBe(0.3);
  });

  it('covers the true 0.9-quantile of uniform widths about 95% of the time (2,000 seeded samples of 200)', () => {
    const random = createRandomSource(9);
    let covered = 0;
    for (let sample = 0; sample < 2000; sample += 1) {
      const sorted = Float64Array.from({ length: 200 }, () => random()).sort();
      const { mc_low: low, mc_high: high } = widthQuantile(sorted, 0.9);
      if ((low as number) <= 0.9 && 0.9 <= (high as number)) covered += 1;
    }
    // A distribution-free interval from order statistics covers at least its level (Conover 1999, §3.2); 3 Monte Carlo SEs either side.
    expect(covered / 2000).toBeGreaterThan(0.95 - 3 * Math.sqrt((0.95 * 0.05) / 2000));
    expect(covered / 2000).toBeLessThan(0.99);
  });
});

describe('recommendSize()', () => {
  it('recommends the smallest size that meets the goal, clear-cut when the Monte Carlo error cannot move it', () => {
    const result = recommendSize([row(8, 2, [0.3, 0.28, 0.32], 0.95), row(16, 2, [0.18, 0.17, 0.19], 0.99), row(24, 2, [0.15, 0.14, 0.16], 1)], goal, 45);
    expect(result.recommended).toEqual({ participants: 16, repetitions: 2 });
    expect(result.recommendations[0]?.borderline).toBe(false);
    expect(result.closest).toBeNull();
  });

  it('marks a recommendation borderline when the goal lies within the Monte Carlo interval there or one size below', () => {
    const here = recommendSize([row(8, 2, [0.21, 0.19, 0.23], 0.95), row(16, 2, [0.199, 0.19, 0.21], 0.99)], goal, 45);
    expect(here.recommendations[0]).toMatchObject({ participants: 16, borderline: true });
    const below = recommendSize([row(8, 2, [0.205, 0.195, 0.215], 0.95), row(16, 2, [0.15, 0.14, 0.16], 0.99)], goal, 45);
    expect(below.recommendations[0]).toMatchObject({ participants: 16, borderline: true });
  });

  it('prefers a session within the limit, then the fewest participants', () => {
    const rows = [row(8, 2, [0.25, 0.24, 0.26], 0.9), row(16, 2, [0.18, 0.17, 0.19], 0.9), row(8, 3, [0.19, 0.18, 0.195], 0.9, 50), row(16, 3, [0.15, 0.14, 0.16], 0.9, 50)];
    expect(recommendSize(rows, goal, 45).recommended).toEqual({ participants: 16, repetitions: 2 });
    expect(recommendSize(rows, goal, 60).recommended).toEqual({ participants: 8, repetitions: 3 });
  });

  it('names the closest size when none meets the goal', () => {
    const result = recommendSize([row(8, 2, [0.4, 0.38, 0.42], 0.95), row(16, 2, [0.3, 0.29, 0.31], 0.99)], goal, 45);
    expect(result.recommended).toBeNull();
    expect(result.recommendations[0]?.participants).toBeNull();
    expect(result.closest).toMatchObject({ participants: 16, repetitions: 2 });
    expect(result.closest?.message).toContain('90th percentile width 0.300');
  });
});
