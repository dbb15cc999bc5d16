/**
 * The shape every document parser shares (safeParseLobby,
 * safeParseServerLobby, compileRules, compileModel): a document of another
 * known kind is named as such, the schema checks the rest, and a value whose
 * properties throw when read (a getter, a Proxy) becomes an issue instead of
 * an exception.
 */
import type { z } from 'zod';
import { type Issue, type Result, at, error, fail } from '../issues.js';
import { readSafely } from '../validated.js';
import { type FileKind, wrongKind } from './file-kinds.js';
import { fromZodIssues } from './zod-issues.js';

/** The issue of an input whose properties throw when read. */
export function unreadable(file: string | undefined, message: string): Issue {
  return error('unreadable_input', at(file, ''), `the input requires plain data (JSON values), got a value that throws when read: ${JSON.stringify(message)}`);
}

export function parseDocument<S extends z.ZodType, T>(input: unknown, file: string | undefined, kind: FileKind, schema: S, finish: (data: z.output<S>) => Result<T>): Result<T> {
  return readSafely(
    input,
    () => {
      const other = wrongKind(input, kind, file);
      if (other !== null) return fail([other]);
      const parsed = schema.safeParse(input);
      if (!parsed.success) return fail(fromZodIssues(parsed.error.issues, input, file));
      return finish(parsed.data);
    },
    (message) => fail([unreadable(file, message)]),
  );
}
