/**
 * Nothing crafted gets in: every public parse function, given arbitrary
 * values, returns issues and never throws. Seeded fast-check runs; the number
 * of cases is in each title.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { join } from 'node:path';
import { safeParseLobby } from '../../src/formats/lobby.js';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { parseJsonText } from '../../src/formats/json-input.js';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { parseTermList } from '../../src/model/terms.js';
import { parseSweep } from '../../src/audit/sweep.js';
import { MATCHES, readJson } from '../helpers/demo.js';

const RUNS = 2000;
const demoLobby = readJson(join(MATCHES, 'even-5v5.lobby.json')) as Record<string, unknown>;
const demoModel = readJson(join(MATCHES, 'ground-truth.model.json')) as Record<string, unknown>;
const demoRules = readJson(join(MATCHES, 'league-rules.json')) as Record<string, unknown>;

function isResult(value: unknown): boolean {
  if (value === null || typeof value !== 'object') return false;
  const result = value as { ok?: unknown; issues?: unknown };
  if (result.ok === true) return true;
  return result.ok === false && Array.isArray(result.issues) && result.issues.length > 0 && result.issues.every((issue) => typeof (issue as { code?: unknown }).code === 'string' && typeof (issue as { location?: unknown }).location === 'string');
}

/** A document close to a valid one: one field replaced by an arbitrary value, to reach deep checks. */
function mutated(base: Record<string, unknown>) {
  return fc.tuple(fc.constantFrom(...Object.keys(base)), fc.jsonValue()).map(([key, value]) => ({ ...base, [key]: value }));
}

describe('public parse functions on arbitrary input', () => {
  const parsers: [string, (value: unknown) => unknown][] = [
    ['safeParseLobby', (value) => safeParseLobby(value, 'lobby.json')],
    ['compileModel', (value) => compileModel(value, 'model.json')],
    ['compileRules', (value) => compileRules(value, 'rules.json')],
  ];
  for (const [name, parse] of parsers) {
    it(`${name} returns a result for ${RUNS} arbitrary values (seed 101)`, () => {
      fc.assert(fc.property(fc.anything({ withObjectString: true, withNullPrototype: true, withBigInt: true, withDate: true, withMap: true, withTypedArray: true, withSparseArray: true }), (value) => { expect(isResult(parse(value))).toBe(true); }), { seed: 101, numRuns: RUNS });
    });
  }

  it(`safeParseLobby, compileModel and compileRules return results for ${RUNS} mutated documents each (seed 103)`, () => {
    fc.assert(fc.property(mutated(demoLobby), (value) => { expect(isResult(safeParseLobby(value))).toBe(true); }), { seed: 103, numRuns: RUNS });
    fc.assert(fc.property(mutated(demoModel), (value) => { expect(isResult(compileModel(value))).toBe(true); }), { seed: 103, numRuns: RUNS });
    fc.assert(fc.property(mutated(demoRules), (value) => { expect(isResult(compileRules(value))).toBe(true); }), { seed: 103, numRuns: RUNS });
  });

  it(`parseJsonText returns a result for ${RUNS} arbitrary strings and JSON texts (seed 107)`, () => {
    fc.assert(fc.property(fc.oneof(fc.string({ unit: 'binary' }), fc.json()), (text) => { expect(isResult(parseJsonText(text, "x.json"))).toBe(true); }), { seed: 107, numRuns: RUNS });
  });

  it(`parseTrialsCsv returns a result for ${RUNS} arbitrary texts after a valid header (seed 109)`, () => {
    const field = fc.oneof(fc.string({ unit: 'binary', maxLength: 12 }), fc.double().map(String), fc.constantFrom('', '"', ',', '\n', '\r\n', 'NaN'));
    const row = fc.array(field, { minLength: 0, maxLength: 8 }).map((fields) => fields.join(','));
    fc.assert(
      fc.property(fc.array(row, { maxLength: 6 }), fc.string({ unit: 'binary', maxLength: 40 }), (rows, noise) => {
        expect(isResult(parseTrialsCsv(`latency_ms,scale,difficulty,hit\n${rows.join('\n')}`, 't.csv'))).toBe(true);
        expect(isResult(parseTrialsCsv(noise, 't.csv'))).toBe(true);
      }),
      { seed: 109, numRuns: RUNS },
    );
  });

  it(`parseTermList and parseSweep return results for ${RUNS} arbitrary strings (seed 113)`, () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary' }), (text) => {
        expect(isResult(parseTermList(text))).toBe(true);
        expect(isResult(parseSweep(text))).toBe(true);
      }),
      { seed: 113, numRuns: RUNS },
    );
  });
});
