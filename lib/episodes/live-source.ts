import { db } from "@/lib/db/client";
import { ensureDefaultComparisons, listComparisons, toRecord, type ComparisonSettings } from "@/lib/db/comparisons";
import { runComparison, scanProblem, windowDetail, type ComparisonWindowDetail, type RunOptions } from "@/lib/monitor/service";
import type { ScanWindow } from "@/lib/monitor/types";
import type { EpisodeSource } from "./source";
import type { ComparisonInfo, WindowAnalysis } from "./types";

/**
 * The episode source the app uses: the scan service of lib/monitor (kept results, late
 * entries patched in) for scans and full window analyses, and the saved comparisons of
 * lib/db/comparisons (which creates the defaults on first use). `liveSource` reads fresh
 * scans (every committed entry in: the records, their snapshots and exports follow the
 * data exactly); the header's periodic count uses {@link liveSourceWith} and the pages'
 * staleness bound, so it does not patch every scan on every page. A comparison that names a line, shift or
 * category that no longer exists is left out of the sweep over all comparisons (its
 * records stay as they were, not marked gone) until its settings are changed.
 */

type SavedLike = ComparisonSettings & { id: number; code: string; compare: ComparisonInfo["compare"] };

export function comparisonInfoOf(c: SavedLike): ComparisonInfo {
  return {
    id: c.id,
    code: c.code,
    name: c.name,
    compare: c.compare,
    config: {
      compare: c.compare,
      lines: c.lines,
      shifts: c.shifts,
      categories: c.categories,
      windowDays: c.windowDays,
      stepDays: c.stepDays,
      alpha: c.alpha,
      adjust: c.adjust,
      minEffect: c.minEffect,
      sparse: c.sparse,
      historyWeeks: c.historyWeeks,
    },
  };
}

/** A window the scan could not test, as an analysis with empty tables. */
function untestableAnalysis(w: ScanWindow): WindowAnalysis {
  return {
    start: w.start,
    end: w.end,
    n: w.n,
    testable: false,
    reason: w.reason,
    rows: [],
    columns: [],
    observed: [],
    expected: [],
    adjustedResiduals: [],
    contributions: [],
    chiSquare: null,
    df: null,
    pValue: null,
    adjustedPValue: null,
    method: null,
    cramersV: null,
    cramersVCorrected: null,
    flagged: false,
    drivers: [],
    critical: null,
    pooled: null,
    expectedCounts: null,
    monteCarlo: null,
  };
}

/** A window's full analysis from the scan service. */
export function windowAnalysisOf(d: ComparisonWindowDetail): WindowAnalysis {
  const w = d.window;
  const a = d.analysis;
  if (!a || !w.testable) return untestableAnalysis(w);
  return {
    start: w.start,
    end: w.end,
    n: w.n,
    testable: true,
    reason: w.reason,
    rows: d.rows,
    columns: d.columns,
    observed: d.observed,
    expected: a.expected,
    adjustedResiduals: a.adjustedResiduals,
    contributions: a.contributions,
    chiSquare: w.chiSquare,
    df: w.df,
    pValue: w.pValue,
    adjustedPValue: w.adjustedPValue,
    method: w.method,
    cramersV: Number.isFinite(a.cramersV) ? a.cramersV : null,
    cramersVCorrected: w.cramersVCorrected,
    flagged: w.flagged,
    // Cells beyond the critical value, whether or not the window flags.
    drivers: d.drivers,
    critical: d.critical,
    pooled: w.pooled,
    expectedCounts: w.expectedCounts,
    monteCarlo: w.monteCarlo,
  };
}

/**
 * The app's episode source reading scans with the given freshness (see RunOptions).
 *
 * @example
 * await syncAllComparisons(liveSourceWith({ maxLagMs: PAGE_MAX_LAG_MS })); // records from kept scans up to 15 s behind
 */
export function liveSourceWith(options: RunOptions): EpisodeSource {
  return {
    async comparison(idOrCode) {
      await ensureDefaultComparisons();
      const row = await db().comparison.findUnique({ where: typeof idOrCode === "number" ? { id: idOrCode } : { code: idOrCode } });
      return row ? comparisonInfoOf(toRecord(row)) : null;
    },
    async comparisons() {
      return (await listComparisons()).filter((c) => scanProblem(c.id) === null).map(comparisonInfoOf);
    },
    async scan(info) {
      const run = await runComparison(info.id, options);
      if (!run) throw new RangeError(`No saved comparison ${info.code}.`);
      if (run.problem) throw new RangeError(run.problem);
      return { windows: run.windows, episodes: run.episodes };
    },
    async window(info, start) {
      const detail = await windowDetail(info.id, start, options);
      return detail ? windowAnalysisOf(detail) : null;
    },
  };
}

/** The episode source with fresh scans (records, snapshots, exports). */
export const liveSource: EpisodeSource = liveSourceWith({});
