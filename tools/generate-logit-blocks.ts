/**
 * Writes src/model/logit-blocks.ts (npm run logit-blocks:generate): the logit
 * IRLS pass's block function written out for each column count 1 to
 * MAX_COLUMNS, with the triangle's entries and the row in local variables and
 * every loop over columns unrolled. Each does exactly the operations of the
 * general block in src/model/irls-passes.ts, in the same order, so its
 * results are the same bits (test/model/logit-blocks.test.ts checks both, and
 * that the file is this script's output); V8 keeps locals in registers where
 * it keeps typed-array entries in memory, and the pass ran about 1.5 times
 * faster on the 1M-row bench file.
 *
 * Generated source, not code built at run time: the library never evaluates
 * a string (test/security/no-expression-evaluator.test.ts).
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';

/** Column counts with a written-out block; wider designs use the general one. */
export const MAX_COLUMNS = 8;

function blockFunction(k: number): string {
  const lines: string[] = [];
  const at = (array: string, index: string) => `(${array}[${index}] as number)`;
  lines.push(`function logitBlock${k}(block: LogitBlockInput, start: number, end: number): void {`);
  lines.push(`  const { values, ${k > 1 ? 'n, ' : ''}proportions, glmWeights, offset, beta, linearPredictor, diagonal, ${k > 1 ? 'upper, ' : ''}theta, factors, sums } = block;`);
  for (let j = 0; j < k; j += 1) {
    lines.push(`  let d${j} = ${at('diagonal', String(j))};`);
    lines.push(`  let t${j} = ${at('theta', String(j))};`);
    lines.push(`  const f${j} = ${at('factors', String(j))};`);
    lines.push(`  const b${j} = beta === null ? 0 : ${at('beta', String(j))};`);
  }
  for (let j = 0; j < k; j += 1) for (let m = j + 1; m < k; m += 1) lines.push(`  let r${j}_${m} = ${at('upper', String(j * k + m))};`);
  lines.push('  let logLikelihood = 0;');
  lines.push('  let residualSumOfSquares = 0;');
  lines.push('  for (let i = start; i < end; i += 1) {');
  lines.push(`    const weight = ${at('glmWeights', 'i')};`);
  lines.push(`    const proportion = ${at('proportions', 'i')};`);
  lines.push(`    const shift = offset === null ? 0 : ${at('offset', 'i')};`);
  lines.push('    let eta = shift;');
  lines.push('    if (beta === null) {');
  lines.push('      eta = Math.log((weight * proportion + 0.5) / (weight * (1 - proportion) + 0.5));');
  lines.push('    } else {');
  for (let j = 0; j < k; j += 1) lines.push(`      if (b${j} !== 0) eta += ${at('values', j === 0 ? 'i' : `${j} * n + i`)} * b${j};`);
  lines.push('    }');
  lines.push('    linearPredictor[i] = eta;');
  lines.push('    const exponential = Math.exp(-Math.abs(eta));');
  lines.push('    const inverse = 1 / (1 + exponential);');
  lines.push('    const small = exponential * inverse;');
  lines.push('    const softplus = Math.log1p(exponential);');
  lines.push('    let mu: number;');
  lines.push('    let complement: number;');
  lines.push('    let logMu: number;');
  lines.push('    let logComplement: number;');
  lines.push('    if (eta >= 0) {');
  lines.push('      mu = inverse;');
  lines.push('      complement = small;');
  lines.push('      logMu = -softplus;');
  lines.push('      logComplement = -eta - softplus;');
  lines.push('    } else {');
  lines.push('      mu = small;');
  lines.push('      complement = inverse;');
  lines.push('      logMu = eta - softplus;');
  lines.push('      logComplement = -softplus;');
  lines.push('    }');
  lines.push('    if (proportion > 0) logLikelihood += weight * proportion * logMu;');
  lines.push('    if (proportion < 1) logLikelihood += weight * (1 - proportion) * logComplement;');
  lines.push('    const variance = mu * complement;');
  lines.push('    let w = weight * variance;');
  lines.push('    if (!(w > 0) || !Number.isFinite(w)) continue;');
  lines.push('    let y = eta - shift + residualOf(proportion, mu, complement) / variance;');
  for (let j = 0; j < k; j += 1) lines.push(`    ${j === 0 ? 'const' : 'let'} x${j} = ${at('values', j === 0 ? 'i' : `${j} * n + i`)} * f${j};`);
  if (k > 1) lines.push('    columns: {');
  for (let j = 0; j < k; j += 1) {
    lines.push(`      if (x${j} !== 0) {`);
    lines.push(`        const updated = d${j} + w * x${j} * x${j};`);
    lines.push('        const reciprocal = 1 / updated;');
    lines.push(`        const c = d${j} * reciprocal;`);
    lines.push(`        const s = w * x${j} * reciprocal;`);
    lines.push('        w *= c;');
    lines.push(`        d${j} = updated;`);
    for (let m = j + 1; m < k; m += 1) {
      lines.push(`        const x${j}_${m} = x${m};`);
      lines.push(`        const r${j}_${m}_ = r${j}_${m};`);
      lines.push(`        x${m} = x${j}_${m} - x${j} * r${j}_${m}_;`);
      lines.push(`        r${j}_${m} = c * r${j}_${m}_ + s * x${j}_${m};`);
    }
    lines.push(`        const t${j}_ = t${j};`);
    lines.push('        const previous = y;');
    lines.push(`        y = previous - x${j} * t${j}_;`);
    lines.push(`        t${j} = c * t${j}_ + s * previous;`);
    if (j < k - 1) lines.push('        if (w === 0) break columns;');
    lines.push('      }');
  }
  if (k > 1) lines.push('    }');
  lines.push('    residualSumOfSquares += w * y * y;');
  lines.push('  }');
  for (let j = 0; j < k; j += 1) lines.push(`  diagonal[${j}] = d${j};`, `  theta[${j}] = t${j};`);
  for (let j = 0; j < k; j += 1) for (let m = j + 1; m < k; m += 1) lines.push(`  upper[${j * k + m}] = r${j}_${m};`);
  lines.push('  sums[0] = logLikelihood;');
  lines.push('  sums[1] = residualSumOfSquares;');
  lines.push('}');
  return lines.join('\n');
}

/** The text of src/model/logit-blocks.ts. */
export function logitBlocksSource(): string {
  const blocks = Array.from({ length: MAX_COLUMNS }, (_, index) => blockFunction(index + 1));
  return `// Generated by tools/generate-logit-blocks.ts (npm run logit-blocks:generate); do not edit.
// The logit pass's block (src/model/irls-passes.ts) written out for 1 to ${MAX_COLUMNS} columns: the same
// operations in the same order, the triangle and the row in local variables. Why: see the generator.
import { residualOf } from './glm-rows.js';

/** What a block reads and writes: the rows, the coefficients (null: R's start), the triangle, and [log-likelihood, residual sum of squares] out. */
export interface LogitBlockInput {
  readonly values: Float64Array;
  readonly n: number;
  readonly proportions: Float64Array;
  readonly glmWeights: Float64Array;
  readonly offset: ArrayLike<number> | null;
  readonly beta: Float64Array | null;
  readonly linearPredictor: Float64Array;
  readonly diagonal: Float64Array;
  readonly upper: Float64Array;
  readonly theta: Float64Array;
  readonly factors: Float64Array;
  readonly sums: Float64Array;
}

export type LogitBlock = (block: LogitBlockInput, start: number, end: number) => void;

${blocks.join('\n\n')}

/** The written-out block for a design of k columns, at index k (undefined: none, use the general block). */
export const LOGIT_BLOCKS: readonly (LogitBlock | undefined)[] = [undefined, ${Array.from({ length: MAX_COLUMNS }, (_, index) => `logitBlock${index + 1}`).join(', ')}];
`;
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const path = join(import.meta.dirname, '..', 'src', 'model', 'logit-blocks.ts');
  writeFileSync(path, logitBlocksSource());
  process.stderr.write(`wrote ${path}\n`);
}
