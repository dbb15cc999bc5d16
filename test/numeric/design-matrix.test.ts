import { describe, expect, it } from 'vitest';
import {
  designMatrixFromColumns,
  entry,
  hasConstantColumn,
  interceptColumn,
  multiply,
  selectRows,
} from '../../src/numeric/design-matrix.js';

describe('designMatrixFromColumns()', () => {
  const design = designMatrixFromColumns([interceptColumn(3), { name: 'latency_ms', values: [10, 20, 30] }]);

  it('stores entries column-major with their names', () => {
    expect(design.rows).toBe(3);
    expect(design.columns).toBe(2);
    expect(design.names).toEqual(['(Intercept)', 'latency_ms']);
    expect(Array.from(design.values)).toEqual([1, 1, 1, 10, 20, 30]);
    expect(entry(design, 2, 1)).toBe(30);
  });

  it('rejects columns of different lengths', () => {
    expect(() => designMatrixFromColumns([interceptColumn(3), { name: 'x', values: [1, 2] }])).toThrowError(/`x` requires 3 rows/);
  });

  it('multiplies by a coefficient vector', () => {
    expect(Array.from(multiply(design, [1, 0.5]))).toEqual([6, 11, 16]);
  });

  it('selects rows in order', () => {
    const kept = selectRows(design, [true, false, true]);
    expect(Array.from(kept.values)).toEqual([1, 1, 10, 30]);
  });

  it('detects a constant non-zero column', () => {
    expect(hasConstantColumn(design)).toBe(true);
    expect(hasConstantColumn(designMatrixFromColumns([{ name: 'x', values: [1, 2, 3] }]))).toBe(false);
    expect(hasConstantColumn(designMatrixFromColumns([{ name: 'zero', values: [0, 0, 0] }]))).toBe(false);
  });
});
