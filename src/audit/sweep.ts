/**
 * Sensitivity sweep for rule design: re-run the audit over a range of one
 * rule's values and report, per value, how many lobbies are within rules and
 * why the others are not, so a designer sees where a cap starts to bite.
 *
 * Syntax: `RULE=FROM:TO:STEP` (inclusive range) or `RULE=V1,V2,...`, e.g.
 * `scale_cap=1.2:2.0:0.1`.
 */
import { type Result, error, fail, ok, show } from '../issues.js';
import type { RulesFile } from '../formats/rules-types.js';
import type { CompiledModel } from '../model/compile.js';
import { compileRules } from '../solver/rules.js';
import { type AuditEntry, auditLobbies } from './audit-lobbies.js';
import { SWEEP_FORMAT, type SweepReport } from './audit-types.js';
import { SWEEPABLE_RULES, type SweepableRule } from './sweepable-rules.js';

export { SWEEPABLE_RULES, type SweepableRule } from './sweepable-rules.js';

/** At most this many values in one sweep. */
export const MAX_SWEEP_VALUES = 1000;

export interface SweepSpec {
  readonly rule: SweepableRule;
  readonly values: readonly number[];
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function bad(text: string, expected: string): Result<SweepSpec> {
  return fail([error('invalid_sweep', '--sweep', `\`--sweep\` requires ${expected}, got ${show(text)}`)]);
}

/** Parse `RULE=FROM:TO:STEP` or `RULE=V1,V2,...`. */
export function parseSweep(text: string): Result<SweepSpec> {
  const equals = text.indexOf('=');
  if (equals < 0) return bad(text, 'RULE=FROM:TO:STEP or RULE=V1,V2,... (e.g. scale_cap=1.2:2.0:0.1)');
  const rule = text.slice(0, equals).trim();
  const body = text.slice(equals + 1).trim();
  if (!(SWEEPABLE_RULES as readonly string[]).includes(rule)) return bad(rule, `a numeric rule, one of ${SWEEPABLE_RULES.join(', ')}`);
  const parts = body.includes(':') ? body.split(':') : body.split(',');
  if (parts.some((part) => !NUMBER.test(part.trim()))) return bad(body, 'plain decimal numbers');
  const numbers = parts.map((part) => Number(part.trim()));
  let values: number[];
  if (body.includes(':')) {
    const [from, to, step] = numbers;
    if (numbers.length !== 3 || from === undefined || to === undefined || step === undefined) return bad(body, 'FROM:TO:STEP with three numbers');
    if (!(step > 0) || to < from) return bad(body, 'FROM <= TO and a STEP above 0');
    const count = Math.floor((to - from) / step + 1e-9) + 1;
    if (count > MAX_SWEEP_VALUES) return bad(body, `at most ${MAX_SWEEP_VALUES} values`);
    // Values by multiplication, rounded to 12 significant digits, so 1.2 + 3 x 0.1 prints as 1.5.
    values = Array.from({ length: count }, (_, index) => Number((from + index * step).toPrecision(12)));
  } else {
    values = numbers;
    if (values.length > MAX_SWEEP_VALUES) return bad(body, `at most ${MAX_SWEEP_VALUES} values`);
  }
  return ok({ rule: rule as SweepableRule, values });
}

/**
 * Run the audit once per value of one rule. Pure. Per value: how many lobbies
 * are within rules, the rules that fail and how often, the constraint that
 * binds most, the players excluded (a looser gap bought by excluding players
 * shows there), and the worst residual gap; then the smallest value at which
 * every lobby is within rules.
 */
export function sweepRule(entries: readonly AuditEntry[], model: CompiledModel, rules: RulesFile, spec: SweepSpec): SweepReport {
  const rows = spec.values.map((value) => {
    const compiled = compileRules({ ...rules, [spec.rule]: value });
    if (!compiled.ok) {
      return { value, valid: false, issues: compiled.issues.map((issue) => issue.message), lobbies: entries.length, within_rules: 0, share_within_rules: null, worst_gap: null, failing_rules: {}, most_binding: null, excluded_players: 0 };
    }
    const summary = auditLobbies(entries, model, compiled.value).summary;
    // The worst gap of the value: the largest of the lobbies' worst gaps the summary ranked.
    let worst: number | null = null;
    for (const { worst_gap: gap } of summary.worst_first) if (gap !== null) worst = worst === null ? gap : Math.max(worst, gap);
    const failing = Object.fromEntries(Object.entries(summary.failing_rules).filter(([, count]) => count > 0));
    return {
      value,
      valid: true,
      issues: [],
      lobbies: summary.lobbies,
      within_rules: summary.within_rules,
      share_within_rules: summary.lobbies === 0 ? null : summary.within_rules / summary.lobbies,
      worst_gap: worst,
      failing_rules: failing,
      most_binding: summary.most_binding,
      excluded_players: summary.excluded_players,
    };
  });
  const passing = rows.filter((row) => row.valid && row.lobbies > 0 && row.within_rules === row.lobbies).map((row) => row.value);
  return { format: SWEEP_FORMAT, rule: spec.rule, rows, smallest_value_within_rules: passing.length === 0 ? null : Math.min(...passing) };
}
