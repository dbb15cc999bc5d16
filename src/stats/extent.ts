/** The smallest and largest value of an array ({ min: Infinity, max: -Infinity } when empty). Cost O(n). */
export function extent(values: ArrayLike<number>): { min: number; max: number } {
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < values.length; i += 1) {
    const value = values[i] as number;
    if (value < min) min = value;
    if (value > max) max = value;
  }
  return { min, max };
}
