/**
 * The residual latency effect: how the live log-odds of a hit move with
 * latency beyond what the model predicted at the scales applied,
 *
 *     logit P(hit) = q + a + c L,   q = logit of the model's prediction (offset),
 *
 * reported as c x 100 (log-odds per 100 ms) with a 95% cluster-robust
 * interval. c = 0 when the model's latency effect is right at the scales
 * played; c < 0 when high latency costs more than the model says (the scales
 * fall short), c > 0 when it costs less (they overshoot).
 *
 * Cost: one fit of two columns.
 */
import type { FieldEstimate } from './field-types.js';
import { type FieldRows, fitField, robustError, twoSidedCritical } from './field-fit.js';
import { designMatrixFromColumns, interceptColumn } from '../numeric/design-matrix.js';

export function residualLatencyEffect(rows: FieldRows, offset: Float64Array, latency: Float64Array): { ok: true; value: FieldEstimate } | { ok: false; reason: string } {
  const design = designMatrixFromColumns([interceptColumn(offset.length), { name: 'latency_ms', values: latency }]);
  const result = fitField(rows, design, { offset, start: [0, 0] });
  if (!result.ok) return result;
  const estimate = 100 * (result.fit.coefficients[1] as number);
  const standardError = 100 * robustError(result.fit, 1);
  const critical = twoSidedCritical(0.95);
  return { ok: true, value: { estimate, std_error: standardError, lower: estimate - critical * standardError, upper: estimate + critical * standardError, level: 0.95 } };
}
