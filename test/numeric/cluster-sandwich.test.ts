import { describe, expect, it } from 'vitest';
import { clusterSandwichCovariance, compactClusters } from '../../src/numeric/cluster-sandwich.js';

describe('clusterSandwichCovariance()', () => {
  it('applies B M B with the CR1 factor G/(G-1) (N-1)/(N-K)', () => {
    // One parameter, bread 1: cluster sums 1+2 = 3 and 3+4 = 7, M = 9 + 49 = 58,
    // factor 2/1 * 3/3 = 2, so V = 116 (Cameron & Miller 2015, eq. for CR1, by hand).
    const covariance = clusterSandwichCovariance({
      bread: Float64Array.of(1),
      scores: Float64Array.of(1, 2, 3, 4),
      clusters: [0, 0, 1, 1],
      clusterCount: 2,
      observationCount: 4,
      parameterCount: 1,
    });
    expect(covariance?.[0]).toBeCloseTo(116, 12); // hand computation above
  });

  it('scales by the bread on both sides', () => {
    // Bread diag(2, 3), scores with cluster sums u = (1, 1) and (1, -1): M = [[2, 0], [0, 2]],
    // B M B = diag(8, 18), factor 2/1 * 3/2 = 3 -> diag(24, 54) (hand computation).
    const covariance = clusterSandwichCovariance({
      bread: Float64Array.of(2, 0, 0, 3),
      scores: Float64Array.of(1, 0, 0, 1, 1, -1, 0, 0),
      clusters: [0, 0, 1, 1],
      clusterCount: 2,
      observationCount: 4,
      parameterCount: 2,
    });
    expect(Array.from(covariance ?? [])).toEqual([24, 0, 0, 54]);
  });

  it('returns null for a single cluster', () => {
    const covariance = clusterSandwichCovariance({
      bread: Float64Array.of(1),
      scores: Float64Array.of(1, 2),
      clusters: [0, 0],
      clusterCount: 1,
      observationCount: 2,
      parameterCount: 1,
    });
    expect(covariance).toBeNull();
  });
});

describe('compactClusters()', () => {
  it('renumbers the kept rows by first appearance and counts only clusters that occur', () => {
    const { indices, count } = compactClusters([7, 3, 7, 9, 3], [true, true, true, false, true]);
    expect(Array.from(indices)).toEqual([0, 1, 0, 1]);
    expect(count).toBe(2);
  });

  it('numbers large cluster ids the same way (the map path)', () => {
    const { indices, count } = compactClusters([4e9, 3, 4e9, 12, 3], [true, true, true, true, true]);
    expect(Array.from(indices)).toEqual([0, 1, 0, 2, 1]);
    expect(count).toBe(3);
  });
});
