/**
 * Reading JSON that came from another hand: size-limited, with a line and
 * column on a syntax error, UTF-16 recognised, and the structure checked
 * (json-structure.ts): nesting at most MAX_JSON_DEPTH deep, no key twice in
 * an object, and no key that can reach an object's prototype (`__proto__`,
 * `constructor`, `prototype`), so no crafted file can change how the rest of
 * the program behaves or be read two ways.
 */
import { printParseErrorCode, visit } from 'jsonc-parser';
import { type Issue, type Result, at, error, fail, ok, show } from '../issues.js';
import { MAX_JSON_DEPTH, type StructureProblem, firstTooDeep, scanJsonStructure } from './json-structure.js';

export { MAX_JSON_DEPTH };

/** Documented limit on one JSON input (a lobby, a model, a rules file): 16 MiB. */
export const MAX_JSON_BYTES = 16 * 1024 * 1024;

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

function tooDeep(place: string): Issue {
  return error('too_deep', place, `a JSON document requires arrays and objects nested at most ${MAX_JSON_DEPTH} deep (the documented limit), got deeper`);
}

/**
 * The issue of a structural problem (json-structure.ts) of `text` from `file`.
 * `fileLine` is given when the text is one line of a longer file (a session
 * log): places then read `file:line:column` and `file:line:field.path`.
 */
export function structureIssue(problem: StructureProblem, text: string, file: string, fileLine?: number): Issue {
  const found = lineAndColumn(text, problem.offset);
  const line = fileLine ?? found.line;
  const column = found.column;
  if (problem.code === 'too_deep') return tooDeep(`${file}:${line}:${column}`);
  const place = at(fileLine === undefined ? file : `${file}:${fileLine}`, problem.path);
  const field = problem.path === '' ? 'the document' : `\`${problem.path}\``;
  if (problem.code === 'duplicate_key') {
    return error('duplicate_key', place, `${field} requires each key once in an object (RFC 8259 section 4; RFC 7493 section 2.3), got ${show(problem.key)} again at line ${line}, column ${column}`);
  }
  if (problem.code === 'lone_surrogate') {
    return error('lone_surrogate', place, `${field} requires Unicode text (RFC 8259 section 8.2; RFC 7493 section 2.1), got a \\u escape of half a surrogate pair at line ${line}, column ${column}: it would print as U+FFFD, like any other`);
  }
  return error('forbidden_key', place, `keys named \`__proto__\`, \`constructor\` or \`prototype\` are refused, got ${show(problem.key)} at line ${line}, column ${column}`);
}

/** Throws for a `text` argument that is not a string (a programming error, not a problem of the data). */
export function checkText(text: unknown, name = 'text'): void {
  if (typeof text !== 'string') throw new TypeError(`\`${name}\` requires a string (the text of the input), got ${show(text)}`);
}

/** Whether the text at `line:column` starts a comment (`//` or `/*`). */
function startsComment(text: string, place: string): boolean {
  const [line, column] = place.split(':').map(Number) as [number, number];
  let offset = 0;
  for (let current = 1; current < line; current += 1) offset = text.indexOf('\n', offset) + 1;
  const at = offset + column - 1;
  return text[at] === '/' && (text[at + 1] === '/' || text[at + 1] === '*');
}

/**
 * Parse JSON text. `file` names the source in every issue (`lobby.json:3:14`).
 * Refuses empty input, input above `maxBytes`, syntax errors (with line and
 * column) and prototype-reaching keys (with their field path).
 */
export function parseJsonText(text: string, file: string, maxBytes: number = MAX_JSON_BYTES): Result<unknown> {
  checkText(text);
  const bytes = Buffer.byteLength(text, 'utf8');
  if (bytes > maxBytes) {
    return fail([error('too_large', file, `a JSON input requires at most ${maxBytes} bytes, got ${bytes}`)]);
  }
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (body.trim() === '') {
    return fail([error('empty_file', file, 'a JSON document requires some content, got an empty file')]);
  }
  // Text decoded from UTF-16 as if it were UTF-8 is full of NUL bytes; JSON allows none, even in strings.
  const nul = body.indexOf('\u0000');
  if (nul >= 0) {
    const head = body.slice(0, 64);
    if (head.length - head.replaceAll('\u0000', '').length >= head.length / 4) {
      return fail([error('wrong_encoding', file, 'a JSON document requires UTF-8 text, got NUL bytes (as UTF-16 text has): save the file as UTF-8')]);
    }
    const { line, column } = lineAndColumn(body, nul);
    return fail([error('invalid_json', `${file}:${line}:${column}`, 'the file requires well-formed JSON, got a NUL character: JSON allows none, not even in strings (write it as \\u0000 there)')]);
  }
  let value: unknown;
  try {
    value = JSON.parse(body);
  } catch (cause) {
    const deep = firstTooDeep(body);
    if (deep >= 0) {
      const { line, column } = lineAndColumn(body, deep);
      return fail([tooDeep(`${file}:${line}:${column}`)]);
    }
    const message = cause instanceof Error ? cause.message : String(cause);
    const { place, reason } = syntaxErrorPlace(body);
    if (reason === 'InvalidCommentToken' || /^\d+:\d+$/.test(place) && startsComment(body, place)) {
      return fail([error('invalid_json', `${file}:${place}`, 'the file requires plain JSON, got a comment: JSON (RFC 8259) has no comments; remove it')]);
    }
    return fail([error('invalid_json', `${file}:${place}`, `the file requires well-formed JSON (${reason}): ${message}`)]);
  }
  const problem = scanJsonStructure(body);
  return problem === null ? ok(value) : fail([structureIssue(problem, body, file)]);
}
