/** A small entered-effects size study shared by the planning tests (invented numbers, not a reference). */
import { parsePlan } from '../../src/formats/plan.js';
import { assumeEnteredEffects } from '../../src/plan/assumed-model.js';
import { DEFAULT_PLAYER_SD, prepareSizeStudy } from '../../src/plan/size-study.js';

export const SMALL_PLAN = {
  format: 'lagparity/playtest-plan@1',
  label: 'small test plan',
  latency_ms: [0, 100, 200],
  scale: [1, 1.5],
  difficulty: ['standard'],
  repetitions: 2,
  participants: 6,
  round_seconds: 30,
  attempts_per_round: 10,
  seed: 42,
  size_study: {
    effects: { hit_rate: 0.7, change_per_100ms: -0.15, scale_hit_rate: { scale: 1.5, hit_rate: 0.8 } },
    players: { from: 6, to: 12, step: 6 },
    studies: 100,
    at_latency_ms: 150,
    goal: { interval_width: 0.6, latency_power: 0.8 },
  },
};

/** The small plan, prepared for simulation. */
export function preparedSmall(overrides: Record<string, unknown> = {}) {
  const plan = parsePlan({ ...SMALL_PLAN, ...overrides }, 'small.plan.json');
  const truth = assumeEnteredEffects(plan.size_study?.effects ?? (null as never), plan, (field) => `small.plan.json:${field}`);
  if (!truth.ok) throw new Error(JSON.stringify(truth.issues));
  const prepared = prepareSizeStudy(plan, truth.value, { value: DEFAULT_PLAYER_SD, source: 'default' }, null, (field) => `small.plan.json:${field}`);
  if (!prepared.ok) throw new Error(JSON.stringify(prepared.issues));
  return prepared.value;
}
