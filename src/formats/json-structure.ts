/**
 * What JSON.parse lets through and a crafted file can use, found in one pass
 * over the text, without recursion (so no nesting depth can exhaust the
 * stack):
 * - nesting deeper than MAX_JSON_DEPTH (no lagparity document nests deeper
 *   than 6; a deep one only exhausts the stack of whatever walks it);
 * - a key given twice in one object (RFC 8259 section 4: names SHOULD be
 *   unique; I-JSON, RFC 7493 section 2.3: MUST NOT be duplicated; JSON.parse
 *   silently keeps the last one, so a reviewer and the program could read
 *   two different files);
 * - keys that can reach an object's prototype (`__proto__`, `constructor`,
 *   `prototype`), spelt literally or with \u escapes;
 * - a string (key or value) holding a lone surrogate, which only a \u escape
 *   can write in UTF-8 text (RFC 8259 section 8.2: such strings behave
 *   unpredictably; I-JSON, RFC 7493 section 2.1: MUST NOT): printed, every
 *   lone surrogate becomes U+FFFD, so two different ids could read the same.
 *
 * `scanJsonStructure` expects text that JSON.parse accepted. `nestingDepth`
 * works on any text (it counts brackets outside strings), for the message of
 * a file that is both malformed and deep.
 */

/** Documented limit: arrays and objects nested at most this deep. */
export const MAX_JSON_DEPTH = 64;

const FORBIDDEN_KEYS = new Set(['__proto__', 'constructor', 'prototype']);

/** Whether a key is refused anywhere in a document (it can reach an object's prototype). */
export function isForbiddenKey(key: string): boolean {
  return FORBIDDEN_KEYS.has(key);
}

export interface StructureProblem {
  readonly code: 'too_deep' | 'duplicate_key' | 'forbidden_key' | 'lone_surrogate';
  /** Character offset of the bracket or key. */
  readonly offset: number;
  /** Field path of the place (`players[3].latency_ms`). */
  readonly path: string;
  readonly key: string | null;
}

const QUOTE = 34;
const BACKSLASH = 92;
const OPEN_OBJECT = 123;
const CLOSE_OBJECT = 125;
const OPEN_ARRAY = 91;
const CLOSE_ARRAY = 93;
const COMMA = 44;
const COLON = 58;

/** Offset of the quote that ends the string whose opening quote is at `start`. */
function stringEnd(text: string, start: number): number {
  let at = start + 1;
  for (;;) {
    const quote = text.indexOf('"', at);
    if (quote < 0) return text.length;
    let backslashes = 0;
    for (let back = quote - 1; back > start && text.charCodeAt(back) === BACKSLASH; back -= 1) backslashes += 1;
    if (backslashes % 2 === 0) return quote;
    at = quote + 1;
  }
}

/** Whether a string's raw text (between its quotes) writes a surrogate with a \u escape that is not half of a pair. */
function hasLoneSurrogate(raw: string): boolean {
  if (!SURROGATE_ESCAPE.test(raw)) return false;
  const value = JSON.parse(`"${raw}"`) as string;
  for (let index = 0; index < value.length; index += 1) {
    const unit = value.charCodeAt(index);
    if (unit >= 0xd800 && unit <= 0xdbff) {
      const next = value.charCodeAt(index + 1);
      if (next >= 0xdc00 && next <= 0xdfff) index += 1;
      else return true;
    } else if (unit >= 0xdc00 && unit <= 0xdfff) return true;
  }
  return false;
}

const SURROGATE_ESCAPE = /\\u[dD][89a-fA-F]/;

interface Frame {
  readonly object: boolean;
  /** The current element's index (arrays) or key (objects). */
  index: number;
  key: string;
  keys: Set<string> | null;
}

function pathOf(stack: readonly Frame[]): string {
  let text = '';
  for (const frame of stack) {
    if (!frame.object) text += `[${frame.index}]`;
    else if (frame.key !== '') text += text === '' ? frame.key : `.${frame.key}`;
  }
  return text;
}

/** The first structural problem of text that JSON.parse accepted, or null. */
export function scanJsonStructure(text: string): StructureProblem | null {
  const stack: Frame[] = [];
  // In an object, whether the next string is a key.
  let expectKey = false;
  let backslash = 0;
  for (let at = 0; at < text.length; at += 1) {
    const code = text.charCodeAt(at);
    if (code === QUOTE) {
      const end = stringEnd(text, at);
      const frame = stack[stack.length - 1];
      // The next backslash, looked up again only once passed (one pass over the text in all).
      if (backslash >= 0 && backslash <= at) backslash = text.indexOf('\\', at + 1);
      if (backslash >= 0 && backslash < end && hasLoneSurrogate(text.slice(at + 1, end))) {
        if (expectKey && frame !== undefined && frame.object) frame.key = JSON.parse(`"${text.slice(at + 1, end)}"`) as string;
        return { code: 'lone_surrogate', offset: at, path: pathOf(stack), key: null };
      }
      if (expectKey && frame !== undefined && frame.object) {
        const raw = text.slice(at + 1, end);
        const key = raw.includes('\\') ? (JSON.parse(`"${raw}"`) as string) : raw;
        frame.key = key;
        if (FORBIDDEN_KEYS.has(key)) return { code: 'forbidden_key', offset: at, path: pathOf(stack), key };
        frame.keys ??= new Set();
        if (frame.keys.has(key)) return { code: 'duplicate_key', offset: at, path: pathOf(stack), key };
        frame.keys.add(key);
        expectKey = false;
      }
      at = end;
    } else if (code === OPEN_OBJECT || code === OPEN_ARRAY) {
      if (stack.length >= MAX_JSON_DEPTH) return { code: 'too_deep', offset: at, path: pathOf(stack), key: null };
      stack.push({ object: code === OPEN_OBJECT, index: 0, key: '', keys: null });
      expectKey = code === OPEN_OBJECT;
    } else if (code === CLOSE_OBJECT || code === CLOSE_ARRAY) {
      stack.pop();
      expectKey = false;
    } else if (code === COMMA) {
      const frame = stack[stack.length - 1];
      if (frame === undefined) continue;
      if (frame.object) expectKey = true;
      else frame.index += 1;
    } else if (code === COLON) {
      expectKey = false;
    }
  }
  return null;
}

/** Offset of the first bracket nested deeper than `limit` in any text (strings skipped), or -1. */
export function firstTooDeep(text: string, limit: number = MAX_JSON_DEPTH): number {
  let depth = 0;
  for (let at = 0; at < text.length; at += 1) {
    const code = text.charCodeAt(at);
    if (code === QUOTE) at = stringEnd(text, at);
    else if (code === OPEN_OBJECT || code === OPEN_ARRAY) {
      depth += 1;
      if (depth > limit) return at;
    } else if (code === CLOSE_OBJECT || code === CLOSE_ARRAY) depth -= 1;
  }
  return -1;
}
