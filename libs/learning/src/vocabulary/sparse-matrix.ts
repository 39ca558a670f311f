/**
 * Sparse matrices in compressed sparse row (CSR) form: the entries of row `r`
 * are `columnIndex[rowStart[r] … rowStart[r + 1])` with their `values`,
 * column indices strictly ascending within a row.
 */
export interface SparseMatrix {
  readonly rows: number;
  readonly columns: number;
  /** `rows + 1` offsets into `columnIndex` and `values`. */
  readonly rowStart: Int32Array;
  readonly columnIndex: Int32Array;
  readonly values: Float64Array;
}

/**
 * Builds a CSR matrix from a dense table (rows of equal length); zero cells are
 * left out.
 * @throws TypeError when the rows differ in length or hold a non-finite number.
 */
export function sparseMatrixFromDense(table: readonly (readonly number[])[]): SparseMatrix {
  const rows = table.length;
  const columns = rows === 0 ? 0 : table[0].length;
  const rowStart = new Int32Array(rows + 1);
  const indices: number[] = [];
  const values: number[] = [];
  for (let r = 0; r < rows; r++) {
    const row = table[r];
    if (row.length !== columns) {
      throw new TypeError(`table[${r}] has ${row.length} cells, expected ${columns}`);
    }
    for (let c = 0; c < columns; c++) {
      const v = row[c];
      if (!Number.isFinite(v)) throw new TypeError(`table[${r}][${c}] must be a finite number, got ${v}`);
      if (v !== 0) {
        indices.push(c);
        values.push(v);
      }
    }
    rowStart[r + 1] = indices.length;
  }
  return { rows, columns, rowStart, columnIndex: Int32Array.from(indices), values: Float64Array.from(values) };
}

/** The dense table of a CSR matrix (for tests and small reports). */
export function sparseMatrixToDense(m: SparseMatrix): number[][] {
  const out: number[][] = [];
  for (let r = 0; r < m.rows; r++) {
    const row = new Array<number>(m.columns).fill(0);
    for (let k = m.rowStart[r]; k < m.rowStart[r + 1]; k++) row[m.columnIndex[k]] = m.values[k];
    out.push(row);
  }
  return out;
}

/**
 * Checks the shape of a CSR matrix: typed arrays, offsets non-decreasing from 0
 * to the entry count, column indices ascending within each row and below
 * `columns`, values finite.
 * @throws TypeError / RangeError naming `name`.
 */
export function assertSparseMatrix(m: SparseMatrix, name: string): void {
  if (
    (m as unknown) === null ||
    typeof m !== 'object' ||
    !(m.rowStart instanceof Int32Array) ||
    !(m.columnIndex instanceof Int32Array) ||
    !(m.values instanceof Float64Array)
  ) {
    throw new TypeError(`${name} must be a CSR matrix { rows, columns, rowStart, columnIndex, values }`);
  }
  if (!Number.isInteger(m.rows) || m.rows < 0 || !Number.isInteger(m.columns) || m.columns < 0) {
    throw new RangeError(`${name} has a bad shape ${m.rows}×${m.columns}`);
  }
  if (m.rowStart.length !== m.rows + 1 || m.rowStart[0] !== 0 || m.rowStart[m.rows] !== m.values.length) {
    throw new RangeError(`${name}.rowStart must hold rows + 1 offsets from 0 to the entry count`);
  }
  if (m.columnIndex.length !== m.values.length) {
    throw new RangeError(`${name}.columnIndex and ${name}.values differ in length`);
  }
  for (let r = 0; r < m.rows; r++) {
    const a = m.rowStart[r];
    const b = m.rowStart[r + 1];
    if (b < a) throw new RangeError(`${name}.rowStart decreases at row ${r}`);
    for (let k = a; k < b; k++) {
      const c = m.columnIndex[k];
      if (c < 0 || c >= m.columns || (k > a && c <= m.columnIndex[k - 1])) {
        throw new RangeError(`${name} row ${r}: column indices must ascend within 0…${m.columns - 1}`);
      }
      if (!Number.isFinite(m.values[k])) throw new RangeError(`${name} row ${r} holds ${m.values[k]}`);
    }
  }
}

/**
 * Keeps the `perRow` largest values of each row (ties: the lower column), the
 * rest dropped: bounds the size of a stored matrix whose rows are compared by
 * cosine, where the largest entries carry most of each dot product.
 * @throws RangeError for a `perRow` below 1.
 */
export function keepLargestPerRow(m: SparseMatrix, perRow: number): SparseMatrix {
  if (!Number.isInteger(perRow) || perRow < 1) throw new RangeError(`perRow must be a positive integer, got ${perRow}`);
  const rowStart = new Int32Array(m.rows + 1);
  const columnIndex: number[] = [];
  const values: number[] = [];
  for (let r = 0; r < m.rows; r++) {
    const a = m.rowStart[r];
    const b = m.rowStart[r + 1];
    let keep: number[] = [];
    for (let k = a; k < b; k++) keep.push(k);
    if (keep.length > perRow) {
      keep.sort((x, y) => m.values[y] - m.values[x] || m.columnIndex[x] - m.columnIndex[y]);
      keep = keep.slice(0, perRow).sort((x, y) => x - y);
    }
    for (const k of keep) {
      columnIndex.push(m.columnIndex[k]);
      values.push(m.values[k]);
    }
    rowStart[r + 1] = columnIndex.length;
  }
  return {
    rows: m.rows,
    columns: m.columns,
    rowStart,
    columnIndex: Int32Array.from(columnIndex),
    values: Float64Array.from(values),
  };
}
