/**
 * Compiling a model file's document once it has the file's shape: check
 * what the schema cannot (terms, coefficients, covariance), precompute what
 * every prediction needs, and hand back a branded object the solver trusts
 * without checking again. No zod here: `compile.ts` adds the schema check
 * for documents from outside; `toModelFile` compiles what it builds.
 *
 * Because no term is quadratic in latency or scale, at a fixed difficulty the
 * linear predictor is
 *
 *     linearPredictor(latency, s) = (a0 + a1 latency) + (b0 + b1 latency) h(s)
 *
 * with h(s) = log s or s. `lineAt(difficulty)` returns those four numbers;
 * the solver works from them alone.
 */
import { markModel } from '../validated.js';
import { type Issue, type Result, at, error, fail, ok, show } from '../issues.js';
import type { ModelFile } from '../formats/model-types.js';
import { type Link, linkFor } from './links.js';
import { semiDefiniteCholesky } from '../numeric/semidefinite-cholesky.js';
import { type PredictorLine, predictorLine } from './predictor-line.js';
import { type DesignColumn, type DifficultyCoding, checkTerms, designColumns, scaleForm } from './terms.js';

export { type PredictorLine, predictorLine } from './predictor-line.js';

declare const compiledBrand: unique symbol;

export interface CompiledModel {
  readonly [compiledBrand]: true;
  readonly link: Link;
  readonly scaleForm: 'log' | 'raw' | 'none';
  readonly columns: readonly DesignColumn[];
  readonly coefficients: Float64Array;
  /** Row-major covariance of the coefficients. */
  readonly covariance: Float64Array;
  readonly difficulty: DifficultyCoding;
  readonly training: ModelFile['training'];
  readonly source: ModelFile;
  /** The predictor line at a difficulty (a number or a level name), or an issue if the model has no such difficulty. */
  lineAt(difficulty: number | string): Result<PredictorLine>;
}

/** Relative tolerance for the covariance symmetry check. */
const SYMMETRY_TOLERANCE = 1e-8;

/**
 * Bounds on a model's numbers. A fitted hit-probability model has
 * coefficients of order 1 (a logit per ms of latency is about -0.01) and
 * variances far below 1; a coefficient beyond 1e6 or a covariance entry
 * beyond 1e100 is not a fit but a crafted file, and its products overflow to
 * Infinity and NaN in predictions, intervals and the report.
 */
export const MAX_COEFFICIENT = 1e6;
export const MAX_COVARIANCE = 1e100;

function checkCoefficients(model: ModelFile, columns: readonly DesignColumn[], file: string | undefined): Issue[] {
  const issues: Issue[] = [];
  const expected = columns.map((column) => column.name);
  const { names, estimates, covariance } = model.coefficients;
  if (names.length !== expected.length || names.some((name, index) => name !== expected[index])) {
    issues.push(error('terms_mismatch', at(file, 'coefficients.names'), `\`coefficients.names\` requires the columns of the terms in order, ${show(expected.join(','))}, got ${show(names.join(','))}`));
  }
  if (estimates.length !== names.length) {
    issues.push(error('terms_mismatch', at(file, 'coefficients.estimates'), `\`coefficients.estimates\` requires one estimate per name (${names.length}), got ${estimates.length}`));
  }
  const duplicate = names.findIndex((name, index) => names.indexOf(name) !== index);
  if (duplicate >= 0) issues.push(error('duplicate_term', at(file, `coefficients.names[${duplicate}]`), `\`coefficients.names\` requires each name once, got ${show(names[duplicate])} again`));
  estimates.forEach((estimate, index) => {
    if (Math.abs(estimate) > MAX_COEFFICIENT) issues.push(error('out_of_range', at(file, `coefficients.estimates[${index}]`), `a coefficient requires a magnitude of at most ${MAX_COEFFICIENT} (a fitted model's are of order 1), got ${show(estimate)}`));
  });
  const size = estimates.length;
  if (covariance.length !== size || covariance.some((row) => row.length !== size)) {
    issues.push(error('bad_covariance', at(file, 'coefficients.covariance'), `\`coefficients.covariance\` requires a ${size} x ${size} matrix, got ${covariance.length} rows of lengths ${show(covariance.map((row) => row.length).join(','))}`));
    return issues;
  }
  const flat = new Float64Array(size * size);
  for (let row = 0; row < size; row += 1) {
    for (let column = 0; column < size; column += 1) flat[row * size + column] = covariance[row]?.[column] ?? 0;
  }
  const huge = flat.findIndex((value) => Math.abs(value) > MAX_COVARIANCE);
  if (huge >= 0) {
    const row = Math.floor(huge / size);
    issues.push(error('out_of_range', at(file, `coefficients.covariance[${row}][${huge - row * size}]`), `a covariance entry requires a magnitude of at most ${MAX_COVARIANCE}, got ${show(flat[huge])}`));
    return issues;
  }
  for (let row = 0; row < size; row += 1) {
    for (let column = row + 1; column < size; column += 1) {
      const upper = flat[row * size + column] ?? 0;
      const lowerValue = flat[column * size + row] ?? 0;
      const scale = Math.max(Math.abs(upper), Math.abs(lowerValue), Number.MIN_VALUE);
      if (Math.abs(upper - lowerValue) > SYMMETRY_TOLERANCE * scale) {
        issues.push(error('bad_covariance', at(file, `coefficients.covariance[${row}][${column}]`), `the covariance requires a symmetric matrix, got ${upper} here and ${lowerValue} at [${column}][${row}]`));
        return issues;
      }
    }
  }
  if (!semiDefiniteCholesky(flat, size).positiveSemiDefinite) {
    issues.push(error('bad_covariance', at(file, 'coefficients.covariance'), 'the covariance requires a positive semi-definite matrix (variances cannot be negative), got one with a negative eigenvalue'));
  }
  return issues;
}

/**
 * Compile a model document that already has the model file's shape (checked
 * by its schema, or built by `toModelFile`): the terms, the coefficient
 * names against them, and a symmetric positive semi-definite covariance.
 * `file` names the source in issues.
 */
export function compileModelFile(model: ModelFile, file?: string): Result<CompiledModel> {
  const termsChecked = checkTerms(model.terms, at(file, 'terms'));
  if (!termsChecked.ok) return fail(termsChecked.issues);
  const columns = designColumns(model.terms, model.difficulty);
  const issues = checkCoefficients(model, columns, file);
  if (issues.length > 0) return fail(issues);
  const coefficients = Float64Array.from(model.coefficients.estimates);
  const size = coefficients.length;
  const covariance = new Float64Array(size * size);
  model.coefficients.covariance.forEach((row, rowIndex) => row.forEach((value, columnIndex) => (covariance[rowIndex * size + columnIndex] = value)));
  const coding = model.difficulty;
  const form = scaleForm(model.terms);
  const compiled = {
    link: linkFor(model.link),
    scaleForm: form,
    columns,
    coefficients,
    covariance,
    difficulty: coding,
    training: model.training,
    source: model,
    lineAt(difficulty: number | string): Result<PredictorLine> {
      return predictorLine(columns, coefficients, coding, difficulty);
    },
  };
  return ok(markModel(compiled) as unknown as CompiledModel);
}
