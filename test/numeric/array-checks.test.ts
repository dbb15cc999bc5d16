import { describe, expect, it } from 'vitest';
import { checkClusters, checkFinite, checkLength } from '../../src/numeric/array-checks.js';

describe('checkLength()', () => {
  it('reports a length mismatch with the field and both lengths', () => {
    expect(checkLength('trials', [1, 2], 3)).toEqual([
      {
        code: 'length_mismatch',
        severity: 'error',
        location: 'trials',
        message: '`trials` requires 3 entries (one per design row), got 2',
      },
    ]);
    expect(checkLength('trials', [1, 2, 3], 3)).toEqual([]);
  });
});

describe('checkFinite()', () => {
  it('reports the first non-finite or negative entry by index', () => {
    expect(checkFinite('successes', [1, Number.NaN, Infinity])[0]?.location).toBe('successes[1]');
    expect(checkFinite('trials', [1, -2], true)[0]?.code).toBe('negative');
    expect(checkFinite('trials', [1, 2], true)).toEqual([]);
  });
});

describe('checkClusters()', () => {
  it('requires non-negative integers, one per row', () => {
    expect(checkClusters([0, 1.5], 2)[0]?.code).toBe('invalid_cluster');
    expect(checkClusters([0, 1], 3)[0]?.code).toBe('length_mismatch');
    expect(checkClusters([0, 4], 2)).toEqual([]);
  });
});
