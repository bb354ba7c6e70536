import { logChiSquareUpperTail } from "./chi-square-upper-tail";
import { normalQuantile } from "./normal-quantile";
import { logPoissonDensity } from "./poisson-log-density";

// ln of the χ²_df density at x > 0: ln(a/x) + ln(y^a e^{−y}/Γ(a+1)) with a = df/2, y = x/2.
function logDensity(x: number, df: number): number {
  const a = df / 2;
  return Math.log(a / x) + logPoissonDensity(a, x / 2);
}

// Wilson–Hilferty cube-root normal approximation, a starting point only.
function wilsonHilferty(alpha: number, df: number): number {
  const z = -normalQuantile(alpha);
  const h = 2 / (9 * df);
  const cube = 1 - h + z * Math.sqrt(h);
  return Math.max(df * cube * cube * cube, 1e-300);
}

/**
 * Upper-tail critical value of the chi-square distribution: the x with
 * P(χ²_df ≥ x) = α (R: qchisq(α, df, lower.tail = FALSE)).
 *
 * Method: Newton's method on ln Q(x) − ln α, where d ln Q/dx = −f(x)/Q(x),
 * started from the Wilson–Hilferty approximation (Wilson & Hilferty 1931,
 * PNAS 17:684) and safeguarded by bisection inside a bracket, so it works
 * for α down to 1e-300. Inverts {@link chiSquareUpperTail} to ~1e-13 relative.
 *
 * Cost: typically 4–8 upper-tail evaluations.
 *
 * @example
 * chiSquareCriticalValue(0.05, 1); // 3.841458820694128  (R: 3.841458820694124)
 */
export function chiSquareCriticalValue(alpha: number, df: number): number {
  if (!(alpha > 0 && alpha < 1)) {
    throw new RangeError(`chiSquareCriticalValue needs 0 < alpha < 1 (got ${alpha})`);
  }
  if (!(df > 0) || !Number.isFinite(df)) {
    throw new RangeError(`chiSquareCriticalValue needs finite df > 0 (got ${df})`);
  }
  const target = Math.log(alpha);
  let lo = 0;
  let hi = Math.max(2 * df, 1);
  while (logChiSquareUpperTail(hi, df) > target) hi *= 2;
  let x = Math.min(Math.max(wilsonHilferty(alpha, df), lo), hi);
  for (let i = 0; i < 200; i++) {
    const g = logChiSquareUpperTail(x, df) - target;
    if (g === 0) return x;
    if (g > 0) lo = x;
    else hi = x;
    const slope = -Math.exp(logDensity(x, df) - logChiSquareUpperTail(x, df));
    let next = x - g / slope;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) <= 1e-15 * x || hi - lo <= 1e-15 * hi) return next;
    x = next;
  }
  return x;
}
