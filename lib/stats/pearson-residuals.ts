import { validateTable } from "./validate-table";

/**
 * Pearson residual of one cell, (O − E)/√E.
 *
 * Method: the signed square root of the cell's term in Pearson's X²
 * (Agresti, An Introduction to Categorical Data Analysis, 2nd ed. 2007, §2.4.5).
 * Under independence its variance is below 1, so it understates how unusual
 * a cell is; prefer {@link adjustedResidual} for flagging cells.
 *
 * @example
 * pearsonResidual(3, 2); // 0.7071067811865475  (tea-tasting table, cell [0][0]: (3 − 2)/√2)
 */
export function pearsonResidual(observed: number, expected: number): number {
  return (observed - expected) / Math.sqrt(expected);
}

/**
 * Pearson residuals (O_ij − E_ij)/√E_ij of a whole table, E_ij = R_i C_j / n.
 *
 * Validates the table first (see {@link validateTable}). Cost: O(r·c).
 *
 * @example
 * pearsonResiduals([[3, 1], [1, 3]])[0][0]; // 0.7071067811865475  (= (3 − 2)/√2)
 */
export function pearsonResiduals(observed: readonly (readonly number[])[]): number[][] {
  const { n, rowTotals, columnTotals } = validateTable(observed);
  return observed.map((row, i) =>
    row.map((o, j) => pearsonResidual(o, (rowTotals[i] * columnTotals[j]) / n)),
  );
}
