/**
 * Boundary checks shared by the agreement coefficients: they throw RangeError
 * or TypeError naming the argument and the bad value.
 */

/** Checks a rectangular table of non-negative integer counts; returns its column count. */
export function assertCountTable(
  table: readonly (readonly number[])[],
  name: string,
  minRows: number,
  minColumns: number,
): number {
  if (!Array.isArray(table)) throw new TypeError(`${name} must be an array of rows of counts`);
  if (table.length < minRows) throw new RangeError(`${name} must have at least ${minRows} rows, got ${table.length}`);
  let width = -1;
  table.forEach((row, i) => {
    if (!Array.isArray(row)) throw new TypeError(`${name}[${i}] must be an array of counts`);
    if (width === -1) width = row.length;
    else if (row.length !== width)
      throw new RangeError(`${name} is ragged: row 0 has ${width} entries, row ${i} has ${row.length}`);
    row.forEach((v, j) => {
      if (typeof v !== 'number') throw new TypeError(`${name}[${i}][${j}] must be a number, got ${typeof v}`);
      if (!Number.isInteger(v) || v < 0)
        throw new RangeError(`${name}[${i}][${j}] must be a non-negative integer count, got ${v}`);
    });
  });
  if (width < minColumns)
    throw new RangeError(`${name} must have at least ${minColumns} columns, got ${Math.max(width, 0)}`);
  return width;
}
