import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { compileModel } from '../../src/model/compile.js';
import { MATCHES, readJson } from '../helpers/demo.js';

const demo = readJson(join(MATCHES, 'ground-truth.model.json')) as Record<string, unknown> & { coefficients: Record<string, unknown> };

function issuesOf(change: (model: typeof demo) => unknown) {
  const copy = structuredClone(demo);
  const result = compileModel(change(copy) ?? copy, 'model.json');
  return result.ok ? [] : result.issues;
}

describe('compileModel()', () => {
  it('compiles the bundled models', () => {
    expect(compileModel(demo).ok).toBe(true);
    expect(compileModel(readJson(join(MATCHES, 'model.json'))).ok).toBe(true);
  });

  it('splits the linear predictor into parts affine in latency and in the scale term', () => {
    const result = compileModel(demo);
    if (!result.ok) throw new Error('compile failed');
    const line = result.value.lineAt('veteran');
    // Ground truth (tools/demo-scenario.ts): intercept 0.9, veteran -0.5, latency -0.008, log_scale 1.6, latency x log_scale 0.004.
    expect(line).toEqual({ ok: true, warnings: [], value: { base: 0.4, basePerMs: -0.008, scaleSlope: 1.6, scaleSlopePerMs: 0.004 } });
    expect(result.value.lineAt('nightmare').ok).toBe(false);
    expect(result.value.lineAt(3).ok).toBe(false);
  });

  it('refuses non-finite coefficients, naming the field', () => {
    const issues = issuesOf((model) => {
      (model.coefficients.estimates as unknown[])[2] = null;
    });
    expect(issues[0]?.location).toBe('model.json:coefficients.estimates[2]');
  });

  it('refuses terms that do not match the coefficient names', () => {
    const issues = issuesOf((model) => {
      model.terms = ['intercept', 'latency', 'log_scale', 'difficulty'];
    });
    expect(issues[0]?.code).toBe('terms_mismatch');
  });

  it('refuses a covariance that is not symmetric, or not positive semi-definite', () => {
    const size = 6;
    const asymmetric = issuesOf((model) => {
      const matrix = Array.from({ length: size }, (_, row) => Array.from({ length: size }, (__, column) => (row === column ? 1 : 0)));
      (matrix[0] as number[])[1] = 0.5;
      model.coefficients.covariance = matrix;
    });
    expect(asymmetric[0]).toMatchObject({ code: 'bad_covariance', location: 'model.json:coefficients.covariance[0][1]' });
    const indefinite = issuesOf((model) => {
      model.coefficients.covariance = Array.from({ length: size }, (_, row) => Array.from({ length: size }, (__, column) => (row === column ? (row === 3 ? -1 : 1) : 0)));
    });
    expect(indefinite[0]?.code).toBe('bad_covariance');
    const correlated = issuesOf((model) => {
      // [[1, 2], [2, 1]] has eigenvalues 3 and -1.
      model.coefficients.covariance = Array.from({ length: size }, (_, row) => Array.from({ length: size }, (__, column) => (row === column ? 1 : row < 2 && column < 2 ? 2 : 0)));
    });
    expect(correlated[0]?.code).toBe('bad_covariance');
  });

  it('refuses an unknown format version', () => {
    expect(issuesOf((model) => ({ ...model, format: 'lagparity/model@2' }))[0]?.location).toBe('model.json:format');
  });
});
