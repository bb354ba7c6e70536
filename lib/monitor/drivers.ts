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
 * tableDrivers([[90, 10], [50, 50]], ["L1", "L2"], ["A", "B"], 0.05)[0];
 * // { row: "L2", category: "B", observed: 50, expected: 30, ratio: 1.67, adjustedResidual: 6.172…, contribution: 0.35 }
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
  // Equal residuals (mirrored cells) then by share of X²: the bigger cell tells more.
  return out.sort((x, y) => byMagnitudeThenExcess(x.adjustedResidual, y.adjustedResidual) || y.contribution - x.contribution);
}

/**
 * Order of residuals: larger |r| first; equal magnitudes (a 2-row table mirrors every
 * residual, up to rounding) put the excess (r > 0) first, since "more than expected" is
 * where a root-cause meeting starts.
 *
 * @example
 * [4, -5, 5].sort(byMagnitudeThenExcess); // [5, -5, 4]
 */
export function byMagnitudeThenExcess(a: number, b: number): number {
  const d = Math.abs(b) - Math.abs(a);
  if (Math.abs(d) > 1e-9 * Math.max(Math.abs(a), Math.abs(b))) return d;
  return Number(b > 0) - Number(a > 0);
}
