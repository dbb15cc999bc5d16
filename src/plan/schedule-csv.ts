/**
 * A schedule as CSV for a game client: one row per round per participant,
 * in session order, with the columns of the trials format (`player`,
 * `latency_ms`, `scale`, `difficulty`) so that the playtest's results, once a
 * `hit` or `hits`/`attempts` column is added, go straight into `lagparity
 * fit`. `round` and `practice` (1 for a practice round) are for the client;
 * `fit` ignores them with a warning. `weight` is 0 for practice rounds and 1
 * otherwise, so that `fit` leaves practice out (rows of weight 0 carry
 * nothing). Fields are quoted as RFC 4180 asks when they hold a comma, a
 * quote or a line break.
 */
import type { Schedule } from './build-schedule.js';

export const SCHEDULE_COLUMNS = ['player', 'round', 'latency_ms', 'scale', 'difficulty', 'practice', 'weight'] as const;

/** One CSV field: quoted (quotes doubled) when it holds a delimiter, a quote or a line break. */
export function csvField(value: string | number): string {
  const text = String(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/**
 * The schedule's rounds as CSV text with a header line and LF line ends.
 *
 * @example
 *   scheduleCsv(buildSchedule(plan)); // "player,round,latency_ms,...\nP01,1,0,1,standard,1,0\n..."
 */
export function scheduleCsv(schedule: Pick<Schedule, 'rounds'>): string {
  const lines = [SCHEDULE_COLUMNS.join(',')];
  for (const round of schedule.rounds) {
    lines.push([round.player, round.round, round.latency_ms, round.scale, round.difficulty, round.practice ? 1 : 0, round.practice ? 0 : 1].map(csvField).join(','));
  }
  return `${lines.join('\n')}\n`;
}
