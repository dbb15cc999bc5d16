import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { compileModel } from '../../src/model/compile.js';
import { MatchSession, type SessionEvent } from '../../src/session/match-session.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES, readJson } from '../helpers/demo.js';
import { rulesOf } from '../solver/arbitraries.js';

const modelPath = join(MATCHES, 'model.json');

/** A short match's log, written as a caller would: one JSON line an event. */
function writeLog(): { path: string; events: SessionEvent[] } {
  const model = compileModel(readJson(modelPath));
  if (!model.ok) throw new Error('model');
  const events: SessionEvent[] = [];
  const session = new MatchSession(model.value, rulesOf({ scale_cap: 1.6, quantisation_step: 0.05 }), { match_id: 'replay-test', attribute: 'timing_window', difficulty: 'veteran' }, { record: (event) => events.push(event) });
  for (const [id, latency] of [['ash', 18], ['birch', 75], ['cedar', 140]] as const) {
    session.join(id);
    session.sample(id, latency);
  }
  session.safePoint(1);
  for (let index = 0; index < 50; index += 1) session.sample('ash', 120);
  session.safePoint(2);
  session.leave('cedar', 3);
  session.safePoint(4);
  const path = join(mkdtempSync(join(tmpdir(), 'lagparity-replay-')), 'match.jsonl');
  writeFileSync(path, events.map((event) => `${JSON.stringify(event)}\n`).join(''));
  return { path, events };
}

describe('lagparity replay', () => {
  it('reports a reproduced log and exits 0; --json writes lagparity/session-replay@1', () => {
    const { path } = writeLog();
    const run = runCli(['replay', path, '--model', modelPath]);
    expect(run.status).toBe(0);
    expect(run.stdout).toBe('replay-test: reproduced: 3 safe points, 8 events, every scale bit for bit\n');
    const json = runCli(['replay', path, '--model', modelPath, '--json']);
    expect(JSON.parse(json.stdout)).toEqual({ format: 'lagparity/session-replay@1', status: 'reproduced', match_id: 'replay-test', events: 8, safe_points: 3, difference: null });
  });

  it('names the first scale that differs and exits 1', () => {
    const { path } = writeLog();
    const lines = readFileSync(path, 'utf8').trimEnd().split('\n');
    const second = JSON.parse(lines[5] as string) as Extract<SessionEvent, { type: 'safe_point' }>;
    lines[5] = JSON.stringify({ ...second, applied: { ...second.applied, cedar: 9 } });
    writeFileSync(path, `${lines.join('\n')}\n`);
    const run = runCli(['replay', path, '--model', modelPath]);
    expect(run.status).toBe(1);
    expect(run.stdout).toMatch(/^replay-test: differs at event 6 \(safe point at 2\), applied\.cedar: the log says 9, the replay gives \d/);
  });

  it('exits 2 on another model, a missing file and a broken line, naming each', () => {
    const { path } = writeLog();
    expect(runCli(['replay', path, '--model', join(MATCHES, 'ground-truth.model.json')])).toMatchObject({ status: 2, stderr: expect.stringContaining('model_mismatch') });
    expect(runCli(['replay', `${path}.missing`, '--model', modelPath])).toMatchObject({ status: 2, stderr: expect.stringContaining('no such file') });
    const lines = readFileSync(path, 'utf8').split('\n');
    lines[2] = '{"type":"join","at":1,"id":"","team":null,"reconnect":false}';
    writeFileSync(path, lines.join('\n'));
    const run = runCli(['replay', path, '--model', modelPath]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('match.jsonl:3:id');
    expect(run.stderr).not.toMatch(/at .*\.js:\d+/); // no stack trace
  });
});
