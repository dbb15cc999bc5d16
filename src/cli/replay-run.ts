/** `lagparity replay`, run (options and help: `replay-command.ts`). */
import { readTextFile } from '../io/read-json.js';
import { parseSessionLog } from '../session/session-log-file.js';
import { replaySession } from '../session/replay-session.js';
import { loadModel } from './inputs.js';
import { EXIT_BAD_INPUT, EXIT_FAILED_CHECK, EXIT_OK, reportIssues, writeOut } from './output.js';

export const SESSION_REPLAY_FORMAT = 'lagparity/session-replay@1';

/** A session log larger than this (256 MiB) is refused before it is parsed. */
export const MAX_SESSION_LOG_BYTES = 256 * 1024 * 1024;

export interface ReplayOptions {
  model: string;
  json?: boolean;
}

export async function runReplay(path: string, options: ReplayOptions): Promise<number> {
  const [model, read] = await Promise.all([loadModel(options.model), readTextFile(path, MAX_SESSION_LOG_BYTES, 'a session log')]);
  const events = read.ok ? parseSessionLog(read.value, read.file) : read;
  if (!model.ok || !events.ok) {
    reportIssues([...(model.ok ? [] : model.issues), ...(events.ok ? [] : events.issues)]);
    return EXIT_BAD_INPUT;
  }
  const replay = replaySession(events.value, model.value);
  if (!replay.ok) {
    reportIssues(replay.issues);
    return EXIT_BAD_INPUT;
  }
  const report = replay.value;
  if (options.json) writeOut(JSON.stringify({ format: SESSION_REPLAY_FORMAT, ...report }, null, 2));
  else if (report.difference === null) {
    writeOut(`${report.match_id}: reproduced: ${report.safe_points} safe points, ${report.events} events, every scale bit for bit`);
  } else {
    const { event, at, field, logged, replayed } = report.difference;
    writeOut(
      `${report.match_id}: differs at event ${event + 1} (safe point at ${at}), ${field}: the log says ${JSON.stringify(logged) ?? 'nothing'}, the replay gives ${JSON.stringify(replayed) ?? 'nothing'}\n` +
        'The model, the rules or the code is not what ran the match (or the log was edited).',
    );
  }
  return report.status === 'reproduced' ? EXIT_OK : EXIT_FAILED_CHECK;
}
