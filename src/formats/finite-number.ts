/**
 * A number field's schema whose own message ("a finite number") is said
 * only when the value is not a number: in zod 4 the error given to
 * `z.number()` also stands for every bound checked after it that has no
 * message of its own, which made `"accepted_gap": 2` read "requires a finite
 * number, got 2". Bounds without their own message are described by
 * zod-issues.ts ("a number <= 1").
 */
import { z } from 'zod';

export function finiteNumber(): z.ZodNumber {
  return z.number({ error: (issue) => (issue.code === 'invalid_type' ? 'a finite number' : undefined) });
}
