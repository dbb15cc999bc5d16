import { describe, expect, it } from 'vitest';
import { parsePlan } from '../../src/formats/plan.js';
import { compileModel } from '../../src/model/compile.js';
import { assumeEnteredEffects, assumePilotModel } from '../../src/plan/assumed-model.js';
import { DEFAULT_PLAYER_SD, assembleSizeStudy, prepareSizeStudy } from '../../src/plan/size-study.js';
import { runStudies } from '../../src/plan/run-studies.js';
import { sizeStudySchema } from '../../src/plan/size-study-schema.js';
import { MATCHES, ROOT, readJson } from '../helpers/demo.js';
import { SMALL_PLAN, preparedSmall } from './helpers.js';

const where = (field: string) => `p.json:${field}`;
const spread = { value: DEFAULT_PLAYER_SD, source: 'default' as const };

function prepareIssues(overrides: Record<string, unknown>) {
  const plan = parsePlan({ ...SMALL_PLAN, ...overrides });
  const truth = assumeEnteredEffects(plan.size_study?.effects as never, plan, where);
  if (!truth.ok) return truth.issues.map((issue) => [issue.code, issue.location]);
  const prepared = prepareSizeStudy(plan, truth.value, spread, null, where);
  return prepared.ok ? [] : prepared.issues.map((issue) => [issue.code, issue.location]);
}

describe('assumeEnteredEffects()', () => {
  it('turns hit rates into the logit line: 0.7 at 0 ms, 0.55 at 100 ms, 0.8 at scale 1.5', () => {
    const plan = parsePlan(SMALL_PLAN);
    const truth = assumeEnteredEffects({ hit_rate: 0.7, change_per_100ms: -0.15, scale_hit_rate: { scale: 1.5, hit_rate: 0.8 }, latency_x_log_scale: 0 }, plan, where);
    if (!truth.ok) throw new Error('effects');
    const [line] = truth.value.lines;
    const logistic = (x: number) => 1 / (1 + Math.exp(-x));
    expect(logistic(line?.base ?? 0)).toBeCloseTo(0.7, 12);
    expect(logistic((line?.base ?? 0) + 100 * (line?.basePerMs ?? 0))).toBeCloseTo(0.55, 12);
    expect(logistic((line?.base ?? 0) + (line?.scaleSlope ?? 0) * Math.log(1.5))).toBeCloseTo(0.8, 12);
    expect(truth.value.terms).toEqual(['intercept', 'latency', 'log_scale', 'latency_x_log_scale']);
  });

  it('refuses a scale that does not raise the hit rate, and a change that leaves (0, 1)', () => {
    const plan = parsePlan(SMALL_PLAN);
    const issues = assumeEnteredEffects({ hit_rate: 0.7, change_per_100ms: -0.75, scale_hit_rate: { scale: 1.5, hit_rate: 0.6 }, latency_x_log_scale: 0 }, plan, where);
    expect(issues.ok ? [] : issues.issues.map((issue) => [issue.code, issue.location])).toEqual([
      ['out_of_range', 'p.json:size_study.effects.change_per_100ms'],
      ['scale_not_increasing', 'p.json:size_study.effects.scale_hit_rate'],
    ]);
  });
});

describe('assumePilotModel()', () => {
  it('refuses a pilot model without a scale term: it cannot plan compensation', () => {
    const model = compileModel(readJson(`${ROOT}/test/fixtures/bad/model-no-scale-term.json`));
    if (!model.ok) throw new Error('fixture');
    const result = assumePilotModel(model.value, parsePlan(SMALL_PLAN), 'pilot.json', where);
    expect(result).toMatchObject({ ok: false, issues: [{ code: 'no_scale_term', location: 'pilot.json:terms' }] });
  });

  it('takes the demo model\'s lines and terms, and refuses a difficulty it does not know', () => {
    const model = compileModel(readJson(`${MATCHES}/model.json`));
    if (!model.ok) throw new Error('demo model');
    const good = assumePilotModel(model.value, parsePlan(SMALL_PLAN), 'model.json', where);
    expect(good.ok && good.value.terms).toEqual(['intercept', 'latency', 'log_scale', 'latency_x_log_scale']);
    const bad = assumePilotModel(model.value, parsePlan({ ...SMALL_PLAN, difficulty: ['standard', 'legendary'] }), 'model.json', where);
    expect(bad).toMatchObject({ ok: false, issues: [{ code: 'wrong_difficulty', location: 'p.json:difficulty[1]' }] });
  });
});

describe('prepareSizeStudy()', () => {
  it('refuses a plan with one scale level, no attempts per round, or an unknown difficulty to judge at', () => {
    expect(prepareIssues({ scale: [1] })).toEqual([['too_few_levels', 'p.json:scale']]);
    expect(prepareIssues({ attempts_per_round: null })).toEqual([['missing_field', 'p.json:attempts_per_round']]);
    expect(prepareIssues({ size_study: { ...SMALL_PLAN.size_study, at_difficulty: 'elite' } })).toEqual([['invalid_value', 'p.json:size_study.at_difficulty']]);
    expect(prepareIssues({ size_study: { ...SMALL_PLAN.size_study, terms: ['intercept', 'log_scale'] } })).toEqual([['missing_term', 'p.json:size_study.terms']]);
  });

  it('warns when the latency to judge at is outside the plan\'s levels, and lays out one size per count and repetition', () => {
    const prepared = preparedSmall({ size_study: { ...SMALL_PLAN.size_study, at_latency_ms: 250, try_repetitions: [1, 2] } });
    expect(prepared.warnings.map((issue) => issue.code)).toEqual(['extrapolation']);
    expect(prepared.sizes.map((size) => [size.participants, size.repetitions, size.roundsPerParticipant])).toEqual([
      [6, 1, 6],
      [12, 1, 6],
      [6, 2, 12],
      [12, 2, 12],
    ]);
  });
});

describe('assembleSizeStudy()', () => {
  it('gives a result its own schema accepts, with a recommendation for the small plan', async () => {
    const prepared = preparedSmall();
    const records = await runStudies(prepared.simulation, prepared.sizes, 100, { threads: 0 });
    const study = assembleSizeStudy(prepared, records);
    expect(sizeStudySchema.safeParse(study).success).toBe(true);
    expect(study.rows.map((row) => row.participants)).toEqual([6, 12]);
    expect(study.assumptions.true_scale).toBeGreaterThan(1);
    // More players, a narrower interval.
    expect(study.rows[1]?.width_median.estimate as number).toBeLessThan(study.rows[0]?.width_median.estimate as number);
    expect(study.status).toBe(study.recommended === null ? 'goal_not_met' : 'goal_met');
  });
});
