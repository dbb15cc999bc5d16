/**
 * Parsing a playtest plan: `safeParsePlan` returns issues, `parsePlan` throws
 * them. Besides the schema, two checks need the plan as a whole: a session
 * must hold one round of every condition (with the practice rounds) within
 * `session_limit_minutes`, and the schedule must stay within the documented
 * number of rows.
 */
import { type Issue, type Result, at, error, fail, ok, unwrap } from '../issues.js';
import { roundsPerParticipant, sessionMinutes } from '../plan/session-length.js';
import { parseDocument } from './parse-document.js';
import { planFileSchema } from './plan-file.js';
import { PLAN_LIMITS, type PlanFile } from './plan-types.js';

declare const planBrand: unique symbol;
/** A plan that passed validation. */
export type ValidPlan = PlanFile & { readonly [planBrand]: true };

/** The number of conditions a plan crosses: latency x scale x difficulty levels. */
export function conditionCount(plan: Pick<PlanFile, 'latency_ms' | 'scale' | 'difficulty'>): number {
  return plan.latency_ms.length * plan.scale.length * plan.difficulty.length;
}

function wholePlanIssues(plan: PlanFile, file: string | undefined): Issue[] {
  const issues: Issue[] = [];
  const conditions = conditionCount(plan);
  const oneOfEach = sessionMinutes(plan, roundsPerParticipant(plan, conditions, 1));
  if (oneOfEach > plan.session_limit_minutes) {
    // rounds x R + (rounds - 1) x P <= 60 x limit, solved for the rounds, less the practice ones.
    const room = Math.max(0, Math.floor((60 * plan.session_limit_minutes + plan.pause_seconds) / (plan.round_seconds + plan.pause_seconds)) - plan.practice_rounds);
    issues.push(
      error(
        'too_many_conditions',
        at(file, 'latency_ms'),
        `\`latency_ms\` x \`scale\` x \`difficulty\` requires at most ${room} conditions, so that one round of each and ${plan.practice_rounds} practice round(s) fit in \`session_limit_minutes\` (${plan.session_limit_minutes}), got ${conditions} conditions (${plan.latency_ms.length} x ${plan.scale.length} x ${plan.difficulty.length}), which take ${oneOfEach.toFixed(1)} minutes; drop levels, shorten \`round_seconds\` or raise the limit`,
      ),
    );
  }
  const rows = plan.participants * roundsPerParticipant(plan, conditions, plan.repetitions);
  if (rows > PLAN_LIMITS.rows) {
    issues.push(error('too_many_rounds', at(file, 'participants'), `\`participants\` x rounds requires at most ${PLAN_LIMITS.rows} rounds in all (the documented limit), got ${plan.participants} x ${rows / plan.participants} = ${rows}`));
  }
  return issues;
}

/**
 * Validate a plan document (already parsed from JSON). `file` names the source
 * in issues. As the other documents' parsers (parse-document.ts): a document of
 * another kind gets one `wrong_kind` issue, and a value that throws when read
 * (a getter, a Proxy) an `unreadable_input` issue.
 */
export function safeParsePlan(input: unknown, file?: string): Result<ValidPlan> {
  return parseDocument(input, file, 'plan', planFileSchema, (data) => {
    const issues = wholePlanIssues(data, file);
    return issues.length > 0 ? fail(issues) : ok(data as ValidPlan);
  });
}

/** Like `safeParsePlan`, but throws a `LagparityInputError` carrying the issues. */
export function parsePlan(input: unknown, file?: string): ValidPlan {
  return unwrap(safeParsePlan(input, file));
}
