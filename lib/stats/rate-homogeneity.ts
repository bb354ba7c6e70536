import { regularizedGammaTails } from "./incomplete-gamma";

/** One group of {@link rateHomogeneity}: its rate and u-chart limits. */
export interface RateGroup {
  defects: number;
  units: number;
  /** Defects per unit, dᵢ / nᵢ. */
  u: number;
  /** Expected defects under a common rate, ū · nᵢ. */
  expected: number;
  /** ū − 3√(ū/nᵢ), floored at 0. */
  lowerLimit: number;
  /** ū + 3√(ū/nᵢ). */
  upperLimit: number;
  /** Whether u lies outside the limits, and on which side. */
  outside: "above" | "below" | null;
}

/** Result of {@link rateHomogeneity}. */
export interface RateHomogeneity {
  /** Number of groups k. */
  groups: number;
  totalDefects: number;
  totalUnits: number;
  /** Pooled rate ū = Σd / Σn (the u-chart centre line). */
  uBar: number;
  /** X² = Σ (dᵢ − ū nᵢ)² / (ū nᵢ); 0 when there are no defects at all. */
  chiSquare: number;
  /** k − 1. */
  df: number;
  /** P(χ²_{k−1} ≥ X²); 1 when there are no defects. */
  pValue: number;
  /** log10 of pValue, finite where pValue underflows. */
  log10PValue: number;
  /** Smallest expected count ū nᵢ: the χ² approximation wants it ≥ 5 (common practice). */
  minExpected: number;
  /** Per-group rates and limits, in input order. */
  perGroup: RateGroup[];
}

function checkInput(defects: readonly number[], units: readonly number[]): void {
  if (!Array.isArray(defects) || !Array.isArray(units)) {
    throw new RangeError("defects and units must be arrays");
  }
  if (defects.length !== units.length) {
    throw new RangeError(`defects has ${defects.length} groups but units has ${units.length}`);
  }
  if (defects.length < 2) throw new RangeError(`rate comparison needs at least 2 groups (got ${defects.length})`);
  defects.forEach((d, k) => {
    if (typeof d !== "number" || !Number.isSafeInteger(d) || d < 0) {
      throw new RangeError(`defects of group ${k + 1} must be a non-negative whole number (got ${String(d)})`);
    }
  });
  units.forEach((n, k) => {
    if (typeof n !== "number" || !(n > 0) || !Number.isFinite(n)) {
      throw new RangeError(`units of group ${k + 1} must be a finite number above 0 (got ${String(n)})`);
    }
  });
}

function group(defects: number, units: number, uBar: number): RateGroup {
  const u = defects / units;
  const halfWidth = 3 * Math.sqrt(uBar / units);
  const lowerLimit = Math.max(0, uBar - halfWidth);
  const upperLimit = uBar + halfWidth;
  const outside = u > upperLimit ? "above" : u < lowerLimit ? "below" : null;
  return { defects, units, u, expected: uBar * units, lowerLimit, upperLimit, outside };
}

/**
 * Homogeneity of defect rates (defects per unit) across groups, with u-chart limits.
 *
 * Method: under a common Poisson rate the pooled estimate is ū = Σdᵢ/Σnᵢ and
 * X² = Σ (dᵢ − ū nᵢ)² / (ū nᵢ) is approximately χ² with k − 1 df (the Poisson
 * dispersion test for unequal exposures; Cochran 1954, Biometrics 10:417–451;
 * Agresti 2013, §1.5). The p-value uses the direct upper tail, so it stays
 * accurate far into the tail. Per group, the u-chart limits are
 * ū ± 3√(ū/nᵢ), the lower one floored at 0 (Montgomery, Introduction to
 * Statistical Quality Control, 7th ed. 2013, §7.3.2), and a group is flagged
 * when its u lies outside them. With no defects at all every rate is 0: X² = 0,
 * p = 1, limits 0.
 *
 * Throws a RangeError for mismatched or short arrays, defects that are not
 * non-negative whole numbers, and units that are not finite and above 0.
 *
 * Cost: O(k).
 *
 * @example
 * rateHomogeneity([10, 30], [100, 100]).chiSquare; // 10  (ū = 0.2; (10−20)²/20 + (30−20)²/20)
 */
export function rateHomogeneity(defects: readonly number[], units: readonly number[]): RateHomogeneity {
  checkInput(defects, units);
  const totalDefects = defects.reduce((a, b) => a + b, 0);
  const totalUnits = units.reduce((a, b) => a + b, 0);
  const uBar = totalDefects / totalUnits;
  const df = defects.length - 1;
  let chiSquare = 0;
  if (uBar > 0) {
    for (let k = 0; k < defects.length; k++) {
      const e = uBar * units[k];
      chiSquare += ((defects[k] - e) * (defects[k] - e)) / e;
    }
  }
  const tail = regularizedGammaTails(df / 2, chiSquare / 2);
  return {
    groups: defects.length,
    totalDefects,
    totalUnits,
    uBar,
    chiSquare,
    df,
    pValue: tail.upper,
    log10PValue: tail.logUpper / Math.LN10,
    minExpected: Math.min(...units) * uBar,
    perGroup: defects.map((d, k) => group(d, units[k], uBar)),
  };
}
