/** Margins of a validated contingency table. */
export interface TableMargins {
  /** Number of rows r (the groups compared). */
  rows: number;
  /** Number of columns c (the categories). */
  columns: number;
  /** Grand total n. */
  n: number;
  /** Row sums, length r. */
  rowTotals: number[];
  /** Column sums, length c. */
  columnTotals: number[];
  /** Largest single count. */
  maxCount: number;
}

function describeBadCount(value: unknown): string | null {
  if (typeof value !== "number") return `is not a number (${String(value)})`;
  if (Number.isNaN(value)) return "is NaN";
  if (!Number.isFinite(value)) return `is infinite (${value})`;
  if (value < 0) return `is negative (${value})`;
  if (!Number.isInteger(value)) return `is not a whole number (${value})`;
  if (!Number.isSafeInteger(value)) return `is too large to count exactly (${value})`;
  return null;
}

function checkCount(value: number, row: number, column: number): void {
  const problem = describeBadCount(value);
  if (problem !== null) throw new RangeError(`count at row ${row + 1}, column ${column + 1} ${problem}`);
}

function checkShape(observed: readonly (readonly number[])[]): number {
  if (!Array.isArray(observed)) throw new RangeError("the table must be an array of rows");
  if (observed.length < 2) {
    throw new RangeError(`the table needs at least 2 rows to compare (got ${observed.length})`);
  }
  const first = observed[0];
  if (!Array.isArray(first)) throw new RangeError("row 1 is not an array of counts");
  const columns = first.length;
  if (columns < 2) {
    throw new RangeError(`the table needs at least 2 columns (categories) (got ${columns})`);
  }
  for (let i = 1; i < observed.length; i++) {
    const row = observed[i];
    if (!Array.isArray(row)) throw new RangeError(`row ${i + 1} is not an array of counts`);
    if (row.length !== columns) {
      throw new RangeError(
        `row ${i + 1} has ${row.length} counts but row 1 has ${columns}; every row needs one count per category`,
      );
    }
  }
  return columns;
}

/**
 * Check a contingency table of counts and return its margins.
 *
 * Throws a RangeError with a plain message (rows and columns numbered from 1)
 * for: fewer than 2 rows or columns, ragged rows, counts that are negative,
 * fractional, NaN, infinite or beyond 2⁵³, and any row or column that is all
 * zeros — such a row or column has no expected counts, so callers must drop
 * it (and say so) before testing.
 *
 * Cost: one pass over the cells.
 *
 * @example
 * validateTable([[3, 1], [1, 3]]).rowTotals; // [4, 4]
 */
export function validateTable(observed: readonly (readonly number[])[]): TableMargins {
  const columns = checkShape(observed);
  const rows = observed.length;
  const rowTotals: number[] = [];
  const columnTotals: number[] = [];
  for (let j = 0; j < columns; j++) columnTotals.push(0);
  let n = 0;
  let maxCount = 0;
  for (let i = 0; i < rows; i++) {
    const row = observed[i];
    let sum = 0;
    for (let j = 0; j < columns; j++) {
      const value = row[j];
      // Fast path for counts below 2³¹; anything else (NaN, ±∞, fractions,
      // negatives, large integers, and non-numbers such as the BigInt a raw SQL
      // SUM can return, on which `| 0` would throw a TypeError) takes the careful test.
      if (typeof value !== "number" || (value | 0) !== value || value < 0) checkCount(value, i, j);
      if (value > maxCount) maxCount = value;
      sum += value;
      columnTotals[j] += value;
    }
    rowTotals.push(sum);
    n += sum;
  }
  if (!Number.isSafeInteger(n)) throw new RangeError(`the grand total ${n} is too large to count exactly`);
  const zeroRow = rowTotals.indexOf(0);
  if (zeroRow >= 0) {
    throw new RangeError(`row ${zeroRow + 1} is all zeros; drop it before testing`);
  }
  const zeroColumn = columnTotals.indexOf(0);
  if (zeroColumn >= 0) {
    throw new RangeError(`column ${zeroColumn + 1} is all zeros; drop it before testing`);
  }
  return { rows, columns, n, rowTotals, columnTotals, maxCount };
}
