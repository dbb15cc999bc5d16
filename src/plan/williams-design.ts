/**
 * Williams designs: orders of t treatments balanced for first-order
 * carry-over. Williams, E. J. (1949), "Experimental designs balanced for the
 * estimation of residual effects of treatments", Australian Journal of
 * Scientific Research, Series A 2, 149-168.
 *
 * Construction (the standard one, as R's crossdes `williams()` builds it):
 * the first sequence is 0, 1, t-1, 2, t-2, 3, ...; sequence i adds i to each
 * entry modulo t. For even t these t sequences form a Latin square in which
 * every ordered pair of distinct treatments stands next to each other exactly
 * once. For odd t no such single square comes from this construction, so the
 * t sequences are followed by each of them reversed: 2t sequences, in which
 * every ordered pair stands adjacent exactly twice. Each treatment appears
 * once in every sequence and equally often in every position.
 *
 * Cost: O(t^2) numbers.
 */

/** How many sequences the Williams design of `treatments` has: t for even t, 2t for odd t (1 for t = 1). */
export function williamsSequenceCount(treatments: number): number {
  if (treatments <= 1) return 1;
  return treatments % 2 === 0 ? treatments : 2 * treatments;
}

/**
 * The Williams design of `treatments` treatments, numbered 0..t-1: one array
 * per sequence, the treatment of each position in order.
 *
 * @throws RangeError if `treatments` is not a whole number from 1 to 4096.
 * @example
 *   williamsDesign(4); // [[0, 1, 3, 2], [1, 2, 0, 3], [2, 3, 1, 0], [3, 0, 2, 1]]
 */
export function williamsDesign(treatments: number): number[][] {
  if (!Number.isInteger(treatments) || treatments < 1 || treatments > 4096) {
    throw new RangeError(`\`treatments\` requires a whole number from 1 to 4096, got ${treatments}`);
  }
  const first = Array.from({ length: treatments }, (_, position) =>
    position === 0 ? 0 : position % 2 === 1 ? (position + 1) / 2 : treatments - position / 2,
  );
  const square = Array.from({ length: treatments }, (_, shift) => first.map((treatment) => (treatment + shift) % treatments));
  if (treatments % 2 === 0 || treatments === 1) return square;
  return [...square, ...square.map((sequence) => [...sequence].reverse())];
}
