/**
 * The one place lib/monitor touches lib/stats: re-exports what the scan calls and adapts
 * the sparse-table helpers to the small shapes the window test needs, so an API change
 * in lib/stats is absorbed here.
 */
import { analyzeTable, type TableAnalysis } from "@/lib/stats/analyze-table";
import { chiSquareUpperTail } from "@/lib/stats/chi-square-upper-tail";
import { cramersVCorrected } from "@/lib/stats/cramers-v";
import { checkExpectedCounts } from "@/lib/stats/expected-count-check";
import { exactIsFeasible, exactPValue } from "@/lib/stats/fisher-exact";
import { monteCarloPValue } from "@/lib/stats/monte-carlo";

export { analyzeTable, chiSquareUpperTail, checkExpectedCounts, cramersVCorrected, type TableAnalysis };

function pending(name: string): never {
  throw new Error(`lib/stats has no ${name} yet`);
}

/**
 * Step budget of the exact test inside a scan: a tenth of lib/stats's default, because a
 * scan may hold hundreds of sparse windows and Monte Carlo answers a table that needs
 * more in ~0.1 s.
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
 * Monte Carlo p-value (lib/stats monteCarloPValue: Patefield tables, (1 + hits)/(B + 1)).
 *
 * @example
 * monteCarlo([[3, 1], [1, 3]], 10_000, 1).pValue; // ≈ 0.486
 */
export function monteCarlo(table: number[][], replicates: number, seed: number): { pValue: number; standardError: number; replicates: number } {
  return monteCarloPValue(table, { replicates, seed });
}

/** Sparse categories pooled (family first, then smallest): the pooled table and what went where. */
export function poolColumns(
  _table: number[][],
  _categories: string[],
  _families: Record<string, string> | undefined,
): { table: number[][]; columns: string[]; merged: { label: string; members: string[] }[] } | null {
  return pending("poolSparseCategories");
}

/** Across-window adjustment of p-values. */
export function adjust(p: number[], method: "bh" | "bonferroni" | "none"): number[] {
  if (method === "none") return p;
  return pending("adjustPValues");
}

/** Critical |adjusted residual| for r·c cells at level α (Bonferroni, two-sided). */
export function driverCritical(_rows: number, _columns: number, _alpha: number): number {
  return pending("driverCriticalValue");
}

/** Poisson rate homogeneity across groups plus u-chart limits around the pooled rate. */
export function rateTest(
  _defects: number[],
  _units: number[],
): { statistic: number; df: number; pValue: number; pooledRate: number; lower: number[]; upper: number[] } {
  return pending("rateHomogeneity");
}
