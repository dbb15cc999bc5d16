/** Where the CLI's words go: results to stdout, issues and warnings to stderr. */
import { type Issue, formatIssue } from '../issues.js';
import { escapeControlCharacters } from '../formats/control-characters.js';

export const EXIT_OK = 0;
export const EXIT_FAILED_CHECK = 1;
export const EXIT_BAD_INPUT = 2;

/** Colour only on a terminal and never when NO_COLOR is set (https://no-color.org). */
export function useColour(stream: NodeJS.WriteStream): boolean {
  return Boolean(stream.isTTY) && (process.env.NO_COLOR === undefined || process.env.NO_COLOR === '');
}

export function reportIssues(issues: readonly Issue[]): void {
  for (const issue of issues) process.stderr.write(`${escapeControlCharacters(formatIssue(issue))}\n`);
}

/** Results to stdout, control characters from the input escaped (formats/control-characters.ts). */
export function writeOut(text: string): void {
  const safe = escapeControlCharacters(text);
  process.stdout.write(safe.endsWith('\n') ? safe : `${safe}\n`);
}

/** Round for display; JSON output keeps full precision. */
export function fixed(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined) return '-';
  // No "-0.000": a value that rounds to zero shows as zero.
  const text = value.toFixed(digits);
  return Number(text) === 0 ? (0).toFixed(digits) : text;
}
