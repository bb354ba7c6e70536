/** Multiple-comparison adjustments offered by {@link adjustPValues}. */
export type PAdjustMethod = "bh" | "bonferroni" | "holm";

function checkPValues(p: readonly number[]): void {
  if (!Array.isArray(p)) throw new RangeError("p-values must be given as an array");
  p.forEach((value, k) => {
    if (typeof value !== "number" || !(value >= 0 && value <= 1)) {
      throw new RangeError(`p-value ${k + 1} is not a probability between 0 and 1 (got ${String(value)})`);
    }
  });
}

// Indices sorted by p ascending (stable, as R's order()).
function ascendingOrder(p: readonly number[]): number[] {
  return p.map((_, k) => k).sort((a, b) => p[a] - p[b] || a - b);
}

function bonferroni(p: readonly number[]): number[] {
  return p.map((value) => Math.min(1, p.length * value));
}

// Holm 1979: sorted ascending, (m − i + 1) p_(i), running maximum, capped at 1.
function holm(p: readonly number[]): number[] {
  const m = p.length;
  const out = new Array<number>(m);
  let running = 0;
  ascendingOrder(p).forEach((k, i) => {
    running = Math.max(running, (m - i) * p[k]);
    out[k] = Math.min(1, running);
  });
  return out;
}

// Benjamini & Hochberg 1995: from the largest down, (m / i) p_(i), running minimum, capped at 1.
function benjaminiHochberg(p: readonly number[]): number[] {
  const m = p.length;
  const out = new Array<number>(m);
  const order = ascendingOrder(p);
  let running = Infinity;
  for (let i = m - 1; i >= 0; i--) {
    const k = order[i];
    running = Math.min(running, (m / (i + 1)) * p[k]);
    out[k] = Math.min(1, running);
  }
  return out;
}

/**
 * Adjust p-values for multiple comparisons, exactly as R's p.adjust.
 *
 * - "bonferroni": min(1, m·p) (Bonferroni; Dunn 1961) — family-wise error.
 * - "holm": step-down, sorted ascending, min(1, max_{j≤i} (m − j + 1) p_(j))
 *   (Holm, S. 1979, Scand. J. Statistics 6:65–70) — family-wise error, never
 *   larger than Bonferroni.
 * - "bh": step-up, min(1, min_{j≥i} (m/j) p_(j)) (Benjamini, Y. & Hochberg, Y.
 *   1995, JRSS B 57:289–300) — false discovery rate.
 * Results keep the input order; each is monotone in the raw p-values and
 * never below them. An empty array gives an empty array. Throws a RangeError
 * for values outside [0, 1] or NaN.
 *
 * Cost: O(m log m).
 *
 * @example
 * adjustPValues([0.01, 0.04, 0.03], "bh"); // [0.03, 0.04, 0.04]
 */
export function adjustPValues(p: readonly number[], method: PAdjustMethod): number[] {
  checkPValues(p);
  switch (method) {
    case "bonferroni":
      return bonferroni(p);
    case "holm":
      return holm(p);
    case "bh":
      return benjaminiHochberg(p);
    default:
      throw new RangeError(`unknown p-value adjustment "${String(method)}" (use "bh", "bonferroni" or "holm")`);
  }
}
