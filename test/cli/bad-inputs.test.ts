/**
 * The corpus of bad inputs (test/fixtures/bad/, described case by case in
 * cases.json): each case runs the built CLI and asserts the exit code, the
 * issue code, and that the message names the place. The cases run in one
 * child process (runCliBatch: the bundle imported afresh per case), about
 * 10 ms a case instead of a process start each. Cases with exit 0 are
 * inputs that must be accepted (a byte-order mark, CRLF, a detected
 * delimiter), some with a warning.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, mkdtempSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { type CliRun, runCli, runCliBatch } from '../helpers/cli.js';
import { MATCHES, ROOT } from '../helpers/demo.js';

interface Case {
  file: string;
  command: string;
  exit: number;
  code: string | null;
  location: string | null;
  note: string;
}

const folder = join(ROOT, 'test', 'fixtures', 'bad');
const cases = JSON.parse(readFileSync(join(folder, 'cases.json'), 'utf8')) as Case[];
const model = join(MATCHES, 'ground-truth.model.json');
const rules = join(MATCHES, 'league-rules.json');
const lobby = join(MATCHES, 'even-5v5.lobby.json');

function argsFor(entry: Case): string[] {
  const path = join(folder, entry.file);
  switch (entry.command) {
    case 'validate':
      return ['validate', path];
    case 'lobby':
    case 'model':
    case 'rules':
      return ['validate', '--kind', entry.command, path];
    case 'balance-lobby':
      return ['balance', path, '--model', model];
    case 'balance-lobby-strict':
      return ['balance', path, '--model', model, '--strict'];
    case 'balance-lobby-rules':
      return ['balance', path, '--model', model, '--rules', rules];
    case 'balance-model':
      return ['balance', lobby, '--model', path];
    case 'fit':
      return ['fit', path, '--out', join(mkdtempSync(join(tmpdir(), 'lagparity-fit-')), 'model.json')];
    case 'plan-schedule':
      return ['plan', 'schedule', path, '--out', join(mkdtempSync(join(tmpdir(), 'lagparity-plan-')), 'schedule.csv')];
    case 'plan-size':
      return ['plan', 'size', path, '--studies', '100', '--out', join(mkdtempSync(join(tmpdir(), 'lagparity-plan-')), 'size.json')];
    case 'plan-size-pilot':
      return ['plan', 'size', join(MATCHES, 'preseason-playtest.plan.json'), '--pilot-model', path, '--out', join(mkdtempSync(join(tmpdir(), 'lagparity-plan-')), 'size.json')];
    default:
      throw new Error(`unknown command ${entry.command} in cases.json`);
  }
}

describe(`the bad-input corpus (${cases.length} cases)`, () => {
  it('has at least 60 cases across the four formats', () => {
    expect(cases.length).toBeGreaterThanOrEqual(60);
    for (const prefix of ['trials-', 'lobby-', 'model-', 'rules-']) expect(cases.filter((entry) => entry.file.startsWith(prefix)).length).toBeGreaterThanOrEqual(8);
  });

  const argsList = cases.map(argsFor);
  let runs: CliRun[] = [];
  beforeAll(() => {
    runs = runCliBatch(argsList);
  }, 180_000);

  it.each(cases.map((entry, index) => [entry.note, entry, index] as const))('%s', (_note, entry, index) => {
    const args = argsList[index] as string[];
    const run = runs[index] as CliRun;
    expect(run.status, run.stderr).toBe(entry.exit);
    expect(run.stderr).not.toMatch(/\n\s+at .*\.js:\d+/); // never a stack trace
    if (!readFileSync(join(folder, entry.file), 'latin1').includes('NaN')) expect(run.stderr).not.toMatch(/NaN/); // never a computed NaN
    if (entry.code !== null) {
      const line = run.stderr.split('\n').find((text) => text.includes(` ${entry.code}: `));
      expect(line, run.stderr).toBeDefined();
      expect(line?.startsWith(entry.location ?? ''), `${line} should start with ${entry.location}`).toBe(true);
      expect(line).toMatch(/requires|refused|ignored|read as|outside/); // names what was expected
    }
    expect(existsSync(join(folder, entry.file))).toBe(true); // nothing the user gave is removed
    if (entry.command.startsWith('plan') && entry.exit !== 0) expect(existsSync(args[args.indexOf('--out') + 1] as string)).toBe(false); // no partial file
  });
});

describe('inputs too large to keep in the repository, made at test time', () => {
  const scratch = mkdtempSync(join(tmpdir(), 'lagparity-bad-'));

  it('refuses a trials file with a 50 MB line, quickly, naming the line', () => {
    const path = join(scratch, 'long-line.csv');
    writeFileSync(path, `latency_ms,scale,difficulty,hit\n20,1,${'x'.repeat(50 * 1024 * 1024)},1\n`);
    const started = performance.now();
    const run = runCli(['validate', path]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/long-line\.csv:2: error line_too_long/);
    expect(performance.now() - started).toBeLessThan(15_000);
  });

  it('refuses a lobby of 100,000 players above the documented limit, quickly', () => {
    const path = join(scratch, 'huge.lobby.json');
    const players = Array.from({ length: 100_000 }, (_, index) => ({ id: `p${index}`, latency_ms: 20 + (index % 90) }));
    writeFileSync(path, JSON.stringify({ format: 'lagparity/lobby@1', match_id: 'huge', attribute: 'hit_area', difficulty: 'veteran', players }));
    const started = performance.now();
    const run = runCli(['balance', path, '--model', model]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/huge\.lobby\.json:players: error out_of_range: .*at most 256 players/);
    expect(performance.now() - started).toBeLessThan(10_000);
  });

  it('refuses 100,000 latency samples for one player above the documented limit', () => {
    const path = join(scratch, 'samples.lobby.json');
    const samples = Array.from({ length: 100_000 }, (_, index) => 20 + (index % 7));
    writeFileSync(path, JSON.stringify({ format: 'lagparity/lobby@1', match_id: 'samples', attribute: 'hit_area', difficulty: 'veteran', players: [{ id: 'a', latency_ms: samples }, { id: 'b', latency_ms: 30 }] }));
    const run = runCli(['balance', path, '--model', model]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/samples\.lobby\.json:players\[0\]\.latency_ms: error out_of_range: .*at most 4096 latency samples/);
  });

  it('refuses a JSON file above 16 MiB while reading it', () => {
    const path = join(scratch, 'padded.lobby.json');
    writeFileSync(path, `{"format": "lagparity/lobby@1", "pad": "${'x'.repeat(17 * 1024 * 1024)}"}`);
    const run = runCli(['validate', path]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/padded\.lobby\.json: error too_large/);
  });
});
