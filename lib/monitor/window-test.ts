import { seedFrom } from "./seed";
import { checkExpectedCounts, chiSquareUpperTail, cramersVCorrected, exactIfFeasible, monteCarlo, poolColumns } from "./stats";
import { keptTable, summarizeTable, type TableSummary } from "./table-summary";
import type { Driver, ExpectedSummary, PooledColumns, ScanWindow, SparseMode, TestMethod } from "./types";

/**
 * The cap on Monte Carlo tables for windows too large for the exact test (p resolution
 * 1/10,001, standard error ≤ 0.005 when the cap is drawn).
 *
 * @example
 * MONTE_CARLO_REPLICATES; // 10000
 */
export const MONTE_CARLO_REPLICATES = 10_000;

/**
 * h of the sequential Monte Carlo stop (Besag & Clifford 1991, Biometrika 78:301–304):
 * a window's drawing ends at the h-th table at least as extreme as the observed one,
 * with p = h/L for L tables drawn, or at the cap with p = (1 + hits)/(cap + 1). Valid
 * either way (P(p ≤ u) ≤ u under the null), so BH across windows stays valid.
 *
 * Why 100: a window flags under BH when its p is at most α·k/m (k-th smallest of m
 * windows); a 2-year daily scan has m ≈ 724, so at α = 0.05 the thresholds are
 * 0.05·k/724. A window whose p is below 0.007 reaches 100 hits within 10,000 draws with
 * probability below 0.1% (binomial mean 70, sd 8.3), so there it gets exactly the
 * full run's p (same seed, same draws): every threshold with k ≤ 100 sees unchanged
 * p-values. Where the drawing stops (p above about h/cap = 0.01), the relative
 * standard error is about 1/√h = 10% — what 10,000 draws give at p = 0.01 — and only
 * a scan with more than a fifth of its windows flagged has thresholds up there.
 * h = 50 (14%) would halve the cost again; h = 500 (no loss of precision anywhere
 * below α = 0.05) would cost 3.5 times as much. Cost: for p uniform (quiet windows)
 * about h(1 + ln(cap/h)) ≈ 560 draws instead of 10,000 (585 measured on the
 * benchmark plant's 8,688 sparse windows).
 *
 * @example
 * MONTE_CARLO_STOP_AFTER_HITS; // 100
 */
export const MONTE_CARLO_STOP_AFTER_HITS = 100;

/** A window's public result plus what the across-window pass still needs from it. */
export interface WindowState {
  window: ScanWindow;
  /** The tested table (pooled, if pooling applied); kept only while the window can flag (raw p ≤ α). */
  table: number[][] | null;
  rowLabels: string[];
  columnLabels: string[];
  /** Drivers, computed once the window flags; reused across re-adjustments. */
  drivers: Driver[] | null;
}

export interface WindowTestOptions {
  sparse: SparseMode;
  alpha: number;
  families?: Record<string, string>;
  /** Identifies the comparison in the Monte Carlo seed ("line", "shift", "history:L3"). */
  seedKey: string;
  /** Plural noun for the rows, for reasons ("lines", "shifts", "periods"). */
  rowNoun: string;
  /** Keep the tested table whatever the p-value (window detail). */
  keepTable?: boolean;
}

interface Tested {
  chiSquare: number;
  df: number;
  pValue: number;
  method: TestMethod;
  monteCarlo: ScanWindow["monteCarlo"];
  table: number[][] | null;
  columns: string[];
  pooled: PooledColumns | null;
  n: number;
  rows: number;
}

/**
 * Tests one window's rows × categories table (flat sums) for homogeneity.
 *
 * Method: drop all-zero rows and columns; Pearson's X² with (r−1)(c−1) df from the lean
 * pass. If Cochran's rule holds (or sparse = "asymptotic") p is the χ² upper tail;
 * otherwise, per `sparse`: "auto"/"exact" — the Fisher–Freeman–Halton exact test when
 * lib/stats deems the table feasible, else Monte Carlo; "monte-carlo" — sequential Monte
 * Carlo (stopped at the 100th table at least as extreme, at most 10,000 tables) seeded
 * from the window, so reruns agree; "pool" — sparse categories
 * merged (family first, then smallest), asymptotic if the pooled table meets Cochran,
 * else as "auto" on the pooled table.
 *
 * Cost: O(r·c) for a table meeting Cochran's rule; exact and Monte Carlo cost what
 * lib/stats says (Monte Carlo: L ≤ 10,000 tables, about 100/p of them, each O(n) or O(r·c)).
 *
 * @example
 * testWindow(Float64Array.from([10, 20, 30, 40]), ["L1", "L2"], ["A", "B"], "2026-01-01", "2026-01-07", options).window.chiSquare; // 0.7936507936507936
 */
export function testWindow(
  sums: Float64Array,
  groups: string[],
  categories: string[],
  start: string,
  end: string,
  options: WindowTestOptions,
): WindowState {
  const summary = summarizeTable(sums, groups.length, categories.length);
  const window = baseWindow(summary, groups, categories, start, end);
  const rowLabels = window.groups;
  const untestable = reasonUntestable(summary, window, options.rowNoun);
  if (untestable) {
    window.reason = untestable;
    return { window, table: null, rowLabels, columnLabels: window.categories, drivers: null };
  }
  const check = checkExpectedCounts(summary.rowTotals, summary.columnTotals);
  window.expectedCounts = expectedSummary(check);
  const tested =
    check.cochran || options.sparse === "asymptotic"
      ? asymptotic(summary, null, window.categories, null)
      : sparseTest(keptTable(sums, categories.length, summary), window, options);
  Object.assign(window, {
    testable: true,
    chiSquare: tested.chiSquare,
    df: tested.df,
    pValue: tested.pValue,
    method: tested.method,
    monteCarlo: tested.monteCarlo,
    pooled: tested.pooled,
    cramersVCorrected: finiteOrNull(cramersVCorrected(tested.chiSquare, tested.n, tested.rows, tested.columns.length)),
  });
  // Adjusted p ≥ raw p for BH, Bonferroni and none, so only raw p ≤ α can ever flag.
  const mayFlag = options.keepTable === true || tested.pValue <= options.alpha;
  const table = mayFlag ? (tested.table ?? keptTable(sums, categories.length, summary)) : null;
  return { window, table, rowLabels, columnLabels: tested.columns, drivers: null };
}

function baseWindow(s: TableSummary, groups: string[], categories: string[], start: string, end: string): ScanWindow {
  return {
    start,
    end,
    n: s.n,
    groups: pick(groups, s.keptRows),
    categories: pick(categories, s.keptColumns),
    droppedGroups: omit(groups, s.keptRows),
    droppedCategories: omit(categories, s.keptColumns),
    testable: false,
    reason: null,
    chiSquare: null,
    df: null,
    pValue: null,
    method: null,
    monteCarlo: null,
    pooled: null,
    expectedCounts: null,
    adjustedPValue: null,
    cramersVCorrected: null,
    flagged: false,
    drivers: [],
  };
}

// Most windows keep every code: share the caller's array instead of copying it.
function pick(codes: string[], kept: number[]): string[] {
  return kept.length === codes.length ? codes : kept.map((i) => codes[i]);
}

function omit(codes: string[], kept: number[]): string[] {
  if (kept.length === codes.length) return NO_CODES;
  const keep = new Set(kept);
  return codes.filter((_, i) => !keep.has(i));
}

const NO_CODES: string[] = [];

function reasonUntestable(s: TableSummary, w: ScanWindow, rowNoun: string): string | null {
  if (s.n === 0) return "no defects recorded in the window";
  if (s.keptRows.length < 2) return `fewer than 2 ${rowNoun} with defects in the window (${w.groups.join(", ")})`;
  if (s.keptColumns.length < 2) return `fewer than 2 categories with defects in the window (${w.categories.join(", ")})`;
  return null;
}

function expectedSummary(check: { minExpected: number; fractionBelow5: number; cochran: boolean }): ExpectedSummary {
  return { minExpected: check.minExpected, fractionBelow5: check.fractionBelow5, cochran: check.cochran };
}

function asymptotic(s: TableSummary, table: number[][] | null, columns: string[], pooled: PooledColumns | null): Tested {
  return {
    chiSquare: s.chiSquare,
    df: s.df,
    pValue: chiSquareUpperTail(s.chiSquare, s.df),
    method: "asymptotic",
    monteCarlo: null,
    table,
    columns,
    pooled,
    n: s.n,
    rows: s.keptRows.length,
  };
}

function sparseTest(table: number[][], window: ScanWindow, options: WindowTestOptions): Tested {
  if (options.sparse === "pool") {
    const pooled = poolColumns(table, window.categories, options.families);
    if (pooled && pooled.columns.length >= 2) {
      const flat = Float64Array.from(pooled.table.flat());
      const s = summarizeTable(flat, pooled.table.length, pooled.columns.length);
      const info = { columns: pooled.columns, merged: pooled.merged };
      const check = checkExpectedCounts(s.rowTotals, s.columnTotals);
      if (check.cochran) return asymptotic(s, pooled.table, pooled.columns, info);
      return resample(pooled.table, s, pooled.columns, info, window, options);
    }
  }
  const s = summarizeTable(Float64Array.from(table.flat()), table.length, table[0].length);
  return resample(table, s, window.categories, null, window, options);
}

// Exact when feasible (unless Monte Carlo was asked for), else seeded Monte Carlo.
function resample(
  table: number[][],
  s: TableSummary,
  columns: string[],
  pooled: PooledColumns | null,
  window: ScanWindow,
  options: WindowTestOptions,
): Tested {
  const common = { chiSquare: s.chiSquare, df: s.df, table, columns, pooled, n: s.n, rows: table.length };
  if (options.sparse !== "monte-carlo") {
    const exact = exactIfFeasible(table);
    if (exact !== null) return { ...common, pValue: exact, method: "exact", monteCarlo: null };
  }
  const seed = seedFrom(`${options.seedKey}|${window.start}|${window.end}`);
  const { pValue, ...record } = monteCarlo(table, MONTE_CARLO_REPLICATES, seed, MONTE_CARLO_STOP_AFTER_HITS);
  return { ...common, pValue, method: "monte-carlo", monteCarlo: record };
}

function finiteOrNull(x: number): number | null {
  return Number.isFinite(x) ? x : null;
}
