/** Verdict of the two usual expected-count rules for the chi-square approximation. */
export interface ExpectedCountCheck {
  /** Smallest expected count, min(row total) · min(column total) / n. */
  minExpected: number;
  /** Share of cells whose expected count is below 5. */
  fractionBelow5: number;
  /** Number of cells whose expected count is below 5. */
  cellsBelow5: number;
  /** Number of cells whose expected count is below 1. */
  cellsBelow1: number;
  /** Number of cells, r · c. */
  cells: number;
  /** Every expected count is at least 5 (common practice, not a theorem). */
  allAtLeast5: boolean;
  /** Cochran's rule: no expected count below 1 and at most 20% below 5. */
  cochran: boolean;
}

/**
 * Check the expected counts E_ij = R_i C_j / n of a table against the two
 * rules used to decide whether the chi-square approximation can be trusted.
 *
 * - "Every expected count at least 5" is the common rule of thumb — common
 *   practice, not a derived bound.
 * - Cochran's rule: no expected count below 1 and no more than 20% below 5
 *   (Cochran, W. G. 1954, "Some methods for strengthening the common χ² tests",
 *   Biometrics 10:417–451).
 *
 * Comparisons are made in integers (R_i C_j < 5n), so a cell whose expected
 * count is exactly 5 passes.
 *
 * Cost: O(r·c) integer comparisons, without forming the expected table
 * (well under a microsecond for 20×40).
 *
 * @example
 * checkExpectedCounts([4, 4], [4, 4]).minExpected; // 2  (and cochran: false, allAtLeast5: false)
 */
export function checkExpectedCounts(
  rowTotals: readonly number[],
  columnTotals: readonly number[],
): ExpectedCountCheck {
  const rows = rowTotals.length;
  const columns = columnTotals.length;
  if (rows === 0 || columns === 0) throw new RangeError("checkExpectedCounts needs non-empty margins");
  let n = 0;
  let minRow = Infinity;
  let minColumn = Infinity;
  for (let i = 0; i < rows; i++) {
    n += rowTotals[i];
    if (rowTotals[i] < minRow) minRow = rowTotals[i];
  }
  for (let j = 0; j < columns; j++) if (columnTotals[j] < minColumn) minColumn = columnTotals[j];
  if (!(n > 0)) throw new RangeError("checkExpectedCounts needs a positive grand total");
  const fiveN = 5 * n;
  let cellsBelow5 = 0;
  let cellsBelow1 = 0;
  for (let i = 0; i < rows; i++) {
    const rowTotal = rowTotals[i];
    for (let j = 0; j < columns; j++) {
      const product = rowTotal * columnTotals[j];
      if (product < fiveN) {
        cellsBelow5++;
        if (product < n) cellsBelow1++;
      }
    }
  }
  return expectedCountVerdict(cellsBelow5, cellsBelow1, rows * columns, (minRow * minColumn) / n);
}

/**
 * Assemble an {@link ExpectedCountCheck} from cell counts already made
 * (analyzeTable counts them in its own pass over the cells), so both rules
 * live in one place.
 *
 * @example
 * expectedCountVerdict(1, 0, 6, 2.5).cochran; // true  (1 of 6 cells below 5 is under 20%, none below 1)
 */
export function expectedCountVerdict(
  cellsBelow5: number,
  cellsBelow1: number,
  cells: number,
  minExpected: number,
): ExpectedCountCheck {
  return {
    minExpected,
    fractionBelow5: cellsBelow5 / cells,
    cellsBelow5,
    cellsBelow1,
    cells,
    allAtLeast5: cellsBelow5 === 0,
    cochran: cellsBelow1 === 0 && 5 * cellsBelow5 <= cells,
  };
}
