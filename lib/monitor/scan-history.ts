import { resolveHistoryConfig } from "./config";
import { bucketTallies } from "./cube";
import { dayNumber } from "./dates";
import { finishScan, prepareScan, type PreparedScan } from "./engine";
import { windowStarts } from "./plan";
import type { HistoryConfig, ScanResult, TallyRow } from "./types";

/**
 * One line against its own recent past: each window ("current") is tested against the
 * `historyWeeks · 7` days just before it ("baseline") as a 2 × categories table — a
 * chi-square test of homogeneity over time. The first window starts once a full
 * baseline exists (first date + historyWeeks · 7 days), or on `from` when given (its
 * baseline then uses the data before `from`). Same per-window methods,
 * adjustment, flags, drivers (rows "current" / "baseline") and episodes as
 * {@link scanWindows}; consecutive windows share most of their baseline, a positive
 * dependence under which BH stays valid (Benjamini & Yekutieli 2001).
 *
 * A baseline that itself contains an earlier change makes the window after it look
 * different too: read episodes in order.
 *
 * Cost: two sliding sums (current, baseline) moved incrementally, O(categories) per window.
 *
 * @example
 * // test/monitor/history.test.ts plant, seed 6: L2 makes 3× its C06 from 2026-04-06 to 04-26
 * scanHistory(rows, { line: "L2", windowDays: 7, stepDays: 1, historyWeeks: 4, alpha: 0.05, adjust: "bh", minEffect: 0 })
 *   .episodes[0].drivers[0]; // { row: "current", category: "C06", windows: 14, adjustedResidual: 6.37… }
 * // (a second episode follows, from 04-27, with C06 *below* baseline: the change is still in the baseline)
 */
export function scanHistory(rows: readonly TallyRow[], config: HistoryConfig): ScanResult {
  const prepared = prepareHistoryScan(rows, config);
  return prepared ? finishScan(prepared) : { windows: [], episodes: [] };
}

/**
 * The prepared (unfinished) form of {@link scanHistory}, for callers that retest windows;
 * null when no row is in range. Cost as scanHistory without the across-window pass.
 *
 * @example
 * prepareHistoryScan(rows, config)?.baselineDays; // 28 for historyWeeks: 4
 */
export function prepareHistoryScan(rows: readonly TallyRow[], config: HistoryConfig): PreparedScan | null {
  const c = resolveHistoryConfig(config);
  const baselineDays = c.historyWeeks * 7;
  const cube = bucketTallies(rows, {
    groupBy: "line",
    lines: [c.line],
    shifts: c.shifts,
    categories: c.categories,
    // With `from`, the first window starts on it and its baseline reaches back before it.
    fromDay: c.from === undefined ? undefined : dayNumber(c.from) - baselineDays,
    toDay: c.to === undefined ? undefined : dayNumber(c.to),
  });
  if (!cube) return null;
  return prepareScan({
    kind: "history",
    cube,
    starts: windowStarts(cube.firstDay, cube.firstDay + cube.days - 1, c.windowDays, c.stepDays, baselineDays),
    windowDays: c.windowDays,
    baselineDays,
    test: { sparse: c.sparse, alpha: c.alpha, families: c.families, seedKey: `history:${c.line}`, rowNoun: "periods" },
    finalize: c,
  });
}
