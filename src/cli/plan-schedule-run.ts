/** `lagparity plan schedule`, run: each participant's rounds in a counterbalanced order, as CSV or JSON (options and help: `plan-command.ts`). */
import { writeFileAtomic } from '../io/write-file.js';
import { type Schedule, buildSchedule } from '../plan/build-schedule.js';
import { scheduleCsv } from '../plan/schedule-csv.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';
import { type PlanFieldOptions, loadPlan } from './plan-inputs.js';

export interface ScheduleOptions extends PlanFieldOptions {
  out?: string;
  json?: boolean;
  force?: boolean;
}

function levelsText(values: readonly (number | string)[]): string {
  return values.join(', ');
}

/** The schedule in a few lines for people. */
export function renderSchedule(schedule: Schedule, levels: { latency_ms: readonly number[]; scale: readonly number[]; difficulty: readonly (number | string)[] }): string {
  const { session, design } = schedule;
  const first = schedule.rounds.filter((round) => round.player === schedule.participants[0]?.id && !round.practice);
  return [
    `${schedule.label ?? 'playtest'}: ${schedule.participants.length} participants, ${schedule.conditions.length} conditions (latency ${levelsText(levels.latency_ms)} ms x scale ${levelsText(levels.scale)} x difficulty ${levelsText(levels.difficulty)}), ${schedule.repetitions} repetition(s)`,
    `order: ${design.kind === 'williams' ? 'Williams design' : 'randomised blocks'}: ${design.reason}`,
    `session: ${session.rounds} rounds (${session.practice_rounds} practice), ${session.minutes.toFixed(1)} minutes (limit ${session.limit_minutes})${session.over_limit ? ' - over the limit' : ''}`,
    `${schedule.participants[0]?.id ?? '-'} plays: ${first.slice(0, 8).map((round) => `${round.latency_ms} ms x${round.scale} ${String(round.difficulty)}`).join(', ')}${first.length > 8 ? ', ...' : ''}`,
  ].join('\n');
}

export async function runSchedule(path: string | undefined, options: ScheduleOptions): Promise<number> {
  const loaded = await loadPlan(path, options);
  if (!loaded.ok) {
    reportIssues(loaded.issues);
    return EXIT_BAD_INPUT;
  }
  const { plan } = loaded.value;
  const schedule = buildSchedule(plan);
  reportIssues(schedule.warnings);
  if (options.out !== undefined) {
    const written = await writeFileAtomic(options.out, scheduleCsv(schedule), { force: options.force ?? false });
    if (!written.ok) {
      reportIssues(written.issues);
      return EXIT_BAD_INPUT;
    }
  }
  if (options.json) writeOut(JSON.stringify(schedule, null, 2));
  else writeOut(`${renderSchedule(schedule, plan)}${options.out === undefined ? '\n(no file written: --out FILE writes the CSV, --json the whole schedule)' : `\nwrote ${options.out} (${schedule.rounds.length} rounds)`}`);
  return EXIT_OK;
}
