/** Validating a rules document once, for every lobby solved under it. */
import { type Result, fail, ok } from '../issues.js';
import { rulesFileSchema } from '../formats/rules-file.js';
import { type RulesFile, type RulesInput, RULES_FORMAT } from '../formats/rules-types.js';
import { fromZodIssues } from '../formats/zod-issues.js';

declare const rulesBrand: unique symbol;

/** Rules that passed validation, with every default filled in. */
export type CompiledRules = RulesFile & { readonly [rulesBrand]: true };

/** Validate a rules document (already parsed from JSON). `file` names the source in issues. */
export function compileRules(input: unknown, file?: string): Result<CompiledRules> {
  const parsed = rulesFileSchema.safeParse(input);
  if (!parsed.success) return fail(fromZodIssues(parsed.error.issues, input, file));
  return ok(parsed.data as CompiledRules);
}

/** The default rules: floor 1, cap 1.5, best-connected target, no other limit. */
export function defaultRules(overrides: Omit<RulesInput, 'format'> = {}): CompiledRules {
  const result = compileRules({ ...overrides, format: RULES_FORMAT });
  if (!result.ok) throw new RangeError(result.issues.map((issue) => issue.message).join('; '));
  return result.value;
}
