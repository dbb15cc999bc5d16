/**
 * `toModelFile(report, provenance)`: the `lagparity/model@1` document of a
 * converged binomial fit, compiled before it is returned (`compileModelFile`:
 * terms, coefficients, a positive semi-definite covariance) with every number
 * finite, so what is written is what `balance` will accept. Its shape is the
 * schema's by its type; the schema itself (zod, about 40 ms to load) is not
 * loaded to check it again, and the tests check the documents `fit` writes
 * against it.
 */
import { type Result, error, fail, ok } from '../issues.js';
import type { ModelFile } from '../formats/model-types.js';
import { MODEL_FORMAT } from '../formats/model-format.js';
import { compileModelFile } from './compiled-model.js';
import type { FitReport } from './fit-report-types.js';

/** Where the fitted data came from. */
export interface ModelProvenance {
  /** File name (not a path: a model file should not leak folder names). */
  readonly file: string;
  readonly rows: number;
  /** SHA-256 of the file's bytes, lower-case hex. */
  readonly sha256: string;
  readonly created_by?: string;
  readonly label?: string;
  /** What the scale multiplied in the fitted data (`hit_area` or `timing_window`). */
  readonly attribute?: 'hit_area' | 'timing_window';
}

/**
 * Build the model file of a fit report. Fails (issue `not_writable`) unless
 * the report is a converged binomial fit; the covariance is the CR1 one when
 * the fit was clustered, else the model-based one (`covariance_kind` says
 * which). The `fit` block carries the statistics, tests, cross-validation,
 * calibration, scale-effect check and warnings of the report.
 *
 * @example
 * const model = toModelFile(fitModel(trials), { file: 'trials.csv', rows: trials.rows, sha256 });
 * if (model.ok) JSON.stringify(model.value, null, 2);
 */
export function toModelFile(report: FitReport, provenance: ModelProvenance): Result<ModelFile> {
  if (report.family !== 'binomial' || report.link === null) {
    return fail([error('not_writable', 'family', `a model file requires the binomial family, got ${report.family}`)]);
  }
  if (report.status !== 'converged' || report.covariance === null || report.statistics === null) {
    return fail([error('not_writable', report.data.file, `a model file requires a converged fit, got status ${report.status}`)]);
  }
  const robust = report.robust_covariance !== null;
  const covariance = (robust ? report.robust_covariance : report.covariance) ?? report.covariance;
  const model: ModelFile = {
    format: MODEL_FORMAT,
    ...(provenance.label === undefined ? {} : { label: provenance.label }),
    ...(provenance.attribute === undefined ? {} : { attribute: provenance.attribute }),
    family: 'binomial',
    link: report.link,
    terms: [...report.terms],
    difficulty: report.difficulty.kind === 'levels'
      ? { kind: 'levels', levels: [...report.difficulty.levels], reference: report.difficulty.reference }
      : { kind: 'numeric' },
    coefficients: {
      names: report.coefficients.map((row) => row.name),
      estimates: report.coefficients.map((row) => row.estimate),
      covariance: covariance.map((row) => [...row]),
      covariance_kind: robust ? 'cluster_robust_cr1' : 'model',
    },
    training: {
      latency_ms: { ...report.training.latency_ms },
      scale: { ...report.training.scale },
      difficulty: Array.isArray(report.training.difficulty)
        ? [...(report.training.difficulty as readonly string[])]
        : { ...(report.training.difficulty as { min: number; max: number }) },
      rows: report.training.rows,
      attempts: report.training.attempts,
      ...(report.training.players === undefined ? {} : { players: report.training.players }),
    },
    fit: {
      status: report.status,
      usable_for_compensation: report.usable_for_compensation,
      likelihood: report.likelihood,
      cluster: report.cluster,
      model_covariance: report.covariance,
      standard_errors: Object.fromEntries(report.coefficients.map((row) => [row.name, { model: row.std_error, robust: row.robust?.std_error ?? null }])),
      statistics: report.statistics,
      likelihood_ratio_tests: report.likelihood_ratio_tests,
      cross_validation: report.cross_validation,
      calibration: report.calibration,
      scale_effect: report.scale_effect,
      baseline_least_squares: report.baseline,
      warnings: report.warnings,
    },
    provenance: {
      file: provenance.file,
      rows: provenance.rows,
      sha256: provenance.sha256,
      ...(provenance.created_by === undefined ? {} : { created_by: provenance.created_by }),
    },
  };
  const unwritable = nonFiniteAt(model, '');
  if (unwritable !== null) {
    return fail([error('not_writable', `${provenance.file}:${unwritable}`, `a model file requires finite numbers (JSON has no NaN or Infinity), got a non-finite value at \`${unwritable}\``)]);
  }
  const compiled = compileModelFile(model, provenance.file);
  if (!compiled.ok) return fail(compiled.issues);
  return ok(model);
}

/** The path of the first number in `value` that JSON cannot hold (NaN, Infinity), or null. */
function nonFiniteAt(value: unknown, path: string): string | null {
  if (typeof value === 'number') return Number.isFinite(value) ? null : path || '(document)';
  if (value === null || typeof value !== 'object') return null;
  for (const [key, entry] of Object.entries(value)) {
    const found = nonFiniteAt(entry, path === '' ? key : `${path}.${key}`);
    if (found !== null) return found;
  }
  return null;
}
