import { db } from "@/lib/db/client";
import { ensureDefaultComparisons, listComparisons, toRecord, type ComparisonSettings } from "@/lib/db/comparisons";
import { runComparison, windowDetail, type ComparisonWindowDetail } from "@/lib/monitor/service";
import type { ScanWindow } from "@/lib/monitor/types";
import type { EpisodeSource } from "./source";
import type { ComparisonInfo, WindowAnalysis } from "./types";

/**
 * The episode source the app uses: the scan service of lib/monitor (kept results, late
 * entries patched in) for scans and full window analyses, and the saved comparisons of
 * lib/db/comparisons (which creates the defaults on first use).
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

export const liveSource: EpisodeSource = {
  async comparison(idOrCode) {
    await ensureDefaultComparisons();
    const row = await db().comparison.findUnique({ where: typeof idOrCode === "number" ? { id: idOrCode } : { code: idOrCode } });
    return row ? comparisonInfoOf(toRecord(row)) : null;
  },
  async comparisons() {
    return (await listComparisons()).map(comparisonInfoOf);
  },
  async scan(info) {
    const run = await runComparison(info.id);
    if (!run) throw new RangeError(`No saved comparison ${info.code}.`);
    return { windows: run.windows, episodes: run.episodes };
  },
  async window(info, start) {
    const detail = await windowDetail(info.id, start);
    return detail ? windowAnalysisOf(detail) : null;
  },
};
