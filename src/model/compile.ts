/**
 * Compiling a model file: validate it against the model file's schema, then
 * compile it (`compiled-model.ts`): check the terms, coefficients and
 * covariance, precompute what every prediction needs, and hand back a
 * branded object the solver trusts without checking again.
 */
import { type Result, fail } from '../issues.js';
import { modelFileSchema } from '../formats/model-file.js';
import { fromZodIssues } from '../formats/zod-issues.js';
import { type CompiledModel, compileModelFile } from './compiled-model.js';

export { type CompiledModel, compileModelFile } from './compiled-model.js';
export { type PredictorLine, predictorLine } from './predictor-line.js';

/**
 * Validate a model document (already parsed from JSON) and compile it.
 * `file` names the source in issues.
 */
export function compileModel(input: unknown, file?: string): Result<CompiledModel> {
  const parsed = modelFileSchema.safeParse(input);
  if (!parsed.success) return fail(fromZodIssues(parsed.error.issues, input, file));
  return compileModelFile(parsed.data, file);
}
