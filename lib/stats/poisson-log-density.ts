import { stirlingError } from "./log-gamma";

const LOG_TWO_PI = 1.837877066409345483560659472811;

/**
 * Deviance term bd0(x, m) = x ln(x/m) + m − x, computed without cancellation.
 *
 * Method: when |x − m| < 0.1 (x + m) the series
 * bd0 = (x−m)v + 2x Σ_{j≥1} v^{2j+1}/(2j+1), v = (x−m)/(x+m), is used, since
 * the direct formula subtracts nearly equal numbers there
 * (Loader, C. 2000, "Fast and accurate computation of binomial probabilities";
 * R's nmath/bd0.c).
 *
 * Cost: O(1) direct, a few dozen terms at most on the series branch.
 *
 * @example
 * bd0(10, 12); // 0.176784432060…  (= 10 ln(10/12) + 2)
 */
export function bd0(x: number, m: number): number {
  if (!(m > 0) || !(x >= 0) || !Number.isFinite(x) || !Number.isFinite(m)) {
    throw new RangeError(`bd0 needs finite x ≥ 0 and m > 0 (got x = ${x}, m = ${m})`);
  }
  if (Math.abs(x - m) < 0.1 * (x + m)) {
    const v = (x - m) / (x + m);
    let s = (x - m) * v;
    let ej = 2 * x * v;
    const vv = v * v;
    for (let j = 1; j < 1000; j++) {
      ej *= vv;
      const next = s + ej / (2 * j + 1);
      if (next === s) return next;
      s = next;
    }
    return s;
  }
  return x * Math.log(x / m) + m - x;
}

/**
 * Log of the Poisson-form density x^a e^{−x} / Γ(a+1), for real a ≥ 0 and x ≥ 0.
 *
 * Method: −δ(a) − bd0(a, x) − ½ ln(2πa), with δ the Stirling remainder
 * (Loader 2000; R's dpois_raw). This is the prefactor of the incomplete gamma
 * function; writing it this way keeps full relative accuracy even when a and
 * x are in the millions, where a ln x − x − ln Γ(a+1) would lose ~7 digits to
 * cancellation.
 *
 * Cost: O(1).
 *
 * @example
 * logPoissonDensity(3, 2.5); // −1.542887273605…  (= ln(2.5³ e^{−2.5}/3!))
 */
export function logPoissonDensity(a: number, x: number): number {
  if (!(a >= 0) || !(x >= 0)) {
    throw new RangeError(`logPoissonDensity needs a ≥ 0 and x ≥ 0 (got a = ${a}, x = ${x})`);
  }
  if (x === 0) return a === 0 ? 0 : -Infinity;
  if (a === 0) return -x;
  if (!Number.isFinite(x) || !Number.isFinite(a)) return -Infinity;
  return -stirlingError(a) - bd0(a, x) - 0.5 * (LOG_TWO_PI + Math.log(a));
}
