// A large trials file read on two threads (src/io/split-read.ts) gives exactly what one thread gives:
// the same groups in the same order, names, warnings and errors; the file's hash is checked against
// node:crypto over the file's bytes.
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { type ReadTrialsOptions, readGroupedTrialsFile } from '../../src/io/read-trials.js';
import type { SplitOutcome, SplitTuning } from '../../src/io/split-read-protocol.js';
import { createRandomSource } from '../../src/random.js';

const folder = mkdtempSync(join(tmpdir(), 'lagparity-split-read-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

// The worker as tsc emits it (the suite's global setup builds dist/ first); the source tree has no .js worker.
const WORKER = pathToFileURL(join(import.meta.dirname, '..', '..', 'dist', 'io', 'read-part-worker.js'));

interface Shape {
  readonly rows: number;
  readonly perRound?: boolean;
  readonly weight?: boolean;
  readonly numericLevels?: boolean;
  readonly lineEnd?: string;
  readonly bom?: boolean;
}

/** Seeded rows; players and a level that first appear late in the file, and some quoted and padded fields. */
function generated({ rows, perRound = false, weight = false, numericLevels = false, lineEnd = '\n', bom = false }: Shape, seed: number): string {
  const random = createRandomSource(seed);
  const levels = numericLevels ? ['1', '2.5', '4'] : ['rookie', 'veteran', 'elite'];
  const header = ['player', 'latency_ms', 'scale', 'difficulty', ...(perRound ? ['hits', 'attempts'] : ['hit']), ...(weight ? ['weight'] : [])];
  const lines = [header.join(',')];
  for (let i = 0; i < rows; i += 1) {
    const late = i > rows * 0.8;
    const player = `pl-${Math.floor(random() * (late ? 300 : 200))}`;
    const level = late && random() < 0.1 ? (numericLevels ? '7' : 'legend') : (levels[Math.floor(random() * 3)] as string);
    const tries = 1 + Math.floor(random() * 5);
    const response = perRound ? [String(Math.floor(random() * (tries + 1))), String(tries)] : [random() < 0.6 ? '1' : '0'];
    const fields = [i % 211 === 0 ? `"${player}"` : player, (Math.floor(random() * 600) / 4).toString(), ['1', '1.25', '1.5'][Math.floor(random() * 3)] as string, i % 173 === 0 ? ` ${level}` : level, ...response, ...(weight ? [random() < 0.5 ? '1' : '0.5'] : [])];
    lines.push(fields.join(','));
  }
  return `${bom ? '\uFEFF' : ''}${lines.join(lineEnd)}${lineEnd}`;
}

function write(name: string, text: string): string {
  const path = join(folder, name);
  writeFileSync(path, text);
  return path;
}

type Read = Awaited<ReturnType<typeof readGroupedTrialsFile>>;

/** The same read: every field, the groups' columns byte for byte (toEqual is slow on long typed arrays). */
function expectSame(two: Read, one: Read): void {
  if (!one.ok || !two.ok) {
    expect(two).toEqual(one);
    return;
  }
  const { groups: groupsTwo, ...restTwo } = two.value;
  const { groups: groupsOne, ...restOne } = one.value;
  expect({ ...two, value: restTwo }).toEqual({ ...one, value: restOne });
  expect(Object.keys(groupsTwo)).toEqual(Object.keys(groupsOne));
  for (const [key, column] of Object.entries(groupsOne)) {
    const other = (groupsTwo as unknown as Record<string, unknown>)[key];
    if (ArrayBuffer.isView(column) && ArrayBuffer.isView(other)) {
      expect(other.constructor, key).toBe(column.constructor);
      expect(Buffer.from(other.buffer, other.byteOffset, other.byteLength).equals(Buffer.from(column.buffer, column.byteOffset, column.byteLength)), key).toBe(true);
    } else expect(other, key).toEqual(column);
  }
}

/** One thread, then two with the split forced (any size; no first read unless `tuning` says) and its outcomes. */
async function both(path: string, tuning: SplitTuning = { callerShare: 0.3, probeBytes: 0 }) {
  const outcomes: SplitOutcome[] = [];
  const options: ReadTrialsOptions = { sha256: true };
  const one = await readGroupedTrialsFile(path, options);
  const two = await readGroupedTrialsFile(path, { ...options, threads: 2, split: { minBytes: 0, workerUrl: WORKER, ...tuning, onOutcome: (outcome) => outcomes.push(outcome) } });
  return { one, two, outcomes };
}

describe('reading a file on two threads', () => {
  const shapes: [string, Shape][] = [
    ['per attempt, named levels', { rows: 150_000 }],
    ['per attempt, numeric levels, weights, CRLF, a byte-order mark', { rows: 40_000, numericLevels: true, weight: true, lineEnd: '\r\n', bom: true }],
    ['per round', { rows: 40_000, perRound: true }],
  ];
  it('the default first read and share (the sink keeps these rows: half the lines each), the same answer', async () => {
    const path = write('defaults.csv', generated({ rows: 150_000 }, 11));
    expect(readFileSync(path).length).toBeGreaterThan(2 << 20);
    const { one, two, outcomes } = await both(path, {});
    expect(outcomes).toEqual(['two-threads']);
    expectSame(two, one);
  });

  it.each(shapes)('%s: the same groups, names, warnings and hash as one thread', async (name, shape) => {
    const text = generated(shape, name.length);
    const path = write(`${name.length}.csv`, text);
    const { one, two, outcomes } = await both(path);
    expect(outcomes).toEqual(['two-threads']);
    expectSame(two, one);
    expect(two.ok && two.value.sha256).toBe(createHash('sha256').update(readFileSync(path)).digest('hex'));
  });

  it.each([
    // After the worker posted rows (a batch holds 65,536): the file is read again.
    [150_000, 140_000, 'read-again'],
    // Before it posted any: this thread reads on from the split point.
    [20_000, 18_000, 'one-thread'],
  ] as const)('a bad line in the worker\'s part (%i rows, line %i): the same error with its own line (%s)', async (rows, bad, how) => {
    const lines = generated({ rows }, 7).split('\n');
    lines[bad] = 'pl-1,42,1,veteran,2';
    const path = write(`bad-late-${rows}.csv`, lines.join('\n'));
    const { one, two, outcomes } = await both(path);
    expect(outcomes).toEqual([how]);
    expect(one.ok).toBe(false);
    expectSame(two, one);
    expect(JSON.stringify(two)).toContain(`bad-late-${rows}.csv:${bad + 1}`);
  });

  it('a bad line in the calling thread\'s part: that error, the worker stopped', async () => {
    const lines = generated({ rows: 20_000 }, 8).split('\n');
    lines[300] = 'pl-1,-5,1,veteran,1';
    const path = write('bad-early.csv', lines.join('\n'));
    const { one, two, outcomes } = await both(path);
    expect(outcomes).toEqual(['one-thread']);
    expect(one.ok).toBe(false);
    expectSame(two, one);
  });

  it('a quoted field holding a line end across the split point: one thread reads on, the same answer', async () => {
    const text = generated({ rows: 20_000 }, 9);
    const middle = text.indexOf('\n', Math.floor(text.length * 0.3));
    // A player id with a line end in it, whose quote opens before the split point and closes after it.
    const quoted = `${text.slice(0, middle + 1)}"pl-\n1",40,1,veteran,1${text.slice(middle)}`;
    const path = write('quoted.csv', quoted);
    const { one, two, outcomes } = await both(path, { callerShare: (middle + 2.5) / quoted.length, probeBytes: 0 });
    expect(one.ok).toBe(true);
    expect(outcomes).toEqual(['one-thread']);
    expectSame(two, one);
  });

  it('a worker that cannot start: one thread reads every line, the same answer', async () => {
    const path = write('no-worker.csv', generated({ rows: 20_000 }, 10));
    const { one, two, outcomes } = await both(path, { callerShare: 0.3, probeBytes: 0, workerUrl: pathToFileURL(join(folder, 'missing-worker.js')) });
    expect(outcomes).toEqual(['one-thread']);
    expectSame(two, one);
  });
});
