/** Turning zod's validation issues into the project's issues, with field paths. */
import type { z } from 'zod';
import { type Issue, at, error, show } from '../issues.js';
import { formatPath } from './json-input.js';
import { closestFieldName } from './field-names.js';

function valueAt(input: unknown, path: readonly PropertyKey[]): unknown {
  let current: unknown = input;
  for (const part of path) {
    if (current === null || typeof current !== 'object') return undefined;
    current = (current as Record<PropertyKey, unknown>)[part];
  }
  return current;
}

function codeFor(issue: z.core.$ZodIssue, got: unknown): string {
  switch (issue.code) {
    case 'invalid_type':
      return got === undefined ? 'missing_field' : 'wrong_type';
    case 'too_small':
    case 'too_big':
      return 'out_of_range';
    case 'unrecognized_keys':
      return 'unknown_field';
    case 'invalid_value':
    case 'invalid_union':
      return 'invalid_value';
    default:
      return issue.code === 'custom' ? String((issue as { params?: { code?: string } }).params?.code ?? 'invalid_value') : 'invalid_value';
  }
}

function describeExpected(issue: z.core.$ZodIssue): string {
  switch (issue.code) {
    case 'invalid_type':
      return issue.expected === 'number' ? 'a finite number' : `a value of type ${issue.expected}`;
    case 'too_small': {
      const bound = String(issue.minimum);
      if (issue.origin === 'array') return `at least ${bound} entries`;
      if (issue.origin === 'string') return `at least ${bound} characters`;
      return issue.inclusive ? `a number >= ${bound}` : `a number above ${bound}`;
    }
    case 'too_big': {
      const bound = String(issue.maximum);
      if (issue.origin === 'array') return `at most ${bound} entries`;
      if (issue.origin === 'string') return `at most ${bound} characters`;
      return issue.inclusive ? `a number <= ${bound}` : `a number below ${bound}`;
    }
    case 'invalid_value':
      return `one of ${issue.values.map((value) => show(value)).join(', ')}`;
    default:
      return 'a valid value';
  }
}

/** zod's own wording starts with these; messages written in this project do not. */
const ZOD_DEFAULT_WORDING = /^(Invalid|Too (small|big)|Unrecognized|Expected)/;

/**
 * A union whose value has the type of exactly one branch (a list where "a
 * number or a list" is allowed) is reported by that branch's own issues,
 * which say what is wrong inside it (e.g. too many samples).
 */
function expandUnions(issues: readonly z.core.$ZodIssue[]): z.core.$ZodIssue[] {
  return issues.flatMap((issue) => {
    if (issue.code !== 'invalid_union' || !Array.isArray(issue.errors)) return [issue];
    const typed = issue.errors.filter((branch) => !branch.some((inner) => inner.code === 'invalid_type' && inner.path.length === 0));
    const [branch] = typed;
    if (typed.length !== 1 || branch === undefined) return [issue];
    return expandUnions(branch.map((inner) => ({ ...inner, path: [...issue.path, ...inner.path] }) as z.core.$ZodIssue));
  });
}

/** Map zod issues on `input` (parsed from `file`) to project issues. */
export function fromZodIssues(issues: readonly z.core.$ZodIssue[], input: unknown, file: string | undefined): Issue[] {
  return expandUnions(issues).flatMap((issue) => {
    const path = formatPath(issue.path);
    const field = path === '' ? 'the document' : `\`${path}\``;
    if (issue.code === 'unrecognized_keys') {
      // One issue per unknown field, at the field itself, with the closest known name.
      return issue.keys.slice(0, 20).map((key) => {
        const suggestion = closestFieldName(key);
        return error('unknown_field', at(file, formatPath([...issue.path, key])), `${field} requires only its documented fields, got ${show(key)}${suggestion === null ? '' : ` (did you mean "${suggestion}"?)`}`);
      });
    }
    const expected = ZOD_DEFAULT_WORDING.test(issue.message) ? describeExpected(issue) : issue.message;
    // A check across fields may say what it counted (params.got) instead of the value at its path.
    const counted = issue.code === 'custom' ? (issue as { params?: { got?: unknown } }).params?.got : undefined;
    const got = counted !== undefined ? counted : valueAt(input, issue.path);
    return error(codeFor(issue, got), at(file, path), `${field} requires ${expected}, got ${show(got)}`);
  });
}
