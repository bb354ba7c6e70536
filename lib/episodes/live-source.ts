import { getComparison, listComparisons, type ComparisonRecord } from "@/lib/db/comparisons";
import { db } from "@/lib/db/client";
import type { ScanWindow } from "@/lib/monitor/types";
import { runComparison, windowTable, type WindowTable } from "@/lib/review/source";
import type { EpisodeSource } from "./source";
import type { ComparisonInfo, WindowAnalysis } from "./types";

/**
 * The episode source the app uses: saved comparisons from lib/db/comparisons, scans and
 * window tables from the cached scan source the review screens use, so an episode shows
 * the same numbers as its comparison's timeline and window pages.
 */

export function comparisonInfoOf(c: ComparisonRecord): ComparisonInfo {
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

async function record(idOrCode: number | string): Promise<ComparisonRecord | null> {
  let code = idOrCode;
  if (typeof idOrCode === "number") {
    const row = await db().comparison.findUnique({ where: { id: idOrCode }, select: { code: true } });
    if (!row) return null;
    code = row.code;
  }
  return getComparison(String(code));
}

async function recordOf(info: ComparisonInfo): Promise<ComparisonRecord> {
  const c = await record(info.code);
  if (!c) throw new RangeError(`No saved comparison ${info.code}.`);
  return c;
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

export function windowAnalysisOf(t: WindowTable): WindowAnalysis {
  const w = t.window;
  const a = t.analysis;
  return {
    start: w.start,
    end: w.end,
    n: w.n,
    testable: w.testable,
    reason: w.reason,
    rows: t.rows,
    columns: t.columns,
    observed: t.observed,
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
    drivers: w.drivers,
    critical: t.critical,
    pooled: w.pooled,
    expectedCounts: w.expectedCounts,
    monteCarlo: w.monteCarlo,
  };
}

export const liveSource: EpisodeSource = {
  async comparison(idOrCode) {
    const c = await record(idOrCode);
    return c ? comparisonInfoOf(c) : null;
  },
  async comparisons() {
    return (await listComparisons()).map(comparisonInfoOf);
  },
  async scan(info) {
    const run = runComparison(await recordOf(info));
    return { windows: run.windows, episodes: run.episodes };
  },
  async window(info, start) {
    const c = await recordOf(info);
    const table = windowTable(c, start);
    if (table) return windowAnalysisOf(table);
    const w = runComparison(c).windows.find((x) => x.start === start);
    return w ? untestableAnalysis(w) : null;
  },
};
