import { describe, expect, it } from 'vitest';
import { safeParsePlan } from '../../src/formats/plan.js';

const good = {
  format: 'lagparity/playtest-plan@1',
  latency_ms: [0, 60, 120],
  scale: [1, 1.5],
  difficulty: ['standard', 'elite'],
  participants: 24,
  round_seconds: 40,
};

function issuesOf(input: unknown): { code: string; location: string; message: string }[] {
  const result = safeParsePlan(input, 'plan.json');
  if (result.ok) throw new Error('expected issues');
  return result.issues.map(({ code, location, message }) => ({ code, location, message }));
}

describe('safeParsePlan()', () => {
  it('fills in the documented defaults', () => {
    const result = safeParsePlan(good, 'plan.json');
    expect(result.ok && result.value).toMatchObject({ repetitions: 1, practice_rounds: 0, pause_seconds: 0, attempts_per_round: null, session_limit_minutes: 45, seed: 1, size_study: null, label: null });
  });

  it('refuses latency levels that repeat or decrease, naming the level', () => {
    expect(issuesOf({ ...good, latency_ms: [0, 60, 60] })).toEqual([
      { code: 'levels_not_increasing', location: 'plan.json:latency_ms[2]', message: '`latency_ms[2]` requires levels in increasing order without repeats (after 60), got 60' },
    ]);
    expect(issuesOf({ ...good, latency_ms: [120, 60] })[0]?.location).toBe('plan.json:latency_ms[1]');
  });

  it('refuses a scale level below 0 (and 0 itself)', () => {
    expect(issuesOf({ ...good, scale: [-0.5, 1] })).toEqual([{ code: 'out_of_range', location: 'plan.json:scale[0]', message: '`scale[0]` requires a scale above 0 (1 = unscaled), got -0.5' }]);
    expect(issuesOf({ ...good, scale: [0, 1] })[0]?.code).toBe('out_of_range');
  });

  it('refuses repeated difficulty names and names that read as numbers', () => {
    expect(issuesOf({ ...good, difficulty: ['elite', 'elite'] }).map((issue) => [issue.code, issue.location])).toEqual([['duplicate_level', 'plan.json:difficulty[1]']]);
    expect(issuesOf({ ...good, difficulty: ['1', '2'] }).map((issue) => issue.code)).toEqual(['ambiguous_level', 'ambiguous_level']);
  });

  it('refuses more conditions than one session can hold, saying how many fit', () => {
    const issues = issuesOf({ ...good, latency_ms: [0, 25, 50, 75, 100, 125, 150, 175, 200, 225], scale: [1, 1.25, 1.5, 1.75, 2], practice_rounds: 3, pause_seconds: 20 });
    expect(issues).toEqual([
      {
        code: 'too_many_conditions',
        location: 'plan.json:latency_ms',
        message:
          '`latency_ms` x `scale` x `difficulty` requires at most 42 conditions, so that one round of each and 3 practice round(s) fit in `session_limit_minutes` (45), got 100 conditions (10 x 5 x 2), which take 102.7 minutes; drop levels, shorten `round_seconds` or raise the limit',
      },
    ]);
  });

  it('refuses a size study with no goal, or a hit rate per difficulty of the wrong length', () => {
    const study = { at_latency_ms: 125, goal: {}, effects: { hit_rate: [0.7, 0.6, 0.5], change_per_100ms: -0.1, scale_hit_rate: { scale: 1.5, hit_rate: 0.8 } } };
    expect(issuesOf({ ...good, size_study: study }).map((issue) => [issue.code, issue.location])).toEqual([
      ['missing_field', 'plan.json:size_study.goal'],
      ['contradictory_plan', 'plan.json:size_study.effects.hit_rate'],
    ]);
  });

  it('refuses an unknown field and an unknown format version', () => {
    expect(issuesOf({ ...good, rounds: 3 })[0]).toMatchObject({ code: 'unknown_field', location: 'plan.json:rounds' });
    expect(issuesOf({ ...good, format: 'lagparity/playtest-plan@2' })[0]).toMatchObject({ code: 'invalid_value', location: 'plan.json:format' });
  });

  it('names a document of another kind with one issue (it listed every plan field the lobby lacks)', () => {
    expect(issuesOf({ format: 'lagparity/lobby@1', match_id: 'm', attribute: 'hit_area', difficulty: 'veteran', players: [] })).toEqual([
      expect.objectContaining({ code: 'wrong_kind', location: 'plan.json:format' }),
    ]);
  });

  // Before: the exception of a getter or a Proxy trap came out of safeParsePlan.
  it('turns a getter or a Proxy that throws into an unreadable_input issue', () => {
    const getter = { ...good };
    Object.defineProperty(getter, 'participants', { enumerable: true, get: () => { throw new Error('no participants'); } });
    const trap = new Proxy({ ...good }, { ownKeys: () => { throw new Error('no keys'); } });
    for (const input of [getter, trap]) expect(issuesOf(input)).toEqual([expect.objectContaining({ code: 'unreadable_input', location: 'plan.json' })]);
  });
});
