import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parse } from 'csv-parse/sync';
import { parseDecimal } from '../../src/formats/plain-decimal.js';
import { TrialsReader, detectDelimiter, parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { trialRowSchema } from '../../src/formats/trials-schema.js';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { MATCHES } from '../helpers/demo.js';

function failure(text: string) {
  const result = parseTrialsCsv(text, 'trials.csv');
  if (result.ok) throw new Error('expected a failure');
  return result.issues[0];
}

describe('parseTrialsCsv()', () => {
  it('reads the bundled playtest into columns', () => {
    const result = parseTrialsCsv(readFileSync(join(MATCHES, 'playtest-trials.csv'), 'utf8'));
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    const trials = result.value;
    expect(trials.shape).toBe('per_round');
    expect(trials.rows).toBe(36 * 6 * 5 * 3);
    expect(trials.difficulty.kind).toBe('levels');
    expect(trials.player?.ids.length).toBe(36);
    expect(trials.attempts.every((value) => value === 20)).toBe(true);
  });

  it('reads per-attempt rows, a byte-order mark, CRLF line ends and quoted fields', () => {
    const result = parseTrialsCsv('\uFEFFlatency_ms,scale,difficulty,hit,player\r\n10,1,"easy, close",1,a\r\n20.5,1.25,hard,0,b\r\n', 'trials.csv');
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(Array.from(result.value.latency)).toEqual([10, 20.5]);
    expect(result.value.difficulty).toEqual({ kind: 'levels', levels: ['easy, close', 'hard'], codes: Int32Array.from([0, 1]) });
    expect(Array.from(result.value.successes)).toEqual([1, 0]);
  });

  it('reads numeric difficulty as numbers', () => {
    const result = parseTrialsCsv('latency_ms,scale,difficulty,hit\n10,1,2.5,1\n20,1,3,0\n');
    expect(result.ok && result.value.difficulty).toEqual({ kind: 'numeric', values: Float64Array.from([2.5, 3]) });
  });

  it('warns about unknown columns and names a detected semicolon delimiter', () => {
    const result = parseTrialsCsv('latency_ms;scale;difficulty;hit;note\n10;1;2;1;x\n');
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.warnings.map((issue) => issue.code)).toEqual(['delimiter_detected', 'unknown_column']);
    expect(result.warnings[0]?.message).toContain('semicolon');
  });

  it.each([
    ['', 'empty_file', 'trials.csv'],
    ['latency_ms,scale,difficulty,hit\n', 'no_rows', 'trials.csv'],
    ['latency_ms,scale,hit\n10,1,1\n', 'missing_column', 'trials.csv:1'],
    ['latency_ms,scale,difficulty,hit,hits,attempts\n', 'ambiguous_response', 'trials.csv:1'],
    ['latency_ms,scale,difficulty,hit\n10,1,a,1\nabc,1,a,1\n', 'not_a_number', 'trials.csv:3:latency_ms'],
    ['latency_ms,scale,difficulty,hit\n,1,a,1\n', 'empty_field', 'trials.csv:2:latency_ms'],
    ['latency_ms,scale,difficulty,hit\n-3,1,a,1\n', 'out_of_range', 'trials.csv:2:latency_ms'],
    ['latency_ms,scale,difficulty,hit\nNaN,1,a,1\n', 'not_a_number', 'trials.csv:2:latency_ms'],
    ['latency_ms,scale,difficulty,hit\nInfinity,1,a,1\n', 'not_a_number', 'trials.csv:2:latency_ms'],
    ['latency_ms,scale,difficulty,hit\n1e309,1,a,1\n', 'not_a_number', 'trials.csv:2:latency_ms'],
    ['latency_ms,scale,difficulty,hit\n10,0,a,1\n', 'out_of_range', 'trials.csv:2:scale'],
    ['latency_ms,scale,difficulty,hit\n10,1,a,2\n', 'out_of_range', 'trials.csv:2:hit'],
    ['latency_ms,scale,difficulty,hits,attempts\n10,1,a,5,4\n', 'out_of_range', 'trials.csv:2:hits'],
    ['latency_ms,scale,difficulty,hits,attempts\n10,1,a,0,0\n', 'out_of_range', 'trials.csv:2:attempts'],
    ['latency_ms,scale,difficulty,hit\n10,1,a\n', 'wrong_field_count', 'trials.csv:2'],
    ['latency_ms,scale,difficulty,hit\n10,1,a,"1\n', 'invalid_csv', 'trials.csv:2'],
  ])('refuses %j with %s at %s', (text, code, location) => {
    const issue = failure(text);
    expect(issue?.code).toBe(code);
    expect(issue?.location).toBe(location);
  });

  it('reports how many good rows it read before the bad one', () => {
    expect(failure('latency_ms,scale,difficulty,hit\n10,1,a,1\n11,1,a,0\n12,x,a,1\n')?.message).toMatch(/stopped after 2 good rows/);
  });

  it('refuses a 50 MB line quickly', () => {
    const started = performance.now();
    const issue = failure(`latency_ms,scale,difficulty,hit\n10,1,${'a'.repeat(50 * 1024 * 1024)},1\n`);
    expect(issue?.code).toBe('line_too_long');
    expect(performance.now() - started).toBeLessThan(10_000);
  });

  it('agrees with the zod row grammar on generated rows (fast-check, 300 runs, seed 7)', () => {
    const field = fc.oneof(
      fc.constantFrom('', '0', '1', '2', '-1', '0.5', '1e3', 'NaN', 'Infinity', '1e309', 'x', '0x10', ' 3 '),
      fc.double({ noNaN: true, min: -10, max: 2000 }).map(String),
    );
    fc.assert(
      fc.property(field, field, field, fc.constantFrom('easy', '2', ''), (latency, scale, hit, difficulty) => {
        const result = parseTrialsCsv(`latency_ms,scale,difficulty,hit\n${latency},${scale},${difficulty},${hit}\n`);
        const asNumber = (text: string) => parseDecimal(text);
        const row = { latency_ms: asNumber(latency), scale: asNumber(scale), hit: asNumber(hit), difficulty: difficulty === '' ? undefined : difficulty };
        const zodOk = trialRowSchema.safeParse(row).success;
        expect(result.ok).toBe(zodOk);
      }),
      { seed: 7, numRuns: 300 },
    );
  });
});

describe('detectDelimiter()', () => {
  it('finds comma, semicolon and tab headers, ignoring quoted ones', () => {
    expect(detectDelimiter('a,b,c')).toBe(',');
    expect(detectDelimiter('a;b;c')).toBe(';');
    expect(detectDelimiter('a\tb')).toBe('\t');
    expect(detectDelimiter('"a;b",c')).toBe(',');
  });
});

describe('TrialsReader', () => {
  const text =
    '\uFEFFplayer,latency_ms,scale,difficulty,hit\r\n' +
    'a,10.25,1,"easy, ""close""",1\r\n' +
    '\r\n' +
    'b,20,1.5,"two\nlines",0\n' +
    'a,1e1,2, hard ,1\r' +
    'c,0.125,1.25,hard,0';

  /** Feed `bytes` in chunks of `size`, through one reused buffer as the file reader does. */
  function readInChunks(bytes: Buffer, size: number) {
    const reader = new TrialsReader('chunks.csv', ',');
    const buffer = Buffer.alloc(size);
    for (let start = 0; start < bytes.length; start += size) {
      const count = bytes.copy(buffer, 0, start, Math.min(bytes.length, start + size));
      if (!reader.push(buffer.subarray(0, count))) break;
    }
    return reader.finish();
  }

  it('reads the same columns whatever the chunk size, through a reused chunk buffer', () => {
    const whole = parseTrialsCsv(text, 'chunks.csv');
    expect(whole.ok).toBe(true);
    if (!whole.ok) return;
    expect(Array.from(whole.value.latency)).toEqual([10.25, 20, 10, 0.125]);
    expect(whole.value.difficulty).toEqual({ kind: 'levels', levels: ['easy, "close"', 'two\nlines', 'hard'], codes: Int32Array.from([0, 1, 2, 2]) });
    expect(whole.value.player?.ids).toEqual(['a', 'b', 'c']);
    for (const size of [1, 2, 3, 7, 64, 4096]) {
      const chunked = readInChunks(Buffer.from(text, 'utf8'), size);
      expect(chunked, `chunks of ${size} bytes`).toEqual(whole);
    }
  });

  it('names the line a record starts on after a quoted field spanning lines', () => {
    const result = parseTrialsCsv('latency_ms,scale,difficulty,hit\n10,1,"a\nb",1\n11,x,a,1\n', 'lines.csv');
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues[0]?.location).toBe('lines.csv:4:scale');
  });

  it.each([
    ['latency_ms,scale,difficulty,hit\n10,1,a"b,1\n', 'invalid_csv', 'trials.csv:2'],
    ['latency_ms,scale,difficulty,hit\n10,1,"a"b,1\n', 'invalid_csv', 'trials.csv:2'],
    [`latency_ms,scale,difficulty,hit\n10,1,"${'q'.repeat(70_000)}",1\n`, 'line_too_long', 'trials.csv:2'],
  ])('refuses %# with %s at %s', (input, code, location) => {
    const issue = failure(input);
    expect(issue?.code).toBe(code);
    expect(issue?.location).toBe(location);
  });

  it('reads plain decimals from bytes to the same double as Number() (fast-check, 500 runs, seed 11)', () => {
    const decimal = fc
      .tuple(fc.constantFrom('', '+', '-'), fc.stringMatching(/^\d{1,9}$/), fc.stringMatching(/^(\.\d{0,9})?$/))
      .map(([sign, whole, fraction]) => `${sign}${whole}${fraction}`);
    fc.assert(
      fc.property(fc.array(decimal, { minLength: 1, maxLength: 20 }), (values) => {
        const result = parseTrialsCsv(`latency_ms,scale,difficulty,hit\n${values.map((value) => `1,${value},a,1`).join('\n')}\n`);
        const expected = values.map(Number);
        if (expected.every((value) => value > 0)) {
          expect(result.ok).toBe(true);
          if (result.ok) expect(Array.from(result.value.scale)).toEqual(expected);
        } else expect(result.ok).toBe(false);
      }),
      { seed: 11, numRuns: 500 },
    );
  });
});

describe('TrialsReader plain lines', () => {
  /** Every kind of field a line can hold: plain ones the one-pass reader takes, and ones it must leave to the full rules. */
  /** Mostly plain fields, some valid ones the one-pass reader must leave to the full rules, a few bad ones (which end the file). */
  const mix = (plain: fc.Arbitrary<string>, unusual: readonly string[], bad: readonly string[]) =>
    fc.oneof({ arbitrary: plain, weight: 40 }, { arbitrary: fc.constantFrom(...unusual), weight: 8 }, { arbitrary: fc.constantFrom(...bad), weight: 1 });
  const latencies = mix(
    fc.integer({ min: 0, max: 50_000 }).map((hundredths) => (hundredths / 100).toFixed(hundredths % 3)),
    ['0', '+7', '-0', '.5', '12.', ' 12.5', '"12.5"', '1.2e1', '60000', '1234567890123456', '123456789012345'],
    ['', '-3', '60000.01', 'x', '1..2'],
  );
  const scales = mix(fc.constantFrom('1', '1.25', '1.5', '2'), ['1e0', ' 1', '"2"', '001.50', '+1'], ['0', '-1', '1.5.1']);
  const names = mix(fc.constantFrom('easy', 'hard', 'mid level', '3', '2.5'), ['"quoted, name"', ' padded ', 'ünï', '"easy"', 'new'], ['', 'a"b']);
  const players = mix(fc.integer({ min: 0, max: 40 }).map((id) => `p${id}`), ['"p1"', ' p2', 'p41 '], ['']);
  const hits = mix(fc.constantFrom('0', '1'), [' 1', '"1"', '1e0', '1.0', '+0'], ['2', '0.5', '']);
  const counts = mix(fc.constantFrom('1', '3', '10'), ['0', '"4"', '3.0'], ['2.5', '-1']);
  const weights = mix(fc.constantFrom('1', '0.5', '0', '2'), ['1e-1', ' 2'], ['-1', '']);
  const layouts = fc.record({
    perRound: fc.boolean(),
    player: fc.boolean(),
    weight: fc.boolean(),
    extra: fc.boolean(),
    order: fc.integer({ min: 0, max: 5 }),
  });

  function generated() {
    return layouts.chain((layout) => {
      const columns: [string, fc.Arbitrary<string>][] = [
        ['latency_ms', latencies],
        ['scale', scales],
        ['difficulty', names],
        ...(layout.perRound ? ([['hits', counts], ['attempts', counts]] as [string, fc.Arbitrary<string>][]) : ([['hit', hits]] as [string, fc.Arbitrary<string>][])),
        ...(layout.player ? ([['player', players]] as [string, fc.Arbitrary<string>][]) : []),
        ...(layout.weight ? ([['weight', weights]] as [string, fc.Arbitrary<string>][]) : []),
        ...(layout.extra ? ([['note', fc.constantFrom('x', '', '"a, b"', 'say "hi"')]] as [string, fc.Arbitrary<string>][]) : []),
      ];
      // A rotation of the columns, so no field is always first or last.
      const ordered = columns.map((_, k) => columns[(k + layout.order) % columns.length] as [string, fc.Arbitrary<string>]);
      const row = fc.tuple(...ordered.map(([, values]) => values));
      return fc.record({
        header: fc.constant(ordered.map(([name]) => name).join(',')),
        rows: fc.array(fc.tuple(row, fc.constantFrom('\n', '\n', '\n', '\r\n', '\r')), { minLength: 1, maxLength: 60 }),
        finalEnd: fc.boolean(),
        chunk: fc.integer({ min: 1, max: 64 }),
      });
    });
  }

  function read(bytes: Buffer, chunk: number, plainLines: boolean) {
    const reader = new TrialsReader('mixed.csv', ',', { plainLines });
    for (let start = 0; start < bytes.length; start += chunk) if (!reader.push(bytes.subarray(start, start + chunk))) break;
    return reader.finish();
  }

  it('reads the same columns, warnings and first failure as the full rules alone (fast-check, 400 runs, seed 23)', () => {
    fc.assert(
      fc.property(generated(), ({ header, rows, finalEnd, chunk }) => {
        const body = rows.map(([fields, end], k) => `${fields.join(',')}${k < rows.length - 1 || finalEnd ? end : ''}`).join('');
        const bytes = Buffer.from(`${header}\n${body}`, 'utf8');
        const plain = read(bytes, chunk, true);
        expect(plain).toEqual(read(bytes, chunk, false));
        expect(plain).toEqual(read(bytes, bytes.length, true));
      }),
      { seed: 23, numRuns: 400 },
    );
  });

  it.each([
    ['the latency limit', 'latency_ms,scale,difficulty,hit\n60000,1,a,1\n60000.01,1,a,1\n'],
    ['a negative zero and signs', 'latency_ms,scale,difficulty,hit\n-0,+1,a,+0\n-1,1,a,1\n'],
    ['15 and 16 digits', 'latency_ms,scale,difficulty,hit\n1,123456789012345,a,1\n1,9007199254740995,a,1\n1,0.1000000000000001,a,1\n'],
    ['a bare CR, then CRLF split by the chunk end', 'latency_ms,scale,difficulty,hit\r1,1,a,1\r2,1,a,0\r\n3,1,a,1\r\n'],
    ['a scale of zero', 'latency_ms,scale,difficulty,hit\n1,1,a,1\n1,0,a,1\n'],
    ['a hit of 2', 'latency_ms,scale,difficulty,hit\n1,1,a,1\n1,1,a,2\n'],
    ['hits above attempts', 'latency_ms,scale,difficulty,hits,attempts\n1,1,a,2,3\n1,1,a,4,3\n'],
    ['a fractional attempt count', 'latency_ms,scale,difficulty,hits,attempts\n1,1,a,2,3\n1,1,a,1,2.5\n'],
    ['a negative weight', 'latency_ms,scale,difficulty,hit,weight\n1,1,a,1,0\n1,1,a,1,-1\n'],
    ['an empty player', 'latency_ms,scale,difficulty,hit,player\n1,1,a,1,p\n1,1,a,1,\n'],
    ['one field too many', 'latency_ms,scale,difficulty,hit\n1,1,a,1\n1,1,a,1,\n'],
    ['one field too few', 'latency_ms,scale,difficulty,hit\n1,1,a,1\n1,1,a\n'],
    ['a quote inside a name', 'latency_ms,scale,difficulty,hit\n1,1,a,1\n1,1,a"b,1\n'],
    ['a name padded after it was seen plain', 'latency_ms,scale,difficulty,hit\n1,1,a,1\n1,1, a ,1\n1,1,a,0\n'],
    ['a name that starts with a known one', 'latency_ms,scale,difficulty,hit\n1,1,elite,1\n1,1,elitex,1\n1,1,elite,0\n1,1,elit,1\n'],
    ['a known name and a quote', 'latency_ms,scale,difficulty,hit\n1,1,elite,1\n1,1,elite",1\n'],
    ['a known name at the end of a line', 'latency_ms,scale,hit,difficulty\n1,1,1,elite\n1,1,0,elite\r\n1,1,0,elite'],
  ])('reads %s the same with and without plain lines, at every chunk size', (_, text) => {
    const bytes = Buffer.from(text, 'utf8');
    const expected = read(bytes, bytes.length, false);
    for (let chunk = 1; chunk <= bytes.length; chunk += 1) {
      expect(read(bytes, chunk, true), `chunks of ${chunk}`).toEqual(expected);
    }
  });

  it('reads plain lines to the values csv-parse and Number() give (fast-check, 200 runs, seed 29)', () => {
    const plainRow = fc.tuple(
      fc.integer({ min: 0, max: 5_000_000 }).map((hundredths) => (hundredths / 100).toFixed(2)),
      fc.constantFrom('1', '1.25', '1.5', '2'),
      fc.constantFrom('easy', 'hard', 'elite'),
      fc.constantFrom('0', '1'),
      fc.integer({ min: 0, max: 9 }).map((id) => `p${id}`),
    );
    fc.assert(
      fc.property(fc.array(plainRow, { minLength: 1, maxLength: 200 }), fc.constantFrom('\n', '\r\n'), (rows, end) => {
        const text = `latency_ms,scale,difficulty,hit,player${end}${rows.map((row) => row.join(',')).join(end)}${end}`;
        const result = read(Buffer.from(text, 'utf8'), 1 << 16, true);
        expect(result.ok).toBe(true);
        if (!result.ok) return;
        // Reference: csv-parse (the npm registry's streaming CSV parser) and Number().
        const records = parse(text, { columns: true }) as Record<string, string>[];
        expect(Array.from(result.value.latency)).toEqual(records.map((record) => Number(record.latency_ms)));
        expect(Array.from(result.value.scale)).toEqual(records.map((record) => Number(record.scale)));
        expect(Array.from(result.value.successes)).toEqual(records.map((record) => Number(record.hit)));
        const { difficulty, player } = result.value;
        if (difficulty.kind !== 'levels' || player === null) throw new Error('expected named levels and players');
        expect(Array.from(difficulty.codes, (code) => difficulty.levels[code])).toEqual(records.map((record) => record.difficulty));
        expect(Array.from(player.codes, (code) => player.ids[code])).toEqual(records.map((record) => record.player));
      }),
      { seed: 29, numRuns: 200 },
    );
  });
});
