import { tableDrivers } from "./drivers";
import { forEachWindowTable, type PreparedScan } from "./engine";
import { isoDate } from "./dates";
import type { PreparedRates } from "./rates";
import { analyzeTable, driverCritical, type TableAnalysis } from "./stats";
import type { Driver, RateWindow, ScanWindow } from "./types";
import { testWindow, type WindowState } from "./window-test";

/** Everything the review screens and exports show for one window. */
export interface WindowDetail {
  /** The window as the scan reports it (adjusted p, flag, drivers). */
  window: ScanWindow;
  /** Labels of the tested table: kept rows, and kept (or pooled) columns. */
  rows: string[];
  columns: string[];
  /** The tested table (after dropping empty rows/columns, and pooling if applied); empty when not testable. */
  observed: number[][];
  /** lib/stats analyzeTable of the tested table: expected, residuals, contributions, G², p, V, expected-count check. */
  analysis: TableAnalysis | null;
  /** Bonferroni two-sided critical |adjusted residual| for the table's r·c cells at the comparison's α. */
  critical: number | null;
  /** Cells beyond that critical value, flagged or not. */
  drivers: Driver[];
  /** Defects per unit per group, with the rate test and u-chart limits; null when the scan has no units. */
  rates: RateWindow | null;
}

/**
 * The full analysis of window k of a prepared scan: recomputes its table (one window's
 * sum) and runs lib/stats's analyzeTable on it. `finished` are the windows of the last
 * across-window pass, for the adjusted p and flag.
 *
 * Cost: O(windowDays · groups · categories) plus one analyzeTable.
 *
 * @example
 * windowDetailOf(scan, finishScan(scan).windows, null, 0).observed; // the first window's kept table
 */
export function windowDetailOf(
  scan: PreparedScan,
  finished: readonly ScanWindow[],
  rates: PreparedRates | null,
  k: number,
): WindowDetail {
  let state: WindowState | null = null;
  const options = { ...scan.test, keepTable: true };
  forEachWindowTable(scan, k, k + 1, (_, sums, rows) => {
    const start = scan.starts[k];
    state = testWindow(sums, rows, scan.cube.categories, isoDate(start), isoDate(start + scan.windowDays - 1), options);
  });
  const tested = state as unknown as WindowState;
  const table = tested.table;
  return {
    window: finished[k],
    rows: tested.rowLabels,
    columns: tested.columnLabels,
    observed: table ?? [],
    analysis: table ? analyzeTable(table) : null,
    critical: table ? driverCritical(table.length, table[0].length, scan.test.alpha) : null,
    drivers: table ? tableDrivers(table, tested.rowLabels, tested.columnLabels, scan.test.alpha) : [],
    rates: rates ? rates.states[k] : null,
  };
}
