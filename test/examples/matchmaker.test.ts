/**
 * The README's module example (examples/matchmaker.mjs) runs as a user runs
 * it, against the built package (self-reference through package.json's
 * exports), and what it prints is checked against the library called
 * directly and against its own session log.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { balanceLobby } from '../../src/solver/balance-lobby.js';
import { parseSessionLog } from '../../src/session/session-log-file.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES, ROOT, readJson } from '../helpers/demo.js';

const model = compileModel(readJson(join(MATCHES, 'model.json')));
const rules = compileRules(readJson(join(MATCHES, 'league-rules.json')));

function runExample(logPath: string) {
  return spawnSync(process.execPath, [join(ROOT, 'examples', 'matchmaker.mjs'), logPath], { cwd: ROOT, encoding: 'utf8' });
}

describe('examples/matchmaker.mjs (README, "Use as a module")', () => {
  it('ranks the candidates, chooses a server, runs eight rounds and writes a log that replays bit for bit', () => {
    if (!model.ok || !rules.ok) throw new Error('demo model and rules');
    const logPath = join(mkdtempSync(join(tmpdir(), 'lagparity-example-test-')), 'session.jsonl');
    const run = runExample(logPath);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    expect(run.stdout).toMatch(/^candidate lobbies, fairest first:\n {2}#\d/);
    expect(run.stdout).toMatch(/\nserver: [a-z-]+ \(/);
    const rounds = run.stdout.split('\n').filter((line) => /^\s+\d+\s+\d\.\d{3}/.test(line));
    expect(rounds).toHaveLength(8);

    const events = parseSessionLog(readFileSync(logPath, 'utf8'), 'session.jsonl');
    if (!events.ok) throw new Error(JSON.stringify(events.issues));
    const safePoints = events.value.flatMap((event) => (event.type === 'safe_point' ? [event] : []));
    expect(safePoints).toHaveLength(8);
    // Round 1 sets the scales to balanceLobby's answer for the estimates the log records.
    const [first] = safePoints;
    if (first === undefined) throw new Error('no safe point');
    const start = events.value[0];
    if (start?.type !== 'start') throw new Error('no start');
    const reference = balanceLobby({ format: 'lagparity/lobby@1', ...start.match, players: first.estimates.map(({ id, latency_ms }) => ({ id, latency_ms })) }, model.value, rules.value);
    if (reference.status === 'rejected') throw new Error('rejected');
    expect(first.applied).toEqual(Object.fromEntries(reference.players.map((player) => [player.id, player.scale])));
    // Printed scales are the log's, to three places; later moves stay within maxStep 0.1.
    rounds.forEach((line, index) => {
      const printed = line.trim().split(/\s+/).slice(1, -1).map(Number);
      expect(printed).toEqual(Object.values(safePoints[index]?.applied ?? {}).map((scale) => Number(scale.toFixed(3))));
      if (index > 0) {
        const before = safePoints[index - 1]?.applied ?? {};
        for (const [id, scale] of Object.entries(safePoints[index]?.applied ?? {})) expect(Math.abs(scale - (before[id] ?? 1))).toBeLessThanOrEqual(0.1 + 1e-12);
      }
    });
    expect(safePoints.map((event) => event.decision)).toContain('moved'); // the degraded route is followed at the rate limit

    const replay = runCli(['replay', logPath, '--model', join(MATCHES, 'model.json')]);
    expect(replay.status).toBe(0);
    expect(replay.stdout).toContain('reproduced: 8 safe points');
  });

  it('refuses to overwrite an existing file, and writes nothing to it', () => {
    const logPath = join(mkdtempSync(join(tmpdir(), 'lagparity-example-test-')), 'kept.jsonl');
    writeFileSync(logPath, 'precious\n');
    const run = runExample(logPath);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('exists');
    expect(readFileSync(logPath, 'utf8')).toBe('precious\n');
  });
});
