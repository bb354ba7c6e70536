/**
 * The one place lib/monitor touches lib/stats: re-exports what the scan calls and adapts
 * the sparse-table helpers to the small shapes the window test needs, so an API change
 * in lib/stats is absorbed here.
 */
import { analyzeTable, type TableAnalysis } from "@/lib/stats/analyze-table";
import { chiSquareUpperTail } from "@/lib/stats/chi-square-upper-tail";
import { cramersVCorrected } from "@/lib/stats/cramers-v";
import { checkExpectedCounts } from "@/lib/stats/expected-count-check";

export { analyzeTable, chiSquareUpperTail, checkExpectedCounts, cramersVCorrected, type TableAnalysis };

function pending(name: string): never {
  throw new Error(`lib/stats has no ${name} yet`);
}

/** Fisher–Freeman–Halton exact p, or null when lib/stats deems the table too large. */
export function exactIfFeasible(_table: number[][]): number | null {
  return pending("exactPValue");
}

/** Monte Carlo p-value with a fixed seed. */
export function monteCarlo(_table: number[][], _replicates: number, _seed: number): { pValue: number; standardError: number; replicates: number } {
  return pending("monteCarloPValue");
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
