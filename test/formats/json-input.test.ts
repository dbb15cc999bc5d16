import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { lineAndColumn, parseJsonText } from '../../src/formats/json-input.js';

describe('parseJsonText()', () => {
  it('parses a document and strips a UTF-8 byte-order mark', () => {
    const result = parseJsonText('\uFEFF{"a": [1, 2]}', 'x.json');
    expect(result).toEqual({ ok: true, value: { a: [1, 2] }, warnings: [] });
  });

  it('names line and column of a syntax error', () => {
    const result = parseJsonText('{\n  "a": 1,\n  "b": ]\n}', 'x.json');
    expect(result.ok).toBe(false);
    if (!result.ok) {
      expect(result.issues[0]?.code).toBe('invalid_json');
      expect(result.issues[0]?.location).toBe('x.json:3:8');
    }
  });

  it('refuses truncated JSON with the position of its end', () => {
    const result = parseJsonText('{"players": [', 'lobby.json');
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues[0]?.location).toBe('lobby.json:1:14');
  });

  it.each(['__proto__', 'constructor', 'prototype'])('refuses a %s key with its field path', (key) => {
    const result = parseJsonText(`{"players": [{"id": "a", "${key}": {"x": 1}}]}`, 'lobby.json');
    expect(result.ok).toBe(false);
    if (!result.ok) {
      expect(result.issues[0]).toMatchObject({ code: 'forbidden_key', location: `lobby.json:players[0].${key}` });
    }
  });

  it('refuses a forbidden key spelt with \\u escapes (the text holds no literal name, so the quick test must not skip the walk)', () => {
    fc.assert(
      fc.property(fc.constantFrom('__proto__', 'constructor', 'prototype'), fc.array(fc.boolean(), { minLength: 9, maxLength: 11 }), (key, escapes) => {
        const spelt = [...key].map((character, index) => (escapes[index] ? `\\u${character.charCodeAt(0).toString(16).padStart(4, '0')}` : character)).join('');
        const result = parseJsonText(`{"a": [{"b": 1, "${spelt}": 2}]}`, 'x.json');
        expect(result.ok || result.issues[0]).toMatchObject({ code: 'forbidden_key', location: `x.json:a[0].${key}` });
      }),
      { seed: 15, numRuns: 200 },
    );
  });

  it('throws a TypeError naming the argument for text that is not a string (Buffer.byteLength threw from inside)', () => {
    for (const text of [123, null, undefined, Buffer.from('{}')]) expect(() => parseJsonText(text as unknown as string, 'x.json')).toThrow(/`text` requires a string/);
  });

  it('refuses a key twice however it is spelt, with its line and column', () => {
    const result = parseJsonText('{"link": "logit",\n "\\u006cink": "probit"}', 'model.json');
    expect(result.ok || result.issues[0]).toMatchObject({ code: 'duplicate_key', location: 'model.json:link', message: expect.stringContaining('at line 2, column 2') });
  });

  it('refuses an empty file and one above the size limit', () => {
    const empty = parseJsonText('  \n', 'e.json');
    expect(empty.ok || empty.issues[0]?.code).toBe('empty_file');
    const large = parseJsonText(`"${'x'.repeat(100)}"`, 'big.json', 50);
    expect(large.ok || large.issues[0]?.code).toBe('too_large');
  });
});

describe('lineAndColumn()', () => {
  it('counts lines from 1 and columns from 1', () => {
    expect(lineAndColumn('ab\ncd', 0)).toEqual({ line: 1, column: 1 });
    expect(lineAndColumn('ab\ncd', 4)).toEqual({ line: 2, column: 2 });
  });
});
