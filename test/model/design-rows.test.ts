/**
 * `designRows` (one design row at a time: the merged fit's sweep, the fold
 * starts, the folds' held-out predictions, the field check's band figures)
 * against `buildDesign` (the matrix): the same bits in every entry, so the
 * reports that switched from one to the other stay byte-identical. Invented
 * rows from a seeded generator, with more distinct scales than either keeps
 * the terms of.
 */
import { describe, expect, it } from 'vitest';
import type { CollapsedTrials } from '../../src/model/collapsed-trials.js';
import { buildDesign, designRows } from '../../src/model/design.js';
import { type DifficultyCoding, type TermName } from '../../src/model/terms.js';
import { createRandomSource } from '../../src/random.js';

function rows(count: number, numeric: boolean): CollapsedTrials {
  const random = createRandomSource(7);
  const scales = [1, 1.25, 1.5, 0.8, 2, 1.1, 1.3, 1.7, 1.9, 0.9, 1.05];
  return {
    rows: count,
    latency: Float64Array.from({ length: count }, () => Math.round(2000 * random()) / 10),
    // Early rows repeat a few scales; later ones are drawn from a continuum.
    scale: Float64Array.from({ length: count }, (_, i) => (i < count / 2 ? (scales[i % scales.length] as number) : 0.5 + 2 * random())),
    difficulty: Float64Array.from({ length: count }, (_, i) => (numeric ? 0.5 * (i % 5) : i % 3)),
    player: null,
    successes: new Float64Array(count),
    attempts: new Float64Array(count).fill(1),
    weight: new Float64Array(count).fill(1),
    sourceRows: count,
  };
}

const TERM_SETS: readonly (readonly TermName[])[] = [
  ['intercept', 'latency', 'log_scale', 'difficulty', 'latency_x_log_scale'],
  ['intercept', 'latency', 'scale', 'difficulty', 'latency_x_scale', 'latency_x_difficulty', 'scale_x_difficulty'],
  ['latency', 'log_scale', 'log_scale_x_difficulty'],
];

describe('designRows()', () => {
  for (const numeric of [false, true]) {
    const coding: DifficultyCoding = numeric ? { kind: 'numeric' } : { kind: 'levels', levels: ['rookie', 'veteran', 'elite'], reference: 'rookie' };
    for (const terms of TERM_SETS) {
      it(`writes buildDesign's row, bit for bit (${numeric ? 'numeric' : 'level'} difficulty, ${terms.join(' + ')})`, () => {
        const data = rows(400, numeric);
        const { matrix } = buildDesign(data, terms, coding);
        const row = designRows(terms, coding);
        const out = new Float64Array(matrix.columns);
        for (let i = 0; i < data.rows; i += 1) {
          row(data.latency[i] as number, data.scale[i] as number, data.difficulty[i] as number, out);
          for (let j = 0; j < matrix.columns; j += 1) expect(Object.is(out[j], matrix.values[j * data.rows + i])).toBe(true);
        }
      });
    }
  }
});
