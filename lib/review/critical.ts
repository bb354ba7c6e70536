import { normalQuantile } from "@/lib/stats/normal-quantile";

/**
 * Critical |adjusted residual| for naming a cell: two-sided, Bonferroni over the table's
 * r·c cells at level α, so that with no real difference the chance of marking any cell
 * is at most α — the same rule lib/monitor applies to drivers.
 */
export function criticalValue(rows: number, columns: number, alpha: number): number {
  return normalQuantile(1 - alpha / (2 * rows * columns));
}
