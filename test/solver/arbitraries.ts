/**
 * Seeded fast-check generators of schema-valid models, lobbies and rules for
 * the solver's property tests, and small builders for fixed cases.
 *
 * Models: logit, probit or cloglog; the scale as log_scale or raw scale;
 * a numeric difficulty. Coefficients are drawn so that the scale effect is
 * positive at every latency in 0..300 ms and hit probability falls with
 * latency at every scale up to 30 (beyond every search limit the rules below
 * allow): the assumptions the issue states for the invariants.
 */
import fc from 'fast-check';
import { type CompiledModel, compileModel } from '../../src/model/compile.js';
import type { LinkName } from '../../src/model/links.js';
import { type CompiledRules, compileRules } from '../../src/solver/rules.js';
import type { LobbyFile } from '../../src/formats/lobby-file.js';
import type { RulesInput } from '../../src/formats/rules-file.js';

export const MAX_LATENCY = 300;
const LARGEST_SCALE = 30;

export interface ModelSpec {
  readonly link: LinkName;
  readonly form: 'log' | 'raw';
  readonly intercept: number;
  readonly latency: number;
  readonly scale: number;
  readonly difficulty: number;
  readonly interaction: number;
  /** Coefficient variances (diagonal covariance); 0 by default. */
  readonly variance?: number;
}

/** A model file (lagparity/model@1) for the spec. */
export function modelDocument(spec: ModelSpec): Record<string, unknown> {
  const scaleTerm = spec.form === 'log' ? 'log_scale' : 'scale';
  const terms = ['intercept', 'latency', scaleTerm, 'difficulty', `latency_x_${scaleTerm}`];
  const variance = spec.variance ?? 0;
  return {
    format: 'lagparity/model@1',
    family: 'binomial',
    link: spec.link,
    terms,
    difficulty: { kind: 'numeric' },
    coefficients: {
      names: terms,
      estimates: [spec.intercept, spec.latency, spec.scale, spec.difficulty, spec.interaction],
      covariance: terms.map((_, row) => terms.map((__, column) => (row === column ? variance : 0))),
      covariance_kind: 'assumed',
    },
    training: { latency_ms: { min: 0, max: MAX_LATENCY }, scale: { min: 0.5, max: 3 }, difficulty: { min: 0, max: 2 }, rows: 0, attempts: 0 },
    provenance: { file: 'generated', rows: 0, sha256: '0'.repeat(64) },
  };
}

export function compiled(spec: ModelSpec): CompiledModel {
  const result = compileModel(modelDocument(spec));
  if (!result.ok) throw new Error(result.issues.map((issue) => issue.message).join('; '));
  return result.value;
}

export function rulesOf(input: Omit<RulesInput, 'format'>): CompiledRules {
  const result = compileRules({ format: 'lagparity/rules@1', ...input });
  if (!result.ok) throw new Error(result.issues.map((issue) => issue.message).join('; '));
  return result.value;
}

export function lobbyOf(latencies: readonly (number | number[])[], teams?: readonly (string | undefined)[], difficulty: number = 1): LobbyFile {
  return {
    format: 'lagparity/lobby@1',
    match_id: 'generated',
    attribute: 'hit_area',
    difficulty,
    players: latencies.map((latency, index) => {
      const team = teams?.[index];
      return team === undefined ? { id: `p${String(index).padStart(3, '0')}`, latency_ms: latency } : { id: `p${String(index).padStart(3, '0')}`, team, latency_ms: latency };
    }),
  };
}

const double = (min: number, max: number) => fc.double({ min, max, noNaN: true, noDefaultInfinity: true });

export const modelSpecArbitrary: fc.Arbitrary<ModelSpec> = fc
  .record({
    link: fc.constantFrom<LinkName>('logit', 'probit', 'cloglog'),
    form: fc.constantFrom<'log' | 'raw'>('log', 'raw'),
    intercept: double(-1.5, 2),
    latency: double(-0.02, -0.002),
    scale: double(0.3, 3),
    difficulty: double(-0.6, 0),
    interactionShare: double(-0.9, 0.9),
  })
  .map(({ interactionShare, ...rest }) => {
    const largestTerm = rest.form === 'log' ? Math.log(LARGEST_SCALE) : LARGEST_SCALE;
    // Positive share: bounded so that latency + interaction x h(s) < 0 up to the largest scale;
    // negative share: bounded so that scale + interaction x latency > 0 up to MAX_LATENCY, and
    // latency + interaction x log(s) < 0 down to the smallest floor (0.5).
    const interaction = interactionShare >= 0 ? (interactionShare * -rest.latency) / largestTerm : interactionShare * Math.min(rest.scale / MAX_LATENCY, -rest.latency / Math.abs(Math.log(0.5)));
    return { ...rest, interaction };
  });

const latencyArbitrary = double(0, MAX_LATENCY);

/** Players' latencies: point values, or sample lists of 1-16 values around a base. */
export const lobbyLatenciesArbitrary = (points: boolean): fc.Arbitrary<(number | number[])[]> =>
  fc.array(
    points
      ? latencyArbitrary
      : fc.oneof(latencyArbitrary, fc.tuple(latencyArbitrary, fc.array(double(0, 80), { minLength: 1, maxLength: 16 })).map(([base, jitter]) => jitter.map((extra) => Math.min(MAX_LATENCY, base + extra)))),
    { minLength: 1, maxLength: 64 },
  );

export const teamsArbitrary = (count: number) => fc.array(fc.constantFrom<string | undefined>('red', 'blue', 'green', undefined), { minLength: count, maxLength: count });

/** Schema-valid rules exercising every option. */
export const rulesArbitrary: fc.Arbitrary<Omit<RulesInput, 'format'>> = fc
  .record({
    step: fc.constantFrom<number | null>(null, null, 0.05, 0.1, 0.25),
    floor: fc.constantFrom(1, 1, 1, 0.5, 1.5),
    capExtra: double(0, 2),
    ratio: fc.option(double(1, 3), { nil: null }),
    budget: fc.option(double(0, 6), { nil: null }),
    limit: fc.option(double(20, MAX_LATENCY), { nil: null }),
    soft: fc.option(fc.record({ share: double(0.05, 0.95), fraction: double(0.1, 0.9) }), { nil: null }),
    target: fc.oneof(
      fc.constant({ kind: 'best_connected' as const }),
      latencyArbitrary.map((latency) => ({ kind: 'reference_latency' as const, latency_ms: latency })),
      double(0.05, 0.95).map((probability) => ({ kind: 'fixed' as const, probability })),
    ),
    estimator: fc.oneof(fc.constant<'all_samples' | 'median'>('all_samples'), fc.constant<'all_samples' | 'median'>('median'), double(0, 100).map((percentile) => ({ percentile }))),
  })
  .map(({ step, floor, capExtra, ratio, budget, limit, soft, target, estimator }) => {
    const cap = Math.min(floor + capExtra, 3);
    return {
      scale_floor: floor,
      scale_cap: cap,
      max_scale_ratio: ratio,
      assistance_budget: budget,
      latency_limit_ms: limit,
      quantisation_step: step,
      soft_cap: soft === null || cap - floor < 1e-6 ? null : { above: floor + soft.share * (cap - floor), fraction: soft.fraction },
      target,
      latency_estimator: estimator,
    };
  });
