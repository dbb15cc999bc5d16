/**
 * Reading JSON that came from another hand: size-limited, with a line and
 * column on a syntax error, and with the keys that can reach an object's
 * prototype (`__proto__`, `constructor`, `prototype`) refused wherever they
 * appear, so no crafted file can change how the rest of the program behaves.
 */
import { printParseErrorCode, visit } from 'jsonc-parser';
import { type Issue, type Result, at, error, fail, ok, show } from '../issues.js';

/** Documented limit on one JSON input (a lobby, a model, a rules file): 16 MiB. */
export const MAX_JSON_BYTES = 16 * 1024 * 1024;

const FORBIDDEN_KEYS = new Set(['__proto__', 'constructor', 'prototype']);

/** Line and column (1-based) of a character offset in `text`. */
export function lineAndColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  const end = Math.min(offset, text.length);
  for (let index = 0; index < end; index += 1) {
    if (text.charCodeAt(index) === 10) {
      line += 1;
      lineStart = index + 1;
    }
  }
  return { line, column: end - lineStart + 1 };
}

/** Field path in the notation every message uses: `players[3].latency_ms`. */
export function formatPath(path: readonly PropertyKey[]): string {
  let text = '';
  for (const part of path) {
    if (typeof part === 'number') text += `[${part}]`;
    else text += text === '' ? String(part) : `.${String(part)}`;
  }
  return text;
}

function findForbiddenKey(value: unknown, path: (string | number)[]): Issue | undefined {
  if (Array.isArray(value)) {
    for (let index = 0; index < value.length; index += 1) {
      path.push(index);
      const found = findForbiddenKey(value[index], path);
      path.pop();
      if (found) return found;
    }
    return undefined;
  }
  if (value !== null && typeof value === 'object') {
    for (const key of Object.keys(value)) {
      path.push(key);
      if (FORBIDDEN_KEYS.has(key)) {
        const issue = error(
          'forbidden_key',
          formatPath(path),
          `keys named \`__proto__\`, \`constructor\` or \`prototype\` are refused, got ${show(key)}`,
        );
        path.pop();
        return issue;
      }
      const found = findForbiddenKey((value as Record<string, unknown>)[key], path);
      path.pop();
      if (found) return found;
    }
  }
  return undefined;
}

/**
 * `line:column` (1-based) of the first syntax error, located by the
 * jsonc-parser scanner in strict mode (no comments, no trailing commas), since
 * Node's own message does not always carry a position.
 */
function syntaxErrorPlace(text: string): { place: string; reason: string } {
  let found: { place: string; reason: string } | undefined;
  visit(
    text,
    {
      onError: (code, _offset, _length, startLine, startCharacter) => {
        found ??= { place: `${startLine + 1}:${startCharacter + 1}`, reason: printParseErrorCode(code) };
      },
    },
    { disallowComments: true, allowTrailingComma: false },
  );
  if (found !== undefined) return found;
  const end = lineAndColumn(text, text.length);
  return { place: `${end.line}:${end.column}`, reason: 'UnexpectedEndOfInput' };
}

/**
 * Parse JSON text. `file` names the source in every issue (`lobby.json:3:14`).
 * Refuses empty input, input above `maxBytes`, syntax errors (with line and
 * column) and prototype-reaching keys (with their field path).
 */
export function parseJsonText(text: string, file: string, maxBytes: number = MAX_JSON_BYTES): Result<unknown> {
  const bytes = Buffer.byteLength(text, 'utf8');
  if (bytes > maxBytes) {
    return fail([error('too_large', file, `a JSON input requires at most ${maxBytes} bytes, got ${bytes}`)]);
  }
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (body.trim() === '') {
    return fail([error('empty_file', file, 'a JSON document requires some content, got an empty file')]);
  }
  let value: unknown;
  try {
    value = JSON.parse(body);
  } catch (cause) {
    const message = cause instanceof Error ? cause.message : String(cause);
    const { place, reason } = syntaxErrorPlace(body);
    return fail([error('invalid_json', `${file}:${place}`, `the file requires well-formed JSON (${reason}): ${message}`)]);
  }
  // A key can spell a forbidden name only literally or through a \u escape:
  // without either in the text, the walk over the whole document is skipped.
  const mayHoldForbiddenKey = /__proto__|constructor|prototype|\\u/.test(body);
  const forbidden = mayHoldForbiddenKey ? findForbiddenKey(value, []) : undefined;
  if (forbidden) return fail([{ ...forbidden, location: at(file, forbidden.location) }]);
  return ok(value);
}
