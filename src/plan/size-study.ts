/**
 * A size study from a plan: which sizes to simulate, everything the
 * simulations need (`prepareSizeStudy`), and the result from their records
 * (`assembleSizeStudy`). Running the simulations (on worker threads) is
 * `run-studies.ts`; this module is pure.
 *
 * Player skill: the standard deviation of the players' offsets on the link
 * scale is the plan's `player_sd`, else one estimated from a pilot's trials
 * (`player-spread.ts`), else DEFAULT_PLAYER_SD. The default is an assumption,
 * not an estimate: no published value for players' aiming skill on the logit
 * scale was found to cite. 0.5 puts the middle 95% of players at a 60% average
 * between about 36% and 80%, and implies a share of the latent variance
 * between players of 0.5^2 / (0.5^2 + pi^2 / 3) = 7% (the latent-variable
 * intraclass correlation of a logistic random-intercept model; Snijders, T. A.
 * B. and Bosker, R. J. (2012), *Multilevel Analysis*, 2nd ed., §17.3). Run the
 * study again with the spread a pilot shows.
 */
import { type Issue, type Result, error, fail, ok, show, warning } from '../issues.js';
import type { PlanFile, SizeStudySettings } from '../formats/plan-types.js';
import { checkTerms, termFactors } from '../model/terms.js';
import type { AssumedModel } from './assumed-model.js';
import { neededScale } from './compensation-scale.js';
import { crossConditions } from './conditions.js';
import { roundsPerParticipant, sessionMinutes } from './session-length.js';
import type { SimulationPlan } from './simulate-studies.js';
import { type SizeShape, recommendSize, summariseSize } from './summarise-sizes.js';
import { SIZE_STUDY_FORMAT, type SizeStudy } from './size-study-types.js';

/** The players' skill spread (link scale) when neither the plan nor a pilot gives one; see the module note. */
export const DEFAULT_PLAYER_SD = 0.5;

export interface PlayerSpread {
  readonly value: number;
  readonly source: 'plan' | 'pilot_trials' | 'default';
}

export interface PreparedSizeStudy {
  readonly simulation: SimulationPlan;
  readonly sizes: readonly SizeShape[];
  readonly studies: number;
  readonly settings: SizeStudySettings;
  readonly plan: PlanFile;
  readonly spread: PlayerSpread;
  readonly pilotModel: string | null;
  readonly warnings: readonly Issue[];
}

/** Where a plan's field is, for issues: `plan.json:size_study.goal`, or the option that sets it. */
export type FieldLocator = (field: string) => string;

/**
 * Check that a plan can be studied and lay the study out. `where` names a
 * field's place in issues.
 */
export function prepareSizeStudy(plan: PlanFile, truth: AssumedModel, spread: PlayerSpread, pilotModel: string | null, where: FieldLocator): Result<PreparedSizeStudy> {
  const settings = plan.size_study;
  if (settings === null) {
    return fail([error('missing_field', where('size_study'), '`size_study` requires `at_latency_ms` and a `goal` (or the options `--at-latency` and `--width` or `--power`), got nothing')]);
  }
  const issues: Issue[] = [];
  const warnings: Issue[] = [];
  if (plan.attempts_per_round === null) issues.push(error('missing_field', where('attempts_per_round'), '`attempts_per_round` requires the attempts a round holds (e.g. 20 shots) for the size study, got nothing'));
  if (plan.latency_ms.length < 2) issues.push(error('too_few_levels', where('latency_ms'), `\`latency_ms\` requires at least two levels to estimate the latency effect, got ${plan.latency_ms.length}`));
  if (plan.scale.length < 2) issues.push(error('too_few_levels', where('scale'), `\`scale\` requires at least two levels to estimate the scale's effect and plan compensation, got ${plan.scale.length}`));
  const terms = settings.terms ?? truth.terms;
  const termsChecked = checkTerms(terms, where('size_study.terms'));
  if (!termsChecked.ok) issues.push(...termsChecked.issues);
  for (const factor of ['latency', 'scale'] as const) {
    if (!terms.some((term) => term !== 'intercept' && termFactors(term)[factor])) {
      issues.push(error('missing_term', where('size_study.terms'), `\`size_study.terms\` requires a term with ${factor === 'latency' ? 'latency' : 'the scale'} to plan compensation, got ${show(terms.join(','))}`));
    }
  }
  const difficulties = plan.difficulty as readonly (number | string)[];
  const atDifficulty = settings.at_difficulty ?? (difficulties[0] as number | string);
  const difficultyIndex = difficulties.indexOf(atDifficulty);
  if (difficultyIndex < 0) issues.push(error('invalid_value', where('size_study.at_difficulty'), `\`size_study.at_difficulty\` requires one of the plan's difficulty levels ${difficulties.map((level) => show(level)).join(', ')}, got ${show(atDifficulty)}`));
  const reference = plan.latency_ms[0] as number;
  const line = truth.lines[Math.max(0, difficultyIndex)];
  const trueScale = line === undefined ? null : neededScale(line, truth.scaleForm, settings.at_latency_ms, reference);
  if (difficultyIndex >= 0 && trueScale === null) {
    issues.push(error('no_scale_at_latency', where('size_study.at_latency_ms'), `\`size_study.at_latency_ms\` requires a latency at which the assumed model's scale raises hit probability, got ${show(settings.at_latency_ms)} ms, where no scale makes up for the latency`));
  }
  if (issues.length > 0 || trueScale === null || plan.attempts_per_round === null) return fail(issues);

  const latencyMax = plan.latency_ms[plan.latency_ms.length - 1] as number;
  if (settings.at_latency_ms < reference || settings.at_latency_ms > latencyMax) {
    warnings.push(warning('extrapolation', where('size_study.at_latency_ms'), `\`size_study.at_latency_ms\` requires a latency within the plan's levels (${reference} to ${latencyMax} ms) to be judged without extrapolation, got ${settings.at_latency_ms}`));
  }
  const conditions = crossConditions(plan);
  const sizes: SizeShape[] = [];
  for (const repetitions of settings.try_repetitions ?? [plan.repetitions]) {
    const rounds = roundsPerParticipant(plan, conditions.length, repetitions);
    const minutes = sessionMinutes(plan, rounds);
    if (minutes > plan.session_limit_minutes) {
      warnings.push(warning('long_session', where('size_study.try_repetitions'), `a session requires at most \`session_limit_minutes\` (${plan.session_limit_minutes}) minutes, got ${minutes.toFixed(1)} with ${repetitions} repetition(s)`));
    }
    for (let participants = settings.players.from; participants <= settings.players.to; participants += settings.players.step) {
      sizes.push({ participants, repetitions, roundsPerParticipant: rounds, sessionMinutes: minutes });
    }
  }
  return ok({
    simulation: {
      difficulty: plan.difficulty,
      conditions,
      attempts: plan.attempts_per_round,
      seed: plan.seed,
      playerSd: spread.value,
      truth,
      settings: {
        link: truth.link,
        scaleForm: truth.scaleForm,
        terms,
        alpha: settings.alpha,
        atLatency: settings.at_latency_ms,
        atDifficulty,
        referenceLatency: reference,
        trueScale,
      },
    },
    sizes,
    studies: settings.studies,
    settings,
    plan,
    spread,
    pilotModel,
    warnings,
  });
}

/** The study's result from each size's records (in the order of `prepared.sizes`). */
export function assembleSizeStudy(prepared: PreparedSizeStudy, records: readonly Float64Array[]): SizeStudy {
  const { settings, plan, simulation } = prepared;
  const rows = prepared.sizes.map((size, index) => summariseSize(records[index] as Float64Array, size, settings.goal));
  const { recommendations, recommended, closest } = recommendSize(rows, settings.goal, plan.session_limit_minutes);
  return {
    format: SIZE_STUDY_FORMAT,
    label: plan.label,
    seed: plan.seed,
    studies: prepared.studies,
    status: recommended === null ? 'goal_not_met' : 'goal_met',
    assumptions: {
      source: simulation.truth.source,
      pilot_model: prepared.pilotModel,
      link: simulation.truth.link,
      fitted_terms: [...simulation.settings.terms],
      player_sd: prepared.spread.value,
      player_sd_source: prepared.spread.source,
      reference_latency_ms: simulation.settings.referenceLatency,
      at_latency_ms: simulation.settings.atLatency,
      at_difficulty: simulation.settings.atDifficulty,
      true_scale: simulation.settings.trueScale,
      attempts_per_round: simulation.attempts,
      latency_ms: [...plan.latency_ms],
      scale: [...plan.scale],
      difficulty: [...plan.difficulty] as number[] | string[],
    },
    goal: { ...settings.goal, alpha: settings.alpha },
    rows,
    recommendations,
    recommended,
    closest,
    warnings: prepared.warnings.map((issue) => ({ ...issue })),
  };
}
