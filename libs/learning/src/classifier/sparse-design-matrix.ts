import { AbstractMatrix, Matrix } from 'ml-matrix';

/**
 * A dense column vector (rows × 1) backed by one Float64Array. ml-matrix's own
 * `Matrix` stores each row as its own array, so a tall column costs one
 * allocation per row; this view costs one.
 */
export class DenseColumn extends AbstractMatrix {
  declare readonly rows: number;
  declare readonly columns: number;

  constructor(readonly column: Float64Array) {
    super();
    (this as { rows: number }).rows = column.length;
    (this as { columns: number }).columns = 1;
  }

  get(rowIndex: number, _columnIndex: number): number {
    return this.column[rowIndex];
  }

  set(rowIndex: number, _columnIndex: number, value: number): this {
    this.column[rowIndex] = value;
    return this;
  }
}

interface MatrixLike {
  readonly rows: number;
  readonly columns: number;
  get(rowIndex: number, columnIndex: number): number;
}

/**
 * Accepts any object shaped like an ml-matrix matrix: the library may load a
 * different copy of ml-matrix (CommonJS beside ESM), whose instances are not
 * `instanceof` ours; ml-matrix itself duck-types them the same way.
 */
function asMatrixLike(m: AbstractMatrix | number[][]): MatrixLike {
  if (Array.isArray(m)) return new Matrix(m);
  return m;
}

/** Reads a column vector of a matrix into a Float64Array. */
function readColumn(m: MatrixLike, expectedRows: number, name: string): Float64Array {
  if (m.columns !== 1 || m.rows !== expectedRows) {
    throw new RangeError(`${name} must be ${expectedRows} × 1, got ${m.rows} × ${m.columns}`);
  }
  if (m instanceof DenseColumn) return m.column;
  const out = new Float64Array(expectedRows);
  // ml-matrix's Matrix keeps its rows in the public field `data` (one
  // Float64Array a row); reading it directly avoids a megamorphic `get` call
  // per entry, which dominated the products for wide weight columns.
  const data = (m as { data?: unknown }).data;
  if (
    Array.isArray(data) &&
    data.length === expectedRows &&
    (expectedRows === 0 || (data[0] instanceof Float64Array && data[0].length === 1))
  ) {
    for (let i = 0; i < expectedRows; i++) out[i] = (data[i] as Float64Array)[0];
    return out;
  }
  for (let i = 0; i < expectedRows; i++) out[i] = m.get(i, 0);
  return out;
}

/**
 * Read-only sparse matrix in compressed sparse row and column form (both kept,
 * so that X·w and Xᵀ·r are each one pass over the non-zeros). It implements
 * the two products ml-logistic-regression's gradient ascent calls,
 * `X.mmul(wᵀ)` and `X.transpose().mmul(r)`, in O(non-zeros).
 *
 * For warm-started rounds of training, each class may carry a base score
 * vector `X·w₀` that `mmul` adds to its product: training that continues
 * from weights w₀ then sees the scores of w₀ + w while the library's own
 * weights start again from zero. The class whose turn it is follows the
 * library's order: `numSteps` products for class 0, then for class 1, …
 * (see {@link SparseDesignMatrix.beginRound}).
 */
export class SparseDesignMatrix extends AbstractMatrix {
  declare readonly rows: number;
  declare readonly columns: number;
  private readonly colPtr: Int32Array;
  private readonly rowIdx: Int32Array;
  private readonly colValues: Float64Array;
  private bases: Float64Array[] | null = null;
  private rowWeights: Float64Array[] | null = null;
  /** Column means subtracted implicitly (none: plain X). */
  private centre: Float64Array | null = null;
  private stepsPerClass = 0;
  private calls = 0;

  /**
   * @param rowPtr  CSR row pointers, length rows + 1
   * @param colIdx  column of each non-zero, ascending within a row
   * @param values  value of each non-zero
   */
  constructor(
    readonly rowPtr: Int32Array,
    readonly colIdx: Int32Array,
    readonly nzValues: Float64Array,
    columns: number,
  ) {
    super();
    const rows = rowPtr.length - 1;
    if (rows < 0) throw new RangeError('rowPtr must have at least one entry');
    const values = nzValues;
    if (colIdx.length !== values.length || rowPtr[rows] !== values.length) {
      throw new RangeError(
        `non-zero arrays disagree: rowPtr ends at ${rowPtr[rows]}, ${colIdx.length} columns, ${values.length} values`,
      );
    }
    (this as { rows: number }).rows = rows;
    (this as { columns: number }).columns = columns;
    // Build the compressed sparse column copy (counting sort by column).
    const colPtr = new Int32Array(columns + 1);
    for (let k = 0; k < colIdx.length; k++) {
      const j = colIdx[k];
      if (j < 0 || j >= columns) throw new RangeError(`colIdx[${k}] = ${j} is outside 0…${columns - 1}`);
      colPtr[j + 1]++;
    }
    for (let j = 0; j < columns; j++) colPtr[j + 1] += colPtr[j];
    const next = colPtr.slice(0, columns);
    const rowIdx = new Int32Array(values.length);
    const colValues = new Float64Array(values.length);
    for (let i = 0; i < rows; i++) {
      for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
        const p = next[colIdx[k]]++;
        rowIdx[p] = i;
        colValues[p] = values[k];
      }
    }
    this.colPtr = colPtr;
    this.rowIdx = rowIdx;
    this.colValues = colValues;
  }

  /**
   * Makes every product use the column-centred matrix X − 1μᵀ without
   * storing it: (X − 1μᵀ)w = Xw − (μ·w)1 and (X − 1μᵀ)ᵀr = Xᵀr − μ(1ᵀr),
   * so the products stay O(non-zeros + columns). `means[j]` = 0 leaves
   * column j as it is (the intercept column, for instance).
   */
  centreColumns(means: Float64Array | null): void {
    if (means !== null && means.length !== this.columns) {
      throw new RangeError(`means must have ${this.columns} entries, got ${means.length}`);
    }
    this.centre = means;
  }

  /** Sets every stored entry of column j to `value` (for the intercept column). */
  setStoredColumn(j: number, value: number): void {
    for (let k = this.colPtr[j]; k < this.colPtr[j + 1]; k++) this.colValues[k] = value;
    for (let k = 0; k < this.colIdx.length; k++) if (this.colIdx[k] === j) this.nzValues[k] = value;
  }

  /** Column means of the stored (uncentred) matrix. */
  columnMeans(): Float64Array {
    const means = new Float64Array(this.columns);
    for (let k = 0; k < this.colIdx.length; k++) means[this.colIdx[k]] += this.nzValues[k];
    for (let j = 0; j < means.length; j++) means[j] /= this.rows;
    return means;
  }

  /** Number of stored non-zeros. */
  get nonZeros(): number {
    return this.nzValues.length;
  }

  /**
   * Starts a round of one-vs-rest training: class c's products get `bases[c]`
   * added; `stepsPerClass` is the library's `numSteps`. With `rowWeights`,
   * the transposed product of class c weighs row i by `rowWeights[c][i]`,
   * Xᵀ(w ⊙ r), which turns the library's gradient of the log-likelihood into
   * the gradient of the weighted log-likelihood.
   */
  beginRound(bases: Float64Array[] | null, stepsPerClass: number, rowWeights: Float64Array[] | null = null): void {
    this.bases = bases;
    this.rowWeights = rowWeights;
    this.stepsPerClass = stepsPerClass;
    this.calls = 0;
  }

  /** Products computed since {@link beginRound}. */
  get productCount(): number {
    return this.calls;
  }

  get(rowIndex: number, columnIndex: number): number {
    let lo = this.rowPtr[rowIndex];
    let hi = this.rowPtr[rowIndex + 1] - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      const c = this.colIdx[mid];
      if (c === columnIndex) return this.nzValues[mid] - (this.centre?.[columnIndex] ?? 0);
      if (c < columnIndex) lo = mid + 1;
      else hi = mid - 1;
    }
    return this.centre === null ? 0 : -this.centre[columnIndex];
  }

  set(rowIndex: number, columnIndex: number, _value: number): this {
    throw new TypeError(`SparseDesignMatrix is read-only (set(${rowIndex}, ${columnIndex}))`);
  }

  /** X·w (+ the current class's base scores), w a columns × 1 vector. */
  override mmul(other: AbstractMatrix | number[][]): Matrix {
    const w = readColumn(asMatrixLike(other), this.columns, 'mmul argument');
    const out = this.times(w);
    if (this.bases !== null && this.stepsPerClass > 0) {
      const c = Math.floor(this.calls / this.stepsPerClass);
      if (c < this.bases.length) for (let i = 0; i < out.length; i++) out[i] += this.bases[c][i];
    }
    this.calls++;
    return new DenseColumn(out) as unknown as Matrix;
  }

  /** X·w (centred if set) as a plain array (no base added, not counted). */
  times(w: Float64Array): Float64Array {
    const out = new Float64Array(this.rows);
    const { rowPtr, colIdx, nzValues: values } = this;
    for (let i = 0; i < out.length; i++) {
      let s = 0;
      for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) s += values[k] * w[colIdx[k]];
      out[i] = s;
    }
    if (this.centre !== null) {
      let shift = 0;
      for (let j = 0; j < w.length; j++) shift += this.centre[j] * w[j];
      if (shift !== 0) for (let i = 0; i < out.length; i++) out[i] -= shift;
    }
    return out;
  }

  /** Xᵀ·r (centred if set) as a plain array. */
  transposeTimes(r: Float64Array): Float64Array {
    const out = new Float64Array(this.columns);
    const { colPtr, rowIdx, colValues } = this;
    for (let j = 0; j < out.length; j++) {
      let s = 0;
      for (let k = colPtr[j]; k < colPtr[j + 1]; k++) s += colValues[k] * r[rowIdx[k]];
      out[j] = s;
    }
    if (this.centre !== null) {
      let total = 0;
      for (let i = 0; i < r.length; i++) total += r[i];
      for (let j = 0; j < out.length; j++) out[j] -= this.centre[j] * total;
    }
    return out;
  }

  /** Xᵀ·r with the current class's row weights (the transposed product during training). */
  currentTransposeTimes(r: Float64Array): Float64Array {
    if (this.rowWeights === null || this.stepsPerClass === 0) return this.transposeTimes(r);
    // The library calls X·w then Xᵀ·r in each step: the class is that of the last X·w.
    const c = Math.floor((this.calls - 1) / this.stepsPerClass);
    if (c < 0 || c >= this.rowWeights.length) return this.transposeTimes(r);
    const weights = this.rowWeights[c];
    const weighted = new Float64Array(r.length);
    for (let i = 0; i < r.length; i++) weighted[i] = r[i] * weights[i];
    return this.transposeTimes(weighted);
  }

  /** A view of Xᵀ whose `mmul` is one pass over the non-zeros. */
  override transpose(): Matrix {
    return new SparseTransposeView(this) as unknown as Matrix;
  }
}

/** Xᵀ of a {@link SparseDesignMatrix}; only `mmul` and `get` are supported. */
class SparseTransposeView extends AbstractMatrix {
  declare readonly rows: number;
  declare readonly columns: number;

  constructor(private readonly x: SparseDesignMatrix) {
    super();
    (this as { rows: number }).rows = x.columns;
    (this as { columns: number }).columns = x.rows;
  }

  get(rowIndex: number, columnIndex: number): number {
    return this.x.get(columnIndex, rowIndex);
  }

  set(rowIndex: number, columnIndex: number, _value: number): this {
    throw new TypeError(`the transpose of a SparseDesignMatrix is read-only (set(${rowIndex}, ${columnIndex}))`);
  }

  override mmul(other: AbstractMatrix | number[][]): Matrix {
    const r = readColumn(asMatrixLike(other), this.columns, 'mmul argument');
    return new DenseColumn(this.x.currentTransposeTimes(r)) as unknown as Matrix;
  }
}
