/**
 * The verdict on a gap judged against a margin (docs/method.md, section 8):
 * the interval of the two one-sided tests inside the margins is equivalence
 * ("holds"); wholly below the lower margin, a gap shown to exceed it on the
 * low side ("under_compensates": the worst-connected players trail); wholly
 * above the upper margin, on the high side ("over_compensates"); anything
 * else straddles a margin and the data cannot tell.
 */
import type { TwoOneSidedTests } from './two-one-sided-tests.js';

export type GapVerdict = 'holds' | 'under_compensates' | 'over_compensates' | 'not_enough_data';

export function gapVerdict(tests: TwoOneSidedTests, margins: { readonly lower: number; readonly upper: number }): GapVerdict {
  if (tests.equivalent) return 'holds';
  if (tests.interval.upper < margins.lower) return 'under_compensates';
  if (tests.interval.lower > margins.upper) return 'over_compensates';
  return 'not_enough_data';
}
