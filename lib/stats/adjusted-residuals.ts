import { validateTable } from "./validate-table";

/**
 * Adjusted (standardized) residual of one cell:
 * (O − E) / √(E · (1 − R/n) · (1 − C/n)).
 *
 * Method: Haberman, S. J. 1973, "The analysis of residuals in cross-classified
 * tables", Biometrics 29:205–220. Dividing by the estimated standard error of
 * O − E makes the residual approximately standard normal under independence,
 * so |value| > 2 or 3 (or a Bonferroni value, see driverCriticalValue) flags
 * a cell. Equals R's chisq.test(...)$stdres.
 *
 * @example
 * adjustedResidual(3, 2, 4, 4, 8); // 1.4142135623730951  (tea-tasting table, cell [0][0])
 */
export function adjustedResidual(
  observed: number,
  expected: number,
  rowTotal: number,
  columnTotal: number,
  n: number,
): number {
  return (observed - expected) / Math.sqrt(expected * (1 - rowTotal / n) * (1 - columnTotal / n));
}

/**
 * Adjusted residuals of every cell of a table (see {@link adjustedResidual}).
 *
 * Validates the table first (see {@link validateTable}). Cost: O(r·c).
 *
 * @example
 * adjustedResiduals([[762, 327, 468], [484, 239, 477]])[0][0]; // 4.502053521…  (Agresti 2007, Table 2.5)
 */
export function adjustedResiduals(observed: readonly (readonly number[])[]): number[][] {
  const { n, rowTotals, columnTotals } = validateTable(observed);
  return observed.map((row, i) =>
    row.map((o, j) =>
      adjustedResidual(o, (rowTotals[i] * columnTotals[j]) / n, rowTotals[i], columnTotals[j], n),
    ),
  );
}
