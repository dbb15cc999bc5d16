/** Validating a rules document once, for every lobby solved under it. */
import { type Result, at, ok, warning } from '../issues.js';
import { rulesFileSchema } from '../formats/rules-file.js';
import { type RulesFile, type RulesInput, RULES_FORMAT } from '../formats/rules-types.js';
import { parseDocument } from '../formats/parse-document.js';
import { markRules } from '../validated.js';

declare const rulesBrand: unique symbol;

/** Rules that passed validation, with every default filled in. */
export type CompiledRules = RulesFile & { readonly [rulesBrand]: true };

/** Validate a rules document (already parsed from JSON). `file` names the source in issues. */
export function compileRules(input: unknown, file?: string): Result<CompiledRules> {
  return parseDocument(input, file, 'rules', rulesFileSchema, (data) => {
    const warnings =
      data.scale_floor < 1
        ? [warning('penalising_floor', at(file, 'scale_floor'), `\`scale_floor\` ${data.scale_floor} is below 1: players who need no help may be scaled below their unscaled level, a handicap; check that the league's rules allow it`)]
        : [];
    return ok(markRules(data) as CompiledRules, warnings);
  });
}

/** The default rules: floor 1, cap 1.5, best-connected target, no other limit. */
export function defaultRules(overrides: Omit<RulesInput, 'format'> = {}): CompiledRules {
  const result = compileRules({ ...overrides, format: RULES_FORMAT });
  if (!result.ok) throw new RangeError(result.issues.map((issue) => issue.message).join('; '));
  return result.value;
}
