import type { Driver, EpisodeDriver, ExpectedSummary, MonteCarloRecord, PooledColumns, TestMethod } from "@/lib/monitor/types";

/**
 * Shapes of the flagged-period records as the pages, exports and snapshots see them.
 * Snapshots are stored as JSON, so everything here is plain data.
 */

/** The configuration a comparison was scanned with (what a meeting needs to repeat it). */
export interface ComparisonConfig {
  compare: string;
  lines: string[] | null;
  shifts: string[] | null;
  categories: string[] | null;
  windowDays: number;
  stepDays: number;
  alpha: number;
  adjust: string;
  minEffect: number;
  sparse: string;
  historyWeeks: number;
}

export interface ComparisonInfo {
  id: number;
  code: string;
  name: string;
  compare: string;
  config: ComparisonConfig;
}

/** One window's full table analysis: the tested table and everything the test says about it. */
export interface WindowAnalysis {
  start: string;
  end: string;
  n: number;
  testable: boolean;
  reason: string | null;
  /** Row labels of the tested table (lines, shifts, or current/baseline). */
  rows: string[];
  /** Column labels of the tested table (categories, or pooled columns). */
  columns: string[];
  observed: number[][];
  expected: number[][];
  adjustedResiduals: number[][];
  contributions: number[][];
  chiSquare: number | null;
  df: number | null;
  pValue: number | null;
  adjustedPValue: number | null;
  method: TestMethod | null;
  cramersV: number | null;
  cramersVCorrected: number | null;
  flagged: boolean;
  drivers: Driver[];
  /** Critical |adjusted residual| for naming a driver cell in this table (null when not testable). */
  critical: number | null;
  pooled: PooledColumns | null;
  expectedCounts: ExpectedSummary | null;
  /**
   * How the Monte Carlo p was drawn. Snapshots taken before sequential stopping (a full
   * 10,000-table run every time) hold replicates, seed and standardError only.
   */
  monteCarlo: (Pick<MonteCarloRecord, "replicates" | "seed" | "standardError"> & Partial<MonteCarloRecord>) | null;
}

/** What was seen: the analysis stored with an episode when raised and at each status change. */
export interface EpisodeAnalysis {
  version: 1;
  comparison: { id: number; code: string; name: string; compare: string };
  config: ComparisonConfig;
  episode: {
    start: string;
    end: string;
    windows: number;
    peakStart: string;
    peakEnd: string;
    minAdjustedP: number;
    drivers: EpisodeDriver[];
  };
  /** The peak window's table analysis (null only if the window could not be analysed). */
  peak: WindowAnalysis | null;
}

export interface Actor {
  id: number | null;
  name: string;
}
