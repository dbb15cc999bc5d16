/**
 * The hostile-input corpus (issue 15): every file case of
 * test/fixtures/hostile/cases.json (written by tools/generate-hostile-corpus.ts)
 * run through the built CLI, as a user runs it, asserting what the table says
 * and what every case must get:
 *   - the documented exit code (0 ok, 1 a check failed, 2 bad input);
 *   - the issue code, on a line starting with the place (the file, then the
 *     line and column or the field path), and the line number where the table
 *     gives one; text the output must show (an id's escaped form, the range a
 *     message gives, "did you mean") and the number of issues where one is
 *     the point;
 *   - no stack trace and no "internal error"; no NaN (unless the file holds
 *     the word); no raw control character (C0 but tab and line feed, DEL, C1,
 *     bidi marks, line separators) in stdout or stderr;
 *   - nothing written after a failure: commands with --out write into a file
 *     that already exists (--force), which a failure must leave unchanged and
 *     alone in its folder (no temporary file left); commands that print their
 *     answer print nothing on stdout;
 *   - each case within 20 s, the whole process within 2 GiB.
 *
 * Cost: the cases run in one child process that imports the CLI bundle once
 * per case (test/helpers/cli-batch.mjs) instead of one process per case (about
 * 0.25 s each here): about 10 ms a case, the three cases at the documented
 * limits (256 players x 64 samples balanced and audited with the costliest
 * rules, 64 servers x 256 players) run once each and take most of the time.
 * The 2 GiB bound: the child runs with --max-old-space-size=2048, so a case
 * needing more heap ends it (and this test fails), and its peak resident set
 * (process.resourceUsage().maxRSS after every case) is asserted below 2 GiB.
 */
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROOT } from '../helpers/demo.js';
import { type BatchRun, runCliBatch } from '../helpers/cli.js';
import { type HostileCase, hostileCorpus } from '../../tools/generate-hostile-corpus.js';

const FOLDER = join(ROOT, 'test', 'fixtures', 'hostile');
const cases = JSON.parse(readFileSync(join(FOLDER, 'cases.json'), 'utf8')) as HostileCase[];
const SENTINEL = 'what the user had before\n';
const PER_CASE_MS = 20_000;
const MEMORY_BYTES = 2 * 1024 ** 3;

// eslint-disable-next-line no-control-regex -- matching control characters is the point
const RAW_CONTROL = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069]/;

const support = (name: string): string => join(FOLDER, `support-${name}`);

interface Prepared {
  readonly args: string[];
  /** The file a command with --out writes, made beforehand with SENTINEL in it. */
  readonly out: string | null;
}

function prepare(entry: HostileCase, index: number, scratch: string): Prepared {
  const file = join(FOLDER, entry.file);
  const model = support('model.json');
  const outFile = (name: string): string => {
    const folder = join(scratch, `case-${index}`);
    mkdirSync(folder);
    const path = join(folder, name);
    writeFileSync(path, SENTINEL);
    return path;
  };
  const [command, kind] = entry.command.split(':') as [string, string | undefined];
  switch (command) {
    case 'validate':
      return { args: kind === undefined ? ['validate', file] : ['validate', '--kind', kind, file], out: null };
    case 'validate-json':
      return { args: ['validate', '--json', file], out: null };
    case 'balance':
      return { args: ['balance', file, '--model', model], out: null };
    case 'balance-json':
      return { args: ['balance', file, '--model', model, '--json'], out: null };
    case 'balance-strict':
      return { args: ['balance', file, '--model', model, '--strict'], out: null };
    case 'balance-numeric':
      return { args: ['balance', file, '--model', support('numeric.model.json')], out: null };
    case 'balance-numeric-strict':
      return { args: ['balance', file, '--model', support('numeric.model.json'), '--strict'], out: null };
    case 'balance-heavy':
      return { args: ['balance', file, '--model', model, '--rules', support('heavy-rules.json')], out: null };
    case 'balance-model':
      return { args: ['balance', support('lobby.json'), '--model', file], out: null };
    case 'balance-rules':
      return { args: ['balance', support('lobby.json'), '--model', model, '--rules', file], out: null };
    case 'balance-rules-strict':
      return { args: ['balance', support('lobby.json'), '--model', model, '--rules', file, '--strict'], out: null };
    case 'audit-json':
      return { args: ['audit', file, '--model', model, '--rules', support('rules.json'), '--json'], out: null };
    case 'audit':
      return { args: ['audit', file, '--model', model, '--rules', support('rules.json')], out: null };
    case 'audit-heavy':
      return { args: ['audit', file, '--model', model, '--rules', support('heavy-rules.json')], out: null };
    case 'audit-rules':
      return { args: ['audit', support('lobby.json'), '--model', model, '--rules', file], out: null };
    case 'choose-server':
    case 'choose-server-heavy':
      return { args: ['choose-server', file, '--model', model], out: null };
    case 'replay':
      return { args: ['replay', file, '--model', model], out: null };
    case 'report-model': {
      const out = outFile('report.html');
      return { args: ['report', '--trials', support('trials.csv'), '--model', file, '--lobbies', support('lobby.json'), '--out', out, '--force'], out };
    }
    case 'report-lobby': {
      const out = outFile('report.html');
      return { args: ['report', '--trials', support('trials.csv'), '--model', model, '--lobbies', file, '--out', out, '--force'], out };
    }
    case 'report-size-study': {
      const out = outFile('report.html');
      return { args: ['report', '--trials', support('trials.csv'), '--model', model, '--size-study', file, '--out', out, '--force'], out };
    }
    case 'plan-schedule': {
      const out = outFile('schedule.csv');
      return { args: ['plan', 'schedule', file, '--out', out, '--force'], out };
    }
    default:
      throw new Error(`unknown command ${entry.command} in cases.json`);
  }
}

type Outcome = BatchRun;

const scratch = mkdtempSync(join(tmpdir(), 'lagparity-hostile-'));
const prepared = cases.map((entry, index) => prepare(entry, index, scratch));
let outcomes: Outcome[] = [];
let wallMs = 0;

beforeAll(() => {
  const started = performance.now();
  outcomes = runCliBatch(prepared.map(({ args }) => args), { cwd: FOLDER });
  wallMs = performance.now() - started;
}, 180_000);

afterAll(() => {
  const slowest = outcomes
    .map((outcome, index) => ({ ms: outcome.ms, file: cases[index]?.file, command: cases[index]?.command }))
    .sort((a, b) => b.ms - a.ms)
    .slice(0, 3)
    .map(({ ms, file, command }) => `${file} (${command}) ${(ms / 1000).toFixed(2)} s`);
  process.stderr.write(`hostile corpus: ${cases.length} cases in ${(wallMs / 1000).toFixed(1)} s (one process; peak RSS ${Math.round(Math.max(0, ...outcomes.map((outcome) => outcome.maxRss)) / 2 ** 20)} MiB); slowest: ${slowest.join(', ')}\n`);
});

describe(`the hostile-input corpus (${cases.length} file cases)`, () => {
  it('holds at least 150 hostile JSON files across every document kind', () => {
    const files = new Set(cases.map((entry) => entry.file));
    expect([...files].filter((file) => /\.jsonl?$/.test(file)).length).toBeGreaterThanOrEqual(150);
    for (const prefix of ['deep-', 'dup-', 'proto-', 'control-', 'encoding-', 'utf8-', 'number-', 'format-', 'wrong-kind-', 'rules-', 'limits-', 'session-', 'plan-']) {
      expect(cases.filter((entry) => entry.file.startsWith(prefix)).length, prefix).toBeGreaterThanOrEqual(3);
    }
  });

  it('is exactly what tools/generate-hostile-corpus.ts writes', () => {
    const corpus = hostileCorpus();
    expect(corpus.cases).toEqual(cases);
    const onDisk = readdirSync(FOLDER).filter((name) => name !== 'cases.json' && name !== 'README.md');
    expect(onDisk.sort()).toEqual([...corpus.files.keys()].sort());
    for (const [name, bytes] of corpus.files) expect(Buffer.compare(readFileSync(join(FOLDER, name)), Buffer.from(bytes)), name).toBe(0);
  });

  it.each(cases.map((entry, index) => [`${entry.file} (${entry.command})`, entry, index] as const))('%s', (_name, entry, index) => {
    const outcome = outcomes[index] as Outcome;
    const both = `${outcome.stdout}\n${outcome.stderr}`;
    expect(outcome.status, `${entry.note}\n${outcome.stderr}`).toBe(entry.exit);
    expect(both).not.toMatch(/\n\s+at .*:\d+|internal error|thrown out of the CLI/); // no stack trace
    if (!readFileSync(join(FOLDER, entry.file), 'latin1').includes('NaN')) expect(both).not.toMatch(/NaN/);
    expect(RAW_CONTROL.exec(both)?.[0], 'a raw control character in the output').toBeUndefined();
    expect(outcome.ms).toBeLessThan(PER_CASE_MS);
    expect(outcome.maxRss).toBeLessThan(MEMORY_BYTES);

    const issueLines = outcome.stderr.split('\n').filter((line) => /: (error|warning) [a-z_]+: /.test(line));
    if (entry.code !== null) {
      const line = issueLines.find((text) => text.includes(` ${entry.code}: `));
      expect(line, `${entry.note}: no ${entry.code} in\n${outcome.stderr}`).toBeDefined();
      if (entry.place !== null) expect(line?.startsWith(entry.place), `${line} should start with ${entry.place}`).toBe(true);
      if (entry.line !== undefined) expect(line?.startsWith(`${entry.file}:${entry.line}`) || line?.includes(`line ${entry.line}`), `${line} should name line ${entry.line}`).toBe(true);
    } else if (entry.place !== null) {
      expect(issueLines.some((text) => text.startsWith(entry.place as string)), `no issue at ${entry.place} in\n${outcome.stderr}`).toBe(true);
    }
    if (entry.shows !== undefined) expect(both, `the output should show ${entry.shows}`).toContain(entry.shows);
    if (entry.issues !== undefined) expect(issueLines, outcome.stderr).toHaveLength(entry.issues);
    if (entry.exit === 2) {
      expect(issueLines.some((text) => text.startsWith(entry.file) && text.includes(': error ')), `an error naming ${entry.file} in\n${outcome.stderr}`).toBe(true);
    }

    const { out } = prepared[index] as Prepared;
    if (out !== null) {
      expect(readdirSync(join(out, '..')), 'only the output file in its folder (no temporary file left)').toEqual([out.split('/').pop()]);
      const written = readFileSync(out, 'utf8');
      if (entry.exit === 0) {
        expect(written).not.toBe(SENTINEL);
        expect(written).not.toMatch(/NaN/);
        expect(RAW_CONTROL.exec(written)?.[0], 'a raw control character in the written file').toBeUndefined();
      } else expect(written, 'a failure leaves the existing file as it was').toBe(SENTINEL);
    } else if (entry.exit === 2 && !entry.command.startsWith('validate')) {
      // A rejected lobby may be named as rejected on stdout (with its reason), but no answer: no table, no JSON result.
      expect(outcome.stdout, 'no answer printed after a failure').not.toMatch(/[│┌{]/);
    }
    expect(existsSync(join(FOLDER, entry.file))).toBe(true);
  });

  it(`runs every case within ${PER_CASE_MS / 1000} s and the whole process within 2 GiB`, () => {
    expect(outcomes.length).toBe(cases.length);
    expect(Math.max(...outcomes.map((outcome) => outcome.ms))).toBeLessThan(PER_CASE_MS);
    expect(Math.max(...outcomes.map((outcome) => outcome.maxRss))).toBeLessThan(MEMORY_BYTES);
  });
});
