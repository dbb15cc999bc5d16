/** `lagparity plan size`, run: simulate playtests of each size, fit each, and recommend the smallest size that meets the goal (options and help: `plan-command.ts`). */
import { basename } from 'node:path';
import { type Issue, type Result, error, fail, ok, warning } from '../issues.js';
import { readTrialsFile } from '../io/read-trials.js';
import { writeFileAtomic } from '../io/write-file.js';
import type { ValidPlan } from '../formats/plan.js';
import type { FieldLocator } from '../plan/size-study.js';
import { type AssumedModel, assumeEnteredEffects, assumePilotModel } from '../plan/assumed-model.js';
import { playerSpreadFromTrials } from '../plan/player-spread.js';
import { runStudies } from '../plan/run-studies.js';
import { DEFAULT_PLAYER_SD, type PlayerSpread, assembleSizeStudy, prepareSizeStudy } from '../plan/size-study.js';
import { loadModel } from './inputs.js';
import { EXIT_BAD_INPUT, EXIT_FAILED_CHECK, EXIT_OK, reportIssues, writeOut } from './output.js';
import { type PlanFieldOptions, type SizeFieldOptions, loadPlan } from './plan-inputs.js';
import { threadCount } from './thread-count.js';
import { progressLine } from './progress.js';

export interface SizeOptions extends PlanFieldOptions, SizeFieldOptions {
  pilotModel?: string;
  pilotTrials?: string;
  threads?: string;
  json?: boolean;
  out?: string;
  force?: boolean;
}

async function assumedModel(plan: ValidPlan, where: FieldLocator, pilotModel: string | undefined): Promise<Result<AssumedModel>> {
  const effects = plan.size_study?.effects ?? null;
  if (pilotModel !== undefined) {
    const model = await loadModel(pilotModel);
    if (!model.ok) return model;
    const assumed = assumePilotModel(model.value, plan, basename(pilotModel), where);
    if (!assumed.ok || effects === null) return assumed;
    return ok(assumed.value, [warning('effects_unused', where('size_study.effects'), 'the size study takes its coefficients from `--pilot-model`; the plan\'s entered effects are not used')]);
  }
  if (effects === null) {
    return fail([error('missing_field', where('size_study.effects'), 'the size study requires assumed coefficients: a pilot model (`--pilot-model`) or entered effects (`size_study.effects`, or `--hit-rate`, `--change-per-100ms` and `--scale-hit-rate`), got neither')]);
  }
  return assumeEnteredEffects(effects, plan, where);
}

async function playerSpread(plan: ValidPlan, where: FieldLocator, truth: AssumedModel, pilotTrials: string | undefined): Promise<Result<PlayerSpread>> {
  const given = plan.size_study?.player_sd ?? null;
  if (given !== null) {
    const unused = pilotTrials === undefined ? [] : [warning('pilot_trials_unused', where('size_study.player_sd'), `the players' skill spread is given (${given}); \`--pilot-trials\` is not used`)];
    return ok({ value: given, source: 'plan' }, unused);
  }
  if (pilotTrials === undefined) return ok({ value: DEFAULT_PLAYER_SD, source: 'default' });
  const trials = await readTrialsFile(pilotTrials);
  if (!trials.ok) return trials;
  const spread = playerSpreadFromTrials(trials.value, truth.terms, truth.link);
  if (!spread.ok) return spread;
  return ok({ value: spread.value.sd, source: 'pilot_trials' }, trials.warnings);
}

export async function runSize(path: string | undefined, options: SizeOptions): Promise<number> {
  const issues: Issue[] = [];
  const threads = threadCount(options.threads, issues);
  const loaded = await loadPlan(path, options);
  if (!loaded.ok || issues.length > 0) {
    reportIssues([...issues, ...(loaded.ok ? [] : loaded.issues)]);
    return EXIT_BAD_INPUT;
  }
  const { plan, where } = loaded.value;
  const truth = await assumedModel(plan, where, options.pilotModel);
  const spread = truth.ok ? await playerSpread(plan, where, truth.value, options.pilotTrials) : null;
  if (!truth.ok || spread === null || !spread.ok) {
    reportIssues([...(truth.ok ? [] : truth.issues), ...(spread !== null && !spread.ok ? spread.issues : [])]);
    return EXIT_BAD_INPUT;
  }
  const prepared = prepareSizeStudy(plan, truth.value, spread.value, options.pilotModel ?? null, where);
  if (!prepared.ok) {
    reportIssues(prepared.issues);
    return EXIT_BAD_INPUT;
  }
  reportIssues([...truth.warnings, ...spread.warnings, ...prepared.value.warnings]);
  const progress = progressLine('lagparity plan size');
  let records: Float64Array[];
  try {
    records = await runStudies(prepared.value.simulation, prepared.value.sizes, prepared.value.studies, {
      threads,
      onProgress: (done, total) => progress.update(() => `${done} of ${total} simulated studies fitted`),
    });
  } finally {
    progress.done();
  }
  const study = assembleSizeStudy(prepared.value, records);
  let exit = EXIT_OK;
  if (study.status === 'goal_not_met') {
    exit = EXIT_FAILED_CHECK;
    const field = plan.size_study?.goal.interval_width !== null ? 'size_study.goal.interval_width' : 'size_study.goal.latency_power';
    reportIssues([
      error(
        'goal_not_met',
        where(field),
        `the goal requires a size that meets it, got none from ${plan.size_study?.players.from} to ${plan.size_study?.players.to} participants; ${study.closest?.message ?? ''}; widen \`players\`, add repetitions, or relax the goal${options.out === undefined ? '' : `; nothing was written to ${options.out}`}`,
      ),
    ]);
  } else if (options.out !== undefined) {
    const written = await writeFileAtomic(options.out, `${JSON.stringify(study, null, 2)}\n`, { force: options.force ?? false });
    if (!written.ok) {
      reportIssues(written.issues);
      exit = EXIT_BAD_INPUT;
    }
  }
  if (options.json) writeOut(JSON.stringify(study, null, 2));
  else {
    const { renderSize } = await import('./render-size.js');
    writeOut(renderSize(study) + (exit === EXIT_OK && options.out !== undefined ? `\nwrote ${options.out}` : ''));
  }
  return exit;
}
