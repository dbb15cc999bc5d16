import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { compileModel } from '../../src/model/compile.js';
import { designColumns } from '../../src/model/terms.js';
import { semiDefiniteCholesky } from '../../src/numeric/semidefinite-cholesky.js';
import { neededScale, neededScaleInterval } from '../../src/plan/compensation-scale.js';
import { createRandomSource, standardNormalDraw } from '../../src/random.js';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
import { compileRules } from '../../src/solver/rules.js';
import { MATCHES, readJson } from '../helpers/demo.js';

describe('neededScale()', () => {
  it('restores the reference hit probability at scale 1 (property, 300 runs)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -2, max: 2, noNaN: true }),
        fc.double({ min: -0.02, max: 0, noNaN: true }),
        fc.double({ min: 0.2, max: 3, noNaN: true }),
        fc.double({ min: -0.003, max: 0.003, noNaN: true }),
        fc.integer({ min: 0, max: 300 }),
        fc.constantFrom('log' as const, 'raw' as const),
        (base, basePerMs, scaleSlope, scaleSlopePerMs, latency, form) => {
          const line = { base, basePerMs, scaleSlope, scaleSlopePerMs };
          const scale = neededScale(line, form, latency, 0);
          const slope = scaleSlope + scaleSlopePerMs * latency;
          if (scale === null) {
            expect(slope <= 0 || form === 'raw').toBe(true);
            return;
          }
          const term = (s: number) => (form === 'log' ? Math.log(s) : s);
          const predictor = (l: number, s: number) => base + basePerMs * l + (scaleSlope + scaleSlopePerMs * l) * term(s);
          expect(predictor(latency, scale)).toBeCloseTo(predictor(0, 1), 9);
        },
      ),
      { seed: 2302, numRuns: 300 },
    );
  });

  it("agrees with the lobby solver's inverse for the demo model (a player at 125 ms against one at 8 ms, no cap)", () => {
    const model = compileModel(readJson(`${MATCHES}/model.json`));
    const rules = compileRules({ format: 'lagparity/rules@1', scale_cap: 10 });
    if (!model.ok || !rules.ok) throw new Error('demo model or rules do not compile');
    const lobby = { format: 'lagparity/lobby@1' as const, match_id: 'm', attribute: 'hit_area' as const, difficulty: 'veteran', players: [{ id: 'near', latency_ms: 8 }, { id: 'far', latency_ms: 125 }] };
    const result = balanceLobby(lobby as never, model.value, rules.value);
    if (result.status === 'rejected') throw new Error('rejected');
    const line = model.value.lineAt('veteran');
    if (!line.ok) throw new Error('no line');
    const far = result.players.find((player) => player.id === 'far');
    expect(neededScale(line.value, 'log', 125, 8)).toBeCloseTo(far?.scale ?? Number.NaN, 9);
  });

  it('has no answer where the scale does not help', () => {
    expect(neededScale({ base: 0, basePerMs: -0.01, scaleSlope: 1, scaleSlopePerMs: -0.01 }, 'log', 150, 0)).toBeNull();
  });
});

describe('neededScaleInterval()', () => {
  const terms = ['intercept', 'latency', 'log_scale', 'latency_x_log_scale'] as const;
  const columns = designColumns([...terms], { kind: 'numeric' });
  const estimates = [0.9, -0.008, 1.6, 0.002];
  // A covariance of the size a study of a few dozen players gives (invented, positive definite).
  const covariance = [4e-3, -1.5e-5, -3e-3, 1e-5, -1.5e-5, 1.2e-7, 1e-5, -6e-8, -3e-3, 1e-5, 1.2e-2, -5e-5, 1e-5, -6e-8, -5e-5, 4e-7];
  const fitted = { columns, coding: { kind: 'numeric' as const }, estimates, covariance };
  const termAt = (coefficients: readonly number[]) => {
    const [, a1, b0, b1] = coefficients as [number, number, number, number];
    return (a1 * (0 - 125)) / (b0 + b1 * 125);
  };

  it('is the delta method: its standard error matches a finite-difference gradient', () => {
    const interval = neededScaleInterval(fitted, 0, 'log', 125, 0);
    if (interval === null) throw new Error('no interval');
    const gradient = estimates.map((_, j) => {
      const step = 1e-6 * Math.max(1, Math.abs(estimates[j] as number));
      const up = estimates.map((value, k) => (k === j ? value + step : value));
      const down = estimates.map((value, k) => (k === j ? value - step : value));
      return (termAt(up) - termAt(down)) / (2 * step);
    });
    let variance = 0;
    for (let a = 0; a < 4; a += 1) for (let b = 0; b < 4; b += 1) variance += (gradient[a] as number) * (covariance[a * 4 + b] as number) * (gradient[b] as number);
    expect(interval.termStandardError).toBeCloseTo(Math.sqrt(variance), 8);
    expect(interval.scale).toBeCloseTo(Math.exp(termAt(estimates)), 12);
    // The 90% interval: h* -/+ qnorm(0.95) se, mapped through exp.
    expect(Math.log(interval.upper) - Math.log(interval.scale)).toBeCloseTo(1.6448536269514722 * interval.termStandardError, 10);
  });

  it('agrees with parametric draws from the covariance (the alternative the docs name), within Monte Carlo error', () => {
    const interval = neededScaleInterval(fitted, 0, 'log', 125, 0);
    if (interval === null) throw new Error('no interval');
    const { lower } = semiDefiniteCholesky(covariance, 4);
    const random = createRandomSource(5);
    const draws = Array.from({ length: 20_000 }, () => {
      const z = [0, 1, 2, 3].map(() => standardNormalDraw(random));
      const coefficients = estimates.map((value, row) => value + [0, 1, 2, 3].reduce((sum, k) => sum + (lower[row * 4 + k] as number) * (z[k] as number), 0));
      return termAt(coefficients);
    });
    const mean = draws.reduce((sum, value) => sum + value, 0) / draws.length;
    const sd = Math.sqrt(draws.reduce((sum, value) => sum + (value - mean) ** 2, 0) / (draws.length - 1));
    // The ratio is nearly linear at this precision: draws and delta method agree to a few per cent.
    expect(Math.abs(sd / interval.termStandardError - 1)).toBeLessThan(0.03);
  });
});
