import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { fitModel } from '../../src/model/fit-model.js';
import { buildSchedule } from '../../src/plan/build-schedule.js';
import { csvField, scheduleCsv } from '../../src/plan/schedule-csv.js';

const plan = {
  label: null,
  seed: 3,
  latency_ms: [0, 100, 200],
  scale: [1, 1.5],
  difficulty: ['standard', 'hard, late'],
  repetitions: 2,
  participants: 12,
  practice_rounds: 1,
  round_seconds: 30,
  pause_seconds: 0,
  session_limit_minutes: 45,
};

describe('scheduleCsv()', () => {
  it('writes one row a round that csv-parse reads back field for field', () => {
    const schedule = buildSchedule(plan);
    const text = scheduleCsv(schedule);
    // csv-parse (a general-purpose RFC 4180 reader from the npm registry) is the outside reference for the quoting.
    const records = parse(text, { columns: true }) as Record<string, string>[];
    expect(records).toHaveLength(schedule.rounds.length);
    records.forEach((record, index) => {
      const round = schedule.rounds[index];
      expect(record).toEqual({
        player: round?.player,
        round: String(round?.round),
        latency_ms: String(round?.latency_ms),
        scale: String(round?.scale),
        difficulty: String(round?.difficulty),
        practice: round?.practice ? '1' : '0',
        weight: round?.practice ? '0' : '1',
      });
    });
  });

  it('quotes only fields that need it', () => {
    expect(csvField('elite')).toBe('elite');
    expect(csvField('a "b", c')).toBe('"a ""b"", c"');
    expect(csvField(1.25)).toBe('1.25');
  });

  it('goes straight into the fit once hits and attempts are added, practice rounds carrying no weight', () => {
    const schedule = buildSchedule(plan);
    const lines = scheduleCsv(schedule).trimEnd().split('\n');
    // Deterministic invented counts: fewer hits at higher latency, more at the larger scale.
    const withResults = [
      `${lines[0]},hits,attempts`,
      ...schedule.rounds.map((round, index) => {
        const hits = Math.max(0, Math.min(20, 14 - round.latency_ms / 25 + (round.scale > 1 ? 3 : 0) + ((index * 7) % 5) - 2));
        return `${lines[index + 1]},${hits},20`;
      }),
    ].join('\n');
    const trials = parseTrialsCsv(withResults, 'playtest.csv');
    expect(trials.ok).toBe(true);
    if (!trials.ok) return;
    expect(trials.warnings.map((issue) => issue.code)).toEqual(['unknown_column']);
    expect(trials.value.rows).toBe(schedule.rounds.length);
    const report = fitModel(trials.value, { folds: 0, likelihoodRatioTests: false, baseline: false });
    expect(report.status).toBe('converged');
    expect(report.cluster).toEqual({ by: 'player', clusters: 12 });
    // The 12 practice rows have weight 0: the fit's attempts are the main rounds' alone.
    const mainAttempts = schedule.rounds.filter((round) => !round.practice).length * 20;
    expect(report.statistics?.observations).toBe(schedule.rounds.length - 12);
    expect(mainAttempts).toBe(12 * 24 * 20);
  });
});
