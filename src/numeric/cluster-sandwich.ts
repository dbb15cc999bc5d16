/**
 * Cluster-robust ("sandwich") covariance with the CR1 small-sample factor.
 *
 * V = c * B M B, with B the bread (the model-based covariance, e.g.
 * (X'WX)^{-1}), M = sum over clusters g of u_g u_g', u_g the sum of the score
 * rows of cluster g, and c = G/(G-1) * (N-1)/(N-K).
 *
 * Method: Liang, K.-Y. and Zeger, S. L. (1986), Longitudinal data analysis
 * using generalized linear models, *Biometrika* 73(1), 13-22; small-sample
 * factor as in Cameron, A. C. and Miller, D. L. (2015), A practitioner's
 * guide to cluster-robust inference, *Journal of Human Resources* 50(2),
 * 317-372, §VI.A ("CR1"). Equals R `sandwich::vcovCL(type = "HC1", cadjust = TRUE)`.
 *
 * Cost: O(N * K + G * K^2 + K^3).
 */

export interface ClusterSandwichInput {
  /** Model-based covariance, K-by-K row-major. */
  readonly bread: Float64Array;
  /** Score contributions, N-by-K row-major (row i = score of observation row i). */
  readonly scores: Float64Array;
  /** Cluster index 0..G-1 per score row. */
  readonly clusters: ArrayLike<number>;
  readonly clusterCount: number;
  /** N in (N-1)/(N-K): the number of observations. */
  readonly observationCount: number;
  /** K in (N-1)/(N-K): the number of estimated coefficients. */
  readonly parameterCount: number;
}

/** The CR1 covariance, K-by-K row-major. Returns null when G < 2 or N <= K. */
export function clusterSandwichCovariance(input: ClusterSandwichInput): Float64Array | null {
  const { bread, scores, clusters, clusterCount } = input;
  const size = Math.round(Math.sqrt(bread.length));
  if (clusterCount < 2 || input.observationCount <= input.parameterCount) return null;
  const clusterScores = new Float64Array(clusterCount * size);
  const scoreRows = scores.length / size;
  for (let i = 0; i < scoreRows; i += 1) {
    const cluster = clusters[i] as number;
    for (let j = 0; j < size; j += 1) {
      clusterScores[cluster * size + j] = (clusterScores[cluster * size + j] as number) + (scores[i * size + j] as number);
    }
  }
  return sandwichOfClusterScores({ ...input, clusterScores });
}

/**
 * The CR1 covariance from the score sums u_g of the clusters (G-by-K
 * row-major), for a caller that sums the scores of its rows per cluster as
 * it computes them (no N-by-K array of scores). Null when G < 2 or N <= K.
 */
export function sandwichOfClusterScores(input: Omit<ClusterSandwichInput, 'scores' | 'clusters'> & { readonly clusterScores: Float64Array }): Float64Array | null {
  const { bread, clusterScores, clusterCount, observationCount, parameterCount } = input;
  const size = Math.round(Math.sqrt(bread.length));
  if (clusterCount < 2 || observationCount <= parameterCount) return null;
  const meat = new Float64Array(size * size);
  for (let g = 0; g < clusterCount; g += 1) {
    for (let a = 0; a < size; a += 1) {
      const left = clusterScores[g * size + a] as number;
      if (left === 0) continue;
      for (let b = 0; b < size; b += 1) {
        meat[a * size + b] = (meat[a * size + b] as number) + left * (clusterScores[g * size + b] as number);
      }
    }
  }
  const factor =
    (clusterCount / (clusterCount - 1)) * ((observationCount - 1) / (observationCount - parameterCount));
  const breadMeat = multiplySquare(bread, meat, size);
  const sandwich = multiplySquare(breadMeat, bread, size);
  for (let a = 0; a < size; a += 1) {
    for (let b = a; b < size; b += 1) {
      // Symmetrise: B M B is symmetric in exact arithmetic.
      const value = (factor * ((sandwich[a * size + b] as number) + (sandwich[b * size + a] as number))) / 2;
      sandwich[a * size + b] = value;
      sandwich[b * size + a] = value;
    }
  }
  return sandwich;
}

/**
 * The clusters of every row renumbered as {@link compactClusters} numbers them, without a copy when
 * they are numbered so already (player codes of rows in file order are: a code is given at a
 * player's first row). One pass.
 */
export function compactClustersOfAll(clusters: Int32Array): { readonly indices: Int32Array; readonly count: number } {
  // Numbered so already when each row's cluster is either one seen before (below `next`) or the next number.
  let next = 0;
  for (let i = 0; i < clusters.length; i += 1) {
    const cluster = clusters[i] as number;
    if (cluster === next) next += 1;
    else if (!(cluster >= 0 && cluster < next)) return compactClusters(clusters, new Uint8Array(clusters.length).fill(1));
  }
  return { indices: clusters, count: next };
}

/**
 * Renumber the clusters of the kept rows 0..G-1 in order of first appearance,
 * so that G counts only clusters that occur. `keep`: true, or 1 in a byte
 * mask, for a kept row.
 */
export function compactClusters(
  clusters: ArrayLike<number>,
  keep: ArrayLike<boolean> | Uint8Array,
): { readonly indices: Int32Array; readonly count: number } {
  // Cluster indices are whole numbers >= 0 (checked by the fits); when they are no larger than a few
  // times the rows (player codes are), a typed table renumbers them, else a map: the same numbering.
  let largest = -1;
  let kept = 0;
  for (let i = 0; i < clusters.length; i += 1) {
    if (!keep[i]) continue;
    kept += 1;
    if ((clusters[i] as number) > largest) largest = clusters[i] as number;
  }
  const indices = new Int32Array(kept);
  if (largest < 4 * clusters.length + 16) {
    const table = new Int32Array(largest + 1).fill(-1);
    let count = 0;
    for (let i = 0, r = 0; i < clusters.length; i += 1) {
      if (!keep[i]) continue;
      const cluster = clusters[i] as number;
      let index = table[cluster] as number;
      if (index < 0) {
        index = count;
        table[cluster] = count;
        count += 1;
      }
      indices[r++] = index;
    }
    return { indices, count };
  }
  const renumbered = new Map<number, number>();
  for (let i = 0, r = 0; i < clusters.length; i += 1) {
    if (!keep[i]) continue;
    const cluster = clusters[i] as number;
    let index = renumbered.get(cluster);
    if (index === undefined) {
      index = renumbered.size;
      renumbered.set(cluster, index);
    }
    indices[r++] = index;
  }
  return { indices, count: renumbered.size };
}

function multiplySquare(left: Float64Array, right: Float64Array, size: number): Float64Array {
  const product = new Float64Array(size * size);
  for (let a = 0; a < size; a += 1) {
    for (let m = 0; m < size; m += 1) {
      const value = left[a * size + m] as number;
      if (value === 0) continue;
      for (let b = 0; b < size; b += 1) {
        product[a * size + b] = (product[a * size + b] as number) + value * (right[m * size + b] as number);
      }
    }
  }
  return product;
}
