/**
 * What a size study assumes about hit probability: the "true" model its
 * simulated studies are drawn from, as one predictor line per difficulty level
 * of the plan (`predictor-line.ts`), from either
 *
 * - a pilot model file (`lagparity fit` on a pilot playtest): its link, its
 *   estimates as the truth, and its terms for fitting each simulated study; or
 * - entered effects: the hit rate at the lowest latency level and scale 1
 *   (per difficulty level or one for all), its change over the next 100 ms,
 *   and the hit rate at one other scale, on the logit scale:
 *
 *       logit p = logit(h_d) + a1 (L - L0) + (b0 + b1 (L - L0)) log s,
 *       a1 = [logit(h + change) - logit(h)] / 100,   b0 = [logit(h_s) - logit(h)] / log s_s,
 *
 *   with h the first level's rate and b1 the entered `latency_x_log_scale`;
 *   each simulated study is fitted with the default terms.
 *
 * Difficulty terms are left out of the fitted terms when the plan has one
 * difficulty level (a single level cannot identify them).
 */
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';
import type { EnteredEffects, PlanFile } from '../formats/plan-types.js';
import type { CompiledModel } from '../model/compiled-model.js';
import type { LinkName } from '../model/links.js';
import { linkFor } from '../model/links.js';
import type { PredictorLine } from '../model/predictor-line.js';
import { DEFAULT_TERMS, type TermName, termFactors } from '../model/terms.js';
import type { ScaleForm } from './compensation-scale.js';

export interface AssumedModel {
  readonly source: 'pilot_model' | 'entered_effects';
  readonly link: LinkName;
  readonly scaleForm: ScaleForm;
  /** The predictor line at each difficulty level of the plan, in the plan's order. */
  readonly lines: readonly PredictorLine[];
  /** The terms each simulated study is fitted with. */
  readonly terms: readonly TermName[];
}

type Levels = Pick<PlanFile, 'latency_ms' | 'scale' | 'difficulty'>;

/** `terms` without difficulty terms when there is one difficulty level. */
export function identifiableTerms(terms: readonly TermName[], levels: Levels): TermName[] {
  return levels.difficulty.length > 1 ? [...terms] : terms.filter((term) => !termFactors(term).difficulty);
}

/** The truth from entered effects. `where` names a plan field's place in issues (e.g. `plan.json:size_study.effects.change_per_100ms`). */
export function assumeEnteredEffects(effects: EnteredEffects, levels: Levels, where: (field: string) => string): Result<AssumedModel> {
  const logit = linkFor('logit').link;
  const issues: Issue[] = [];
  const rates = Array.isArray(effects.hit_rate) ? effects.hit_rate : levels.difficulty.map(() => effects.hit_rate as number);
  const first = rates[0] as number;
  const changed = first + effects.change_per_100ms;
  if (!(changed > 0 && changed < 1)) {
    issues.push(error('out_of_range', where('size_study.effects.change_per_100ms'), `\`change_per_100ms\` requires a hit rate 100 ms later strictly between 0 and 1, got ${show(first)} + ${show(effects.change_per_100ms)} = ${show(changed)}`));
  }
  const { scale, hit_rate: scaledRate } = effects.scale_hit_rate;
  if (scale === 1) issues.push(error('out_of_range', where('size_study.effects.scale_hit_rate'), '`scale_hit_rate.scale` requires a scale other than 1 (the effect is a comparison with scale 1), got 1'));
  const slope = scale === 1 ? 0 : (logit(scaledRate) - logit(first)) / Math.log(scale);
  if (scale !== 1 && !(slope > 0)) {
    issues.push(error('scale_not_increasing', where('size_study.effects.scale_hit_rate'), `compensation requires hit probability to rise with the scale, got ${show(scaledRate)} at scale ${show(scale)} against ${show(first)} at scale 1`));
  }
  if (issues.length > 0) return fail(issues);
  const perMs = (logit(changed) - logit(first)) / 100;
  const reference = levels.latency_ms[0] as number;
  const lines = rates.map((rate) => ({
    base: logit(rate) - perMs * reference,
    basePerMs: perMs,
    scaleSlope: slope - effects.latency_x_log_scale * reference,
    scaleSlopePerMs: effects.latency_x_log_scale,
  }));
  return ok({ source: 'entered_effects', link: 'logit', scaleForm: 'log', lines, terms: identifiableTerms(DEFAULT_TERMS, levels) });
}

/** The truth from a compiled pilot model. `file` names the model in issues; `where` a plan field's place. */
export function assumePilotModel(model: CompiledModel, levels: Levels, file: string, where: (field: string) => string): Result<AssumedModel> {
  if (model.scaleForm === 'none') {
    return fail([
      error(
        'no_scale_term',
        `${file}:terms`,
        `planning compensation requires a pilot model with a scale term (\`scale\` or \`log_scale\`), got terms ${show(model.source.terms.join(','))}; refit the pilot with a scale term, or enter effects (\`--hit-rate\`, \`--change-per-100ms\`, \`--scale-hit-rate\`)`,
      ),
    ]);
  }
  const lines: PredictorLine[] = [];
  const issues: Issue[] = [];
  levels.difficulty.forEach((level, index) => {
    const line = model.lineAt(level);
    if (line.ok) lines.push(line.value);
    else issues.push(...line.issues.map((issue) => ({ ...issue, location: where(`difficulty[${index}]`), message: `${issue.message} (the pilot model ${file} knows no other)` })));
  });
  if (issues.length > 0) return fail(issues);
  return ok({ source: 'pilot_model', link: model.link.name, scaleForm: model.scaleForm, lines, terms: identifiableTerms(model.source.terms, levels) });
}
