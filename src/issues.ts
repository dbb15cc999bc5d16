/**
 * Structured input problems, shared by every loader and by the solver.
 *
 * An issue is data, not an exception: a stable `code` that scripts match on,
 * a `location` that names the place (a CSV file and line, or a JSON field
 * path), and a `message` a person can act on, written in the project's error
 * grammar: "`<what>` requires <condition>, got <value>".
 */

export type IssueSeverity = 'error' | 'warning';

export interface Issue {
  /** Stable machine-readable code, e.g. `not_a_number`. Never reworded. */
  readonly code: string;
  readonly severity: IssueSeverity;
  /** Where: `trials.csv:118:latency_ms`, `lobby.json:players[3].latency_ms`, or a field path alone. */
  readonly location: string;
  /** What was expected and what came. */
  readonly message: string;
}

/** The result of a parse or a check: the value and any warnings, or the errors. */
export type Result<T> =
  | { readonly ok: true; readonly value: T; readonly warnings: readonly Issue[] }
  | { readonly ok: false; readonly issues: readonly Issue[] };

export function ok<T>(value: T, warnings: readonly Issue[] = []): Result<T> {
  return { ok: true, value, warnings };
}

export function fail<T = never>(issues: readonly Issue[]): Result<T> {
  return { ok: false, issues };
}

export function error(code: string, location: string, message: string): Issue {
  return { code, severity: 'error', location, message };
}

export function warning(code: string, location: string, message: string): Issue {
  return { code, severity: 'warning', location, message };
}

/** Thrown only by the throwing variants (`parseX`, never `safeParseX`). */
export class LagparityInputError extends Error {
  readonly issues: readonly Issue[];
  constructor(issues: readonly Issue[]) {
    super(issues.map(formatIssue).join('\n'));
    this.name = 'LagparityInputError';
    this.issues = issues;
  }
}

/** Unwrap a result or throw a `LagparityInputError` carrying its issues. */
export function unwrap<T>(result: Result<T>): T {
  if (result.ok) return result.value;
  throw new LagparityInputError(result.issues);
}

/** One line: `location: severity code: message`. */
export function formatIssue(issue: Issue): string {
  return `${issue.location}: ${issue.severity} ${issue.code}: ${issue.message}`;
}

/** Join a file name and a field path the way every message shows it. */
export function at(file: string | undefined, path: string): string {
  if (file === undefined || file === '') return path === '' ? '(root)' : path;
  return path === '' ? file : `${file}:${path}`;
}

/** Render a value for a message: short, never throwing, never huge. */
export function show(value: unknown): string {
  let text: string;
  if (typeof value === 'string') text = JSON.stringify(value);
  else if (typeof value === 'number') text = Number.isNaN(value) ? 'NaN' : String(value);
  else if (value === undefined) text = 'nothing';
  else if (typeof value === 'function') text = 'a function';
  else if (typeof value === 'symbol') text = 'a symbol';
  else if (typeof value === 'bigint') text = `${String(value)}n (a BigInt)`;
  else {
    try {
      text = JSON.stringify(value) ?? 'a value JSON cannot hold';
    } catch {
      // Cycles, and getters or proxies that throw when read.
      text = 'a value that cannot be read';
    }
  }
  return text.length > 60 ? `${text.slice(0, 57)}...` : text;
}
