import { describe, expect, it } from 'vitest';
import { DEFAULT_TERMS, columnValue, designColumns, parseTermList, scaleForm } from '../../src/model/terms.js';

describe('parseTermList()', () => {
  it('adds the intercept and keeps the given order', () => {
    expect(parseTermList('latency,log_scale,difficulty,latency_x_log_scale')).toEqual({ ok: true, warnings: [], value: [...DEFAULT_TERMS] });
  });

  it('drops the intercept on no_intercept', () => {
    expect(parseTermList('no_intercept,latency,scale')).toMatchObject({ ok: true, value: ['latency', 'scale'] });
  });

  it('refuses unknown names and mixed raw and log scale', () => {
    expect(parseTermList('latency,speed')).toMatchObject({ ok: false, issues: [{ code: 'unknown_term' }] });
    expect(parseTermList('scale,log_scale')).toMatchObject({ ok: false, issues: [{ code: 'mixed_scale_terms' }] });
  });
});

describe('designColumns()', () => {
  it('dummy-codes difficulty levels against the reference', () => {
    const columns = designColumns(['intercept', 'difficulty', 'latency_x_difficulty'], { kind: 'levels', levels: ['a', 'b', 'c'], reference: 'b' });
    expect(columns.map((column) => column.name)).toEqual(['intercept', 'difficulty[a]', 'difficulty[c]', 'latency_x_difficulty[a]', 'latency_x_difficulty[c]']);
    const last = columns[4];
    if (last === undefined) throw new Error('missing column');
    expect(columnValue(last, 40, 0, 'c')).toBe(40);
    expect(columnValue(last, 40, 0, 'b')).toBe(0);
  });

  it('knows how the scale enters', () => {
    expect(scaleForm(DEFAULT_TERMS)).toBe('log');
    expect(scaleForm(['intercept', 'scale'])).toBe('raw');
    expect(scaleForm(['intercept', 'latency'])).toBe('none');
  });
});
