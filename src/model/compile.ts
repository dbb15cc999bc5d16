/**
 * Compiling a model file: validate it against the model file's schema, then
 * compile it (`compiled-model.ts`): check the terms, coefficients and
 * covariance, precompute what every prediction needs, and hand back a
 * branded object the solver trusts without checking again.
 */
import { parseDocument } from '../formats/parse-document.js';
import type { Result } from '../issues.js';
import { modelFileSchema } from '../formats/model-file.js';
import { type CompiledModel, compileModelFile } from './compiled-model.js';

export { type CompiledModel, compileModelFile } from './compiled-model.js';
export { type PredictorLine, predictorLine } from './predictor-line.js';

/**
 * Validate a model document (already parsed from JSON) and compile it.
 * `file` names the source in issues.
 */
export function compileModel(input: unknown, file?: string): Result<CompiledModel> {
  return parseDocument(input, file, 'model', modelFileSchema, (data) => compileModelFile(data, file));
}
