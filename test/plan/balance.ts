/** Counting what a cross-over design promises, independently of how it was built. */

/** counts[from * t + to]: how often `to` immediately follows `from` within a sequence. */
export function adjacentPairCounts(sequences: readonly (readonly number[])[], t: number): number[] {
  const counts = new Array<number>(t * t).fill(0);
  for (const sequence of sequences) {
    for (let position = 1; position < sequence.length; position += 1) {
      const index = (sequence[position - 1] as number) * t + (sequence[position] as number);
      counts[index] = (counts[index] as number) + 1;
    }
  }
  return counts;
}

/** counts[position * t + treatment]: how often `treatment` stands at `position`. */
export function positionCounts(sequences: readonly (readonly number[])[], t: number): number[] {
  const counts = new Array<number>(t * t).fill(0);
  for (const sequence of sequences) {
    sequence.forEach((treatment, position) => {
      counts[position * t + treatment] = (counts[position * t + treatment] as number) + 1;
    });
  }
  return counts;
}
