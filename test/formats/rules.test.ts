import { describe, expect, it } from 'vitest';
import { compileRules, defaultRules } from '../../src/solver/rules.js';
import { MATCHES, readJson } from '../helpers/demo.js';
import { join } from 'node:path';

function issues(input: Record<string, unknown>) {
  const result = compileRules({ format: 'lagparity/rules@1', ...input }, 'rules.json');
  return result.ok ? [] : result.issues;
}

describe('compileRules()', () => {
  it('fills every documented default', () => {
    const rules = defaultRules();
    expect(rules).toMatchObject({ scale_floor: 1, scale_cap: 1.5, max_scale_ratio: null, latency_limit_ms: null, accepted_gap: 0.02, quantisation_step: null, target: { kind: 'best_connected' }, latency_estimator: 'all_samples' });
  });

  it('accepts the bundled league rules', () => {
    expect(compileRules(readJson(join(MATCHES, 'league-rules.json'))).ok).toBe(true);
  });

  it('refuses a cap below the floor, naming the field', () => {
    expect(issues({ scale_floor: 1.2, scale_cap: 1.1 })[0]).toMatchObject({ code: 'contradictory_rules', location: 'rules.json:scale_cap' });
  });

  it('refuses a soft cap at or above the hard cap', () => {
    expect(issues({ scale_cap: 1.5, soft_cap: { above: 1.6, fraction: 0.5 } })[0]).toMatchObject({ code: 'contradictory_rules', location: 'rules.json:soft_cap.above' });
  });

  it('refuses a quantisation step the floor is not a multiple of', () => {
    expect(issues({ quantisation_step: 0.3 })[0]?.location).toBe('rules.json:quantisation_step');
    expect(issues({ quantisation_step: 0.05 })).toEqual([]);
  });

  it.each([1e-300, 5e-324, 1e-7])('refuses a quantisation step of %s, finer than a millionth of the cap (the solve of a 1e-300 step never ended)', (step) => {
    expect(issues({ quantisation_step: step, scale_floor: step === 1e-7 ? 1 : step })).toEqual([expect.objectContaining({ code: 'out_of_range', location: 'rules.json:quantisation_step' })]);
    expect(issues({ quantisation_step: 2e-6 })).toEqual([]);
  });

  it('refuses zero, negative and non-finite limits', () => {
    expect(issues({ scale_cap: 0 })[0]?.message).toMatch(/above 0/);
    expect(issues({ latency_limit_ms: -5 })[0]?.location).toBe('rules.json:latency_limit_ms');
    expect(issues({ max_scale_ratio: 0.5 })[0]?.code).toBe('contradictory_rules');
  });
});
