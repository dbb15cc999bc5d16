/**
 * Householder QR with limited column pivoting, least-squares solve, and the
 * unscaled covariance (R'R)^{-1}.
 *
 * Method: Householder reflections, Golub, G. H. and Van Loan, C. F. (2013),
 * *Matrix Computations*, 4th ed., Johns Hopkins, Algorithm 5.1.1 (house) and
 * §5.2.2 (Householder QR); least squares by QR, §5.3.3, which avoids the
 * squared condition number of the normal equations (§5.3.2). Rank detection
 * with column pivoting, §5.4.1, in the *limited* form used by LINPACK
 * `dqrdc2` (the variant R's `lm` and `glm.fit` call): columns keep their
 * order, and a column whose remaining norm |R_jj| falls below
 * `tolerance * (its original norm)` is declared aliased and moved to the end.
 * Keeping the order means that of two collinear columns the later one is the
 * one reported as aliased, as R reports it.
 *
 * Each column is first scaled by a power of two so that its largest entry is
 * in [1, 2). Power-of-two scaling is exact and Householder QR is equivariant
 * under it, so results are bit-for-bit those of the unscaled matrix, except
 * that columns of tiny (even subnormal) entries no longer lose their rank
 * information to underflow.
 *
 * Cost: O(rows * columns^2) for the factorisation, O(rows * columns) per
 * solve, O(columns^3) for the covariance.
 */

/** The factorisation X P = Q R of an n-by-k matrix, Q held as k reflectors. */
export interface QrDecomposition {
  readonly rows: number;
  readonly columns: number;
  /** Number of columns found linearly independent. */
  readonly rank: number;
  /** `pivot[p]` is the original index of the column at position p; aliased columns come last. */
  readonly pivot: Int32Array;
  /** Original indices of the aliased columns, ascending. */
  readonly aliased: readonly number[];
  /** R in position order, k-by-k row-major; only the leading `rank` rows are meaningful. */
  readonly upper: Float64Array;
  /** Householder vector of step p, covering rows p..n-1. */
  readonly reflectors: readonly Float64Array[];
  /** 2 / (v'v) for each reflector (0 for a trivial one). */
  readonly reflectorScales: Float64Array;
  /** Column j (original index) was multiplied by 2^columnExponents[j] before factorising. */
  readonly columnExponents: Int32Array;
}

/** R's default `tol` for `qr()` / `lm.fit`: 1e-7 relative to each column's original norm. */
export const DEFAULT_RANK_TOLERANCE = 1e-7;

/**
 * Factorise a column-major `rows`-by-`columns` matrix (the input is not modified).
 *
 * @param values column-major entries, (i, j) at `values[j * rows + i]`
 * @param tolerance relative rank tolerance on |R_jj| (default 1e-7, as R)
 */
export function householderQr(
  values: Float64Array,
  rows: number,
  columns: number,
  tolerance: number = DEFAULT_RANK_TOLERANCE,
): QrDecomposition {
  const work = Float64Array.from(values);
  const columnExponents = new Int32Array(columns);
  for (let j = 0; j < columns; j += 1) {
    let largest = 0;
    for (let i = 0; i < rows; i += 1) largest = Math.max(largest, Math.abs(work[j * rows + i] as number));
    if (largest === 0 || !Number.isFinite(largest)) continue;
    const exponent = -Math.floor(Math.log2(largest));
    columnExponents[j] = exponent;
    for (let i = 0; i < rows; i += 1) work[j * rows + i] = scaleByPowerOfTwo(work[j * rows + i] as number, exponent);
  }
  const pivot = Int32Array.from({ length: columns }, (_, j) => j);
  const originalNorms = new Float64Array(columns);
  for (let j = 0; j < columns; j += 1) {
    const norm = columnNorm(work, rows, j, 0);
    // dqrdc2: a zero column is compared with 1, so it is always aliased.
    originalNorms[j] = norm === 0 ? 1 : norm;
  }
  const reflectors: Float64Array[] = [];
  const reflectorScales = new Float64Array(columns);
  let rank = columns;
  let position = 0;
  while (position < rank) {
    const remainingNorm = position < rows ? columnNorm(work, rows, position, position) : 0;
    if (!(remainingNorm >= tolerance * (originalNorms[position] as number))) {
      rotateToEnd(work, rows, position, rank, pivot, originalNorms);
      rank -= 1;
      continue;
    }
    // Golub & Van Loan Algorithm 5.1.1, sign chosen to avoid cancellation.
    const offset = position * rows;
    const leading = work[offset + position] as number;
    const diagonal = leading >= 0 ? -remainingNorm : remainingNorm;
    const vector = new Float64Array(rows - position);
    for (let i = position; i < rows; i += 1) vector[i - position] = work[offset + i] as number;
    vector[0] = leading - diagonal;
    const vectorSquaredNorm = remainingNorm * (remainingNorm + Math.abs(leading)) * 2;
    const scale = vectorSquaredNorm > 0 ? 2 / vectorSquaredNorm : 0;
    work[offset + position] = diagonal;
    for (let i = position + 1; i < rows; i += 1) work[offset + i] = 0;
    for (let column = position + 1; column < columns; column += 1) {
      applyReflector(work, rows, column, position, vector, scale);
    }
    reflectors.push(vector);
    reflectorScales[position] = scale;
    position += 1;
  }
  const upper = new Float64Array(columns * columns);
  for (let p = 0; p < Math.min(rank, rows); p += 1) {
    for (let q = p; q < columns; q += 1) upper[p * columns + q] = work[q * rows + p] as number;
  }
  const aliased = Array.from(pivot.subarray(rank)).sort((a, b) => a - b);
  return { rows, columns, rank, pivot, aliased, upper, reflectors, reflectorScales, columnExponents };
}

/** Least-squares solution of min ||X b - y||, with its residuals and fitted values. */
export interface LeastSquaresSolution {
  /** One per original column; aliased columns get 0 (R reports NA). */
  readonly coefficients: Float64Array;
  readonly residuals: Float64Array;
  readonly fitted: Float64Array;
}

/**
 * Solve min ||X b - y|| from a factorisation: Q'y, then back substitution on
 * the leading `rank` block of R (Golub & Van Loan §5.3.3). Residuals are
 * Q (0, (Q'y)_2), as LINPACK `dqrsl` forms them, fitted = y - residuals.
 */
export function solveLeastSquares(qr: QrDecomposition, response: ArrayLike<number>): LeastSquaresSolution {
  const { rows, columns, rank } = qr;
  const effects = Float64Array.from(response as ArrayLike<number>);
  qr.reflectors.forEach((vector, p) => applyReflectorToVector(effects, p, vector, qr.reflectorScales[p] as number));
  const solution = new Float64Array(columns);
  for (let p = rank - 1; p >= 0; p -= 1) {
    let sum = effects[p] as number;
    for (let q = p + 1; q < rank; q += 1) sum -= (qr.upper[p * columns + q] as number) * (solution[q] as number);
    solution[p] = sum / (qr.upper[p * columns + p] as number);
  }
  const coefficients = new Float64Array(columns);
  for (let p = 0; p < rank; p += 1) {
    const column = qr.pivot[p] as number;
    coefficients[column] = scaleByPowerOfTwo(solution[p] as number, qr.columnExponents[column] as number);
  }
  const residuals = effects;
  for (let p = 0; p < Math.min(rank, rows); p += 1) residuals[p] = 0;
  for (let p = qr.reflectors.length - 1; p >= 0; p -= 1) {
    applyReflectorToVector(residuals, p, qr.reflectors[p] as Float64Array, qr.reflectorScales[p] as number);
  }
  const fitted = new Float64Array(rows);
  for (let i = 0; i < rows; i += 1) fitted[i] = (response[i] as number) - (residuals[i] as number);
  return { coefficients, residuals, fitted };
}

/**
 * (R'R)^{-1} = (X'X)^{-1} on the non-aliased columns, formed as R^{-1} R^{-T}
 * from the triangular factor (no normal equations), returned k-by-k row-major
 * in the original column order. Rows and columns of aliased columns are 0.
 */
export function inverseCrossProduct(qr: QrDecomposition): Float64Array {
  const { columns, rank } = qr;
  // Inverse of the leading rank-by-rank upper triangle, column by column.
  const inverse = new Float64Array(rank * rank);
  for (let j = 0; j < rank; j += 1) {
    inverse[j * rank + j] = 1 / (qr.upper[j * columns + j] as number);
    for (let i = j - 1; i >= 0; i -= 1) {
      let sum = 0;
      for (let m = i + 1; m <= j; m += 1) {
        sum += (qr.upper[i * columns + m] as number) * (inverse[m * rank + j] as number);
      }
      inverse[i * rank + j] = -sum / (qr.upper[i * columns + i] as number);
    }
  }
  const result = new Float64Array(columns * columns);
  for (let p = 0; p < rank; p += 1) {
    for (let q = p; q < rank; q += 1) {
      let sum = 0;
      for (let m = q; m < rank; m += 1) sum += (inverse[p * rank + m] as number) * (inverse[q * rank + m] as number);
      const row = qr.pivot[p] as number;
      const column = qr.pivot[q] as number;
      const value = scaleByPowerOfTwo(
        scaleByPowerOfTwo(sum, qr.columnExponents[row] as number),
        qr.columnExponents[column] as number,
      );
      result[row * columns + column] = value;
      result[column * columns + row] = value;
    }
  }
  return result;
}

/** value * 2^exponent, in steps that neither overflow nor underflow the factor itself. */
function scaleByPowerOfTwo(value: number, exponent: number): number {
  let result = value;
  let remaining = exponent;
  while (remaining > 1000) {
    result *= 2 ** 1000;
    remaining -= 1000;
  }
  while (remaining < -1000) {
    result *= 2 ** -1000;
    remaining += 1000;
  }
  return result * 2 ** remaining;
}

/** Euclidean norm of column j from row `from` on, scaled to avoid overflow. */
function columnNorm(values: Float64Array, rows: number, column: number, from: number): number {
  const offset = column * rows;
  let largest = 0;
  for (let i = from; i < rows; i += 1) largest = Math.max(largest, Math.abs(values[offset + i] as number));
  if (largest === 0 || !Number.isFinite(largest)) return largest;
  let sum = 0;
  for (let i = from; i < rows; i += 1) {
    const scaled = (values[offset + i] as number) / largest;
    sum += scaled * scaled;
  }
  return largest * Math.sqrt(sum);
}

/** Move the column at `position` behind the other unprocessed columns (dqrdc2's limited pivoting). */
function rotateToEnd(
  values: Float64Array,
  rows: number,
  position: number,
  end: number,
  pivot: Int32Array,
  norms: Float64Array,
): void {
  const saved = values.slice(position * rows, (position + 1) * rows);
  values.copyWithin(position * rows, (position + 1) * rows, end * rows);
  values.set(saved, (end - 1) * rows);
  const savedPivot = pivot[position] as number;
  const savedNorm = norms[position] as number;
  for (let j = position; j < end - 1; j += 1) {
    pivot[j] = pivot[j + 1] as number;
    norms[j] = norms[j + 1] as number;
  }
  pivot[end - 1] = savedPivot;
  norms[end - 1] = savedNorm;
}

/** Apply I - scale v v' to rows `from`.. of one column in place. */
function applyReflector(
  values: Float64Array,
  rows: number,
  column: number,
  from: number,
  vector: Float64Array,
  scale: number,
): void {
  if (scale === 0) return;
  const offset = column * rows + from;
  let dot = 0;
  for (let i = 0; i < vector.length; i += 1) dot += (vector[i] as number) * (values[offset + i] as number);
  const factor = scale * dot;
  for (let i = 0; i < vector.length; i += 1) values[offset + i] = (values[offset + i] as number) - factor * (vector[i] as number);
}

function applyReflectorToVector(target: Float64Array, from: number, vector: Float64Array, scale: number): void {
  if (scale === 0) return;
  let dot = 0;
  for (let i = 0; i < vector.length; i += 1) dot += (vector[i] as number) * (target[from + i] as number);
  const factor = scale * dot;
  for (let i = 0; i < vector.length; i += 1) target[from + i] = (target[from + i] as number) - factor * (vector[i] as number);
}
