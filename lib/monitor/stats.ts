/**
 * The one place lib/monitor touches lib/stats: re-exports what the scan calls and adapts
 * the sparse-table helpers to the small shapes the window test needs, so an API change
 * in lib/stats is absorbed here. No statistic is computed in this file.
 */
import {
  adjustPValues,
  analyzeTable,
  checkExpectedCounts,
  chiSquareUpperTail,
  cramersVCorrected,
  driverCriticalValue,
  exactIsFeasible,
  exactPValue,
  monteCarloPValue,
  poolSparseCategories,
  rateHomogeneity,
  type TableAnalysis,
} from "@/lib/stats";
import type { MonteCarloRecord } from "./types";

export { analyzeTable, chiSquareUpperTail, checkExpectedCounts, cramersVCorrected, type TableAnalysis };

/**
 * Step budget of the exact test inside a scan: a tenth of lib/stats's default, because a
 * scan may hold hundreds of sparse windows and Monte Carlo answers a table that needs
 * more in ~0.1 s.
 *
 * @example
 * EXACT_MAX_STEPS; // 2000000
 */
export const EXACT_MAX_STEPS = 2_000_000;

/**
 * Fisher–Freeman–Halton exact p (lib/stats exactPValue), or null when lib/stats deems
 * the table too large for {@link EXACT_MAX_STEPS} or gives up on it.
 *
 * @example
 * exactIfFeasible([[3, 1], [1, 3]]); // 0.4857142857142857
 */
export function exactIfFeasible(table: number[][]): number | null {
  if (!exactIsFeasible(table, { maxSteps: EXACT_MAX_STEPS }).feasible) return null;
  try {
    return exactPValue(table, { maxSteps: EXACT_MAX_STEPS });
  } catch (error) {
    // The feasibility bound is conservative but not a guarantee: over budget → Monte Carlo.
    if (error instanceof RangeError) return null;
    throw error;
  }
}

/**
 * Monte Carlo p-value (lib/stats monteCarloPValue: random tables with the observed
 * margins, (1 + hits)/(B + 1)), with sequential stopping when `stopAfterHits` is given
 * (Besag & Clifford 1991: stopped at the h-th table at least as extreme, p = h/L), in
 * the shape ScanWindow.monteCarlo stores plus the p-value.
 *
 * @example
 * monteCarlo([[3, 1], [1, 3]], 10_000, 1, 100).replicates; // 181  (p = 100/181 ≈ 0.55)
 */
export function monteCarlo(
  table: number[][],
  replicates: number,
  seed: number,
  stopAfterHits?: number,
): MonteCarloRecord & { pValue: number } {
  const r = monteCarloPValue(table, { replicates, seed, stopAfterHits });
  return {
    pValue: r.pValue,
    replicates: r.replicates,
    // The caller's seed as given (seedFrom's unsigned 32 bits); the generator sees it | 0.
    seed,
    standardError: r.standardError,
    hits: r.hits,
    stoppedEarly: r.stoppedEarly,
    stopAfterHits: r.stopAfterHits,
    maxReplicates: r.maxReplicates,
  };
}

/**
 * Sparse categories pooled until Cochran's rule holds (lib/stats poolSparseCategories:
 * family first, then smallest): the pooled table, its column labels and what went where.
 * Null when pooling cannot reach the rule before two columns are left (the caller then
 * tests the unpooled table exactly or by Monte Carlo instead).
 *
 * @example
 * poolColumns([[20, 30, 1, 2], [25, 28, 0, 3]], ["A", "B", "C", "D"], undefined)?.columns; // ["A", "B", "Other (pooled)"]
 */
export function poolColumns(
  table: number[][],
  categories: string[],
  families: Record<string, string> | undefined,
): { table: number[][]; columns: string[]; merged: { label: string; members: string[] }[] } | null {
  const pooled = poolSparseCategories(table, { columnLabels: categories, families, rule: "cochran" });
  if (!pooled.ruleSatisfied) return null;
  return {
    table: pooled.observed,
    columns: pooled.labels,
    merged: pooled.columns.filter((c) => c.sources.length > 1).map((c) => ({ label: c.label, members: c.sources })),
  };
}

/**
 * Across-window adjustment (lib/stats adjustPValues, as R's p.adjust); "none" returns p.
 *
 * @example
 * adjust([0.01, 0.04, 0.03], "bh"); // [0.03, 0.04, 0.04]
 */
export function adjust(p: number[], method: "bh" | "bonferroni" | "none"): number[] {
  return method === "none" ? p : adjustPValues(p, method);
}

/**
 * Critical |adjusted residual| for r·c cells at level α (lib/stats driverCriticalValue:
 * Bonferroni two-sided normal quantile z_{1−α/(2rc)}).
 *
 * @example
 * driverCritical(2, 3, 0.05); // 2.638…
 */
export function driverCritical(rows: number, columns: number, alpha: number): number {
  return driverCriticalValue(rows, columns, alpha);
}

/**
 * Poisson rate homogeneity across groups plus u-chart limits around the pooled rate
 * (lib/stats rateHomogeneity), in the shape the rate window stores.
 *
 * @example
 * rateTest([10, 30], [100, 100]).statistic; // 10
 */
export function rateTest(
  defects: number[],
  units: number[],
): {
  statistic: number;
  df: number;
  pValue: number;
  pooledRate: number;
  lower: number[];
  upper: number[];
  outside: ("above" | "below" | null)[];
} {
  const r = rateHomogeneity(defects, units);
  return {
    statistic: r.chiSquare,
    df: r.df,
    pValue: r.pValue,
    pooledRate: r.uBar,
    lower: r.perGroup.map((g) => g.lowerLimit),
    upper: r.perGroup.map((g) => g.upperLimit),
    outside: r.perGroup.map((g) => g.outside),
  };
}
