/**
 * The type 7 sample quantile (Hyndman and Fan 1996; R's default) of unsorted
 * values by selection instead of a sort: the two order statistics the
 * quantile interpolates between are found with Hoare's FIND (Hoare, C. A. R.
 * (1961), "Algorithm 65: Find", Communications of the ACM 4(7), 321-322),
 * partitioning around the median of three, in a scratch array the caller
 * keeps. Same value as `quantileSorted(sorted, p, 7)` to the last bit (the
 * same order statistics and the same arithmetic).
 *
 * Why: the solver takes a robust latency estimate (median or a low
 * percentile) of every player's samples in every lobby; a copy and a sort of
 * 32 samples cost about 2 us a player here, selection about a tenth of that.
 *
 * Cost: O(n) expected.
 */

/** Rearrange `values[0 .. count)` so that values[k] is the (k+1)-th smallest, all before it <= it, all after it >= it. */
export function selectInPlace(values: Float64Array, count: number, k: number): void {
  let left = 0;
  let right = count - 1;
  while (right > left) {
    // Median of three at left, middle and right, moved to `right` as the pivot.
    const middle = (left + right) >>> 1;
    if ((values[middle] as number) < (values[left] as number)) swap(values, middle, left);
    if ((values[right] as number) < (values[left] as number)) swap(values, right, left);
    if ((values[middle] as number) < (values[right] as number)) swap(values, middle, right);
    const pivot = values[right] as number;
    let store = left;
    for (let index = left; index < right; index += 1) {
      if ((values[index] as number) < pivot) {
        swap(values, index, store);
        store += 1;
      }
    }
    swap(values, store, right);
    if (store === k) return;
    if (store < k) left = store + 1;
    else right = store - 1;
  }
}

function swap(values: Float64Array, left: number, right: number): void {
  const held = values[left] as number;
  values[left] = values[right] as number;
  values[right] = held;
}

/**
 * The type 7 quantile at `probability` (0 to 1) of `samples`, using `scratch`
 * (at least `samples.length` long; its contents are overwritten). `samples`
 * must be non-empty and free of NaN (the lobby schema ensures both).
 */
export function quantileSelect(samples: ArrayLike<number>, probability: number, scratch: Float64Array): number {
  const count = samples.length;
  for (let index = 0; index < count; index += 1) scratch[index] = samples[index] as number;
  // As quantileSorted, type 7: R's index <- 1 + max(n - 1, 0) * probs, lo <- floor(index), hi <- ceiling(index).
  const index = 1 + Math.max(count - 1, 0) * probability;
  const lower = Math.floor(index);
  const upper = Math.ceil(index);
  selectInPlace(scratch, count, lower - 1);
  const lowerValue = scratch[lower - 1] as number;
  let upperValue = lowerValue;
  if (upper > lower) {
    upperValue = Infinity;
    for (let position = lower; position < count; position += 1) if ((scratch[position] as number) < upperValue) upperValue = scratch[position] as number;
  }
  if (!(index > lower && upperValue !== lowerValue)) return lowerValue;
  const fraction = index - lower;
  return (1 - fraction) * lowerValue + fraction * upperValue;
}
