/**
 * A size study's result (`lagparity/playtest-size@1`) read back: checked
 * against its zod schema (`size-study-schema.ts`), failures as issues in the
 * project's error grammar (`formats/zod-issues.ts`).
 */
import { fromZodIssues } from '../formats/zod-issues.js';
import { type Result, fail, ok } from '../issues.js';
import { sizeStudySchema } from './size-study-schema.js';
import type * as types from './size-study-types.js';

/** Validate a size study's result (already parsed from JSON), e.g. for the report. `file` names the source in issues. */
export function safeParseSizeStudy(input: unknown, file?: string): Result<types.SizeStudy> {
  const parsed = sizeStudySchema.safeParse(input);
  if (!parsed.success) return fail(fromZodIssues(parsed.error.issues, input, file));
  return ok(parsed.data);
}
