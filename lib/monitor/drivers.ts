import { analyzeTable, driverCritical } from "./stats";
import type { Driver } from "./types";

/**
 * The cells that drive a flagged window: Haberman's adjusted residual
 * (O − E)/√(E (1 − R/n)(1 − C/n)), from lib/stats's analyzeTable, beyond the Bonferroni
 * two-sided normal critical value for the table's r·c cells at level α
 * (lib/stats driverCriticalValue), so that with no real difference the chance of naming
 * any cell is at most α. Sorted by |adjusted residual|, largest first; negative
 * residuals (fewer than expected) are kept, since they are part of the same shift in mix.
 *
 * Cost: one analyzeTable, O(r·c), plus a sort of the driving cells.
 *
 * @example
 * tableDrivers([[90, 10], [50, 50]], ["L1", "L2"], ["A", "B"], 0.05)[0]; // { row: "L1", category: "B", observed: 10, adjustedResidual: -6.32…, … }
 */
export function tableDrivers(table: number[][], rows: string[], columns: string[], alpha: number): Driver[] {
  const a = analyzeTable(table);
  const critical = driverCritical(a.rows, a.columns, alpha);
  const out: Driver[] = [];
  for (let i = 0; i < a.rows; i++) {
    for (let j = 0; j < a.columns; j++) {
      const r = a.adjustedResiduals[i][j];
      if (!(Math.abs(r) > critical)) continue;
      const observed = table[i][j];
      const expected = a.expected[i][j];
      out.push({
        row: rows[i],
        category: columns[j],
        observed,
        expected,
        ratio: observed / expected,
        adjustedResidual: r,
        contribution: a.contributions[i][j],
      });
    }
  }
  // Ties broken by position so the order never depends on the sort's stability.
  return out.sort((x, y) => Math.abs(y.adjustedResidual) - Math.abs(x.adjustedResidual));
}
