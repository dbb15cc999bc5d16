/**
 * A dense design matrix, stored column-major: entry (row i, column j) is
 * `values[j * rows + i]`. Column-major storage keeps each regressor
 * contiguous, which is what a Householder QR sweeps over.
 */
export interface DesignMatrix {
  readonly rows: number;
  readonly columns: number;
  /** One name per column, e.g. `(Intercept)`, `latency_ms`. */
  readonly names: readonly string[];
  /** `rows * columns` entries, column-major. */
  readonly values: Float64Array;
}

/** One named column for {@link designMatrixFromColumns}. */
export interface NamedColumn {
  readonly name: string;
  readonly values: ArrayLike<number>;
}

/** The name R gives the intercept column; used by {@link interceptColumn}. */
export const INTERCEPT_NAME = '(Intercept)';

/**
 * Build a design matrix from named columns of equal length.
 *
 * Cost: O(rows * columns) copies. Throws a `RangeError` when the columns do
 * not all have the same length (a programming error, not an input issue).
 *
 * @example
 * designMatrixFromColumns([interceptColumn(3), { name: 'dose', values: [1, 2, 3] }]);
 */
export function designMatrixFromColumns(columns: readonly NamedColumn[]): DesignMatrix {
  const rows = columns[0]?.values.length ?? 0;
  const values = new Float64Array(rows * columns.length);
  columns.forEach((column, j) => {
    if (column.values.length !== rows) {
      throw new RangeError(
        `column \`${column.name}\` requires ${rows} rows, got ${column.values.length}`,
      );
    }
    for (let i = 0; i < rows; i += 1) values[j * rows + i] = column.values[i] as number;
  });
  return { rows, columns: columns.length, names: columns.map((column) => column.name), values };
}

/** A column of ones named `(Intercept)`, `rows` long. */
export function interceptColumn(rows: number): NamedColumn {
  return { name: INTERCEPT_NAME, values: new Float64Array(rows).fill(1) };
}

/** Entry (row, column) of a design matrix. */
export function entry(design: DesignMatrix, row: number, column: number): number {
  return design.values[column * design.rows + row] as number;
}

/** The matrix-vector product X b, one value per row. Cost O(rows * columns). */
export function multiply(design: DesignMatrix, coefficients: ArrayLike<number>, target?: Float64Array): Float64Array {
  const product = target ?? new Float64Array(design.rows);
  if (target !== undefined) product.fill(0, 0, design.rows);
  for (let j = 0; j < design.columns; j += 1) {
    const coefficient = coefficients[j] as number;
    if (coefficient === 0) continue;
    const offset = j * design.rows;
    for (let i = 0; i < design.rows; i += 1) {
      product[i] = (product[i] as number) + (design.values[offset + i] as number) * coefficient;
    }
  }
  return product;
}

/**
 * The rows of `design` where `keep[i]` is true, in order, as a new matrix.
 * Used to drop rows that carry zero weight before a fit.
 */
export function selectRows(design: DesignMatrix, keep: ArrayLike<boolean>): DesignMatrix {
  const kept: number[] = [];
  for (let i = 0; i < design.rows; i += 1) if (keep[i] === true) kept.push(i);
  const rows = kept.length;
  const values = new Float64Array(rows * design.columns);
  for (let j = 0; j < design.columns; j += 1) {
    for (let r = 0; r < rows; r += 1) {
      values[j * rows + r] = design.values[j * design.rows + (kept[r] as number)] as number;
    }
  }
  return { rows, columns: design.columns, names: design.names, values };
}

/** The rows `indices` of `design`, in that order (column-major, like every design). */
export function gatherRows(design: DesignMatrix, indices: Int32Array): DesignMatrix {
  const rows = indices.length;
  const values = new Float64Array(rows * design.columns);
  for (let j = 0; j < design.columns; j += 1) {
    const from = j * design.rows;
    const to = j * rows;
    for (let r = 0; r < rows; r += 1) values[to + r] = design.values[from + (indices[r] as number)] as number;
  }
  return { rows, columns: design.columns, names: design.names, values };
}

/**
 * Whether the column space of `design` contains the constant vector through
 * a column that is constant and non-zero over every row (R's "model has an
 * intercept"). Decides the null model of a fit.
 */
export function hasConstantColumn(design: DesignMatrix): boolean {
  if (design.rows === 0) return false;
  for (let j = 0; j < design.columns; j += 1) {
    const offset = j * design.rows;
    const first = design.values[offset] as number;
    if (first === 0) continue;
    let constant = true;
    for (let i = 1; i < design.rows && constant; i += 1) {
      constant = design.values[offset + i] === first;
    }
    if (constant) return true;
  }
  return false;
}
