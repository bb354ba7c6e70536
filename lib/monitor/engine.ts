import type { Cube } from "./cube";
import { isoDate } from "./dates";
import { finalizeScan, type FinalizeOptions } from "./finalize";
import { SlidingSum } from "./sliding-sum";
import type { ScanResult } from "./types";
import { testWindow, type WindowState, type WindowTestOptions } from "./window-test";

/**
 * A scan kept in a form that can be partly redone: the daily cube, the window plan and
 * every window's unadjusted result. The one-shot scans build it and finish it at once;
 * the service keeps it and, when late data arrive, patches the cube, retests only the
 * windows that cover the changed days and re-runs the cheap across-window pass.
 */
export interface PreparedScan {
  /** "groups": rows are the cube's groups; "history": current window vs the baseline before it. */
  kind: "groups" | "history";
  cube: Cube;
  starts: Int32Array;
  windowDays: number;
  /** Length of the baseline before each window (history scans), else 0. */
  baselineDays: number;
  test: WindowTestOptions;
  finalize: FinalizeOptions;
  states: WindowState[];
}

/**
 * Row labels of a history scan's tables.
 *
 * @example
 * HISTORY_ROWS; // ["current", "baseline"]
 */
export const HISTORY_ROWS = ["current", "baseline"];

/**
 * Tests every window of the plan (see testWindow), moving one sliding sum along.
 * Cost: O(windows · groups · categories) for asymptotic windows.
 *
 * @example
 * prepareScan({ kind: "groups", cube, starts, windowDays: 7, baselineDays: 0, test, finalize }).states.length; // starts.length
 */
export function prepareScan(scan: Omit<PreparedScan, "states">): PreparedScan {
  const prepared: PreparedScan = { ...scan, states: [] };
  prepared.states = testRange(prepared, 0, scan.starts.length);
  return prepared;
}

/**
 * Retests windows lo … hi − 1 in place (after the cube changed under them).
 * Cost: O((hi − lo + windowDays) · groups · categories).
 *
 * @example
 * retestWindows(scan, 40, 47); // the 7 windows covering one corrected day
 */
export function retestWindows(scan: PreparedScan, lo: number, hi: number): void {
  const fresh = testRange(scan, lo, hi);
  for (let k = lo; k < hi; k++) scan.states[k] = fresh[k - lo];
}

/**
 * The across-window pass (adjustment, flags, drivers, episodes) over the current states;
 * see finalizeScan.
 *
 * @example
 * finishScan(prepareWindowScan(rows, config)!); // deep-equals scanWindows(rows, config)
 */
export function finishScan(scan: PreparedScan): ScanResult {
  return finalizeScan(scan.states, scan.finalize);
}

/**
 * Calls `visit` with the rows × categories sums of every window in lo … hi − 1, moved
 * incrementally (for history: [current; baseline], two sliding sums). `visit` must not
 * keep `sums`: the buffer is reused. Cost: O((hi − lo) · width) plus the visits.
 *
 * @example
 * forEachWindowTable(scan, 0, 1, (k, sums, rows) => console.log(rows, sums.length)); // ["L1", "L2"] 4 for a 2 × 2 cube
 */
export function forEachWindowTable(
  scan: Pick<PreparedScan, "kind" | "cube" | "starts" | "windowDays" | "baselineDays">,
  lo: number,
  hi: number,
  visit: (k: number, sums: Float64Array, rows: string[]) => void,
): void {
  const current = new SlidingSum(scan.cube, scan.windowDays);
  if (scan.kind === "groups") {
    for (let k = lo; k < hi; k++) {
      current.moveTo(scan.starts[k]);
      visit(k, current.sums, scan.cube.groups);
    }
    return;
  }
  // History: the cube has one group (the line); stack [current; baseline] into a 2-row table.
  const baseline = new SlidingSum(scan.cube, scan.baselineDays);
  const columns = scan.cube.categories.length;
  const table = new Float64Array(2 * columns);
  for (let k = lo; k < hi; k++) {
    current.moveTo(scan.starts[k]);
    baseline.moveTo(scan.starts[k] - scan.baselineDays);
    table.set(current.sums, 0);
    table.set(baseline.sums, columns);
    visit(k, table, HISTORY_ROWS);
  }
}

function testRange(scan: PreparedScan, lo: number, hi: number): WindowState[] {
  const out: WindowState[] = [];
  const categories = scan.cube.categories;
  forEachWindowTable(scan, lo, hi, (k, sums, rows) => {
    const start = scan.starts[k];
    out.push(testWindow(sums, rows, categories, isoDate(start), isoDate(start + scan.windowDays - 1), scan.test));
  });
  return out;
}
