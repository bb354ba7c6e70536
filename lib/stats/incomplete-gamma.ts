import { logPoissonDensity } from "./poisson-log-density";

const EPS = 1e-16;
const TINY = 1e-300;
const MAX_ITERATIONS = 100_000;

/** Result of {@link regularizedGammaTails}: both tails and their logs. */
export interface GammaTails {
  /** P(a, x) = γ(a, x)/Γ(a), the lower tail. */
  lower: number;
  /** Q(a, x) = Γ(a, x)/Γ(a), the upper tail. */
  upper: number;
  /** ln P(a, x); finite even where P underflows. */
  logLower: number;
  /** ln Q(a, x); finite even where Q underflows (below ~1e-308). */
  logUpper: number;
}

function checkArguments(a: number, x: number): void {
  if (!(a > 0) || !Number.isFinite(a)) {
    throw new RangeError(`incomplete gamma needs a finite shape a > 0 (got ${a})`);
  }
  if (!(x >= 0)) throw new RangeError(`incomplete gamma needs x ≥ 0 (got ${x})`);
}

// Σ_{k≥0} x^k / ((a+1)…(a+k)); converges fast for x < a + 1.
function lowerSeries(a: number, x: number): number {
  let term = 1;
  let sum = 1;
  let ap = a;
  for (let k = 0; k < MAX_ITERATIONS; k++) {
    ap += 1;
    term *= x / ap;
    sum += term;
    if (term < sum * EPS) return sum;
  }
  throw new RangeError(`incomplete gamma series did not converge for a = ${a}, x = ${x}`);
}

// Continued fraction for Γ(a, x) e^x x^{−a}, modified Lentz; converges fast for x > a + 1.
function upperContinuedFraction(a: number, x: number): number {
  let b = x + 1 - a;
  let c = 1 / TINY;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < MAX_ITERATIONS; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < TINY) d = TINY;
    c = b + an / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < EPS) return h;
  }
  throw new RangeError(`incomplete gamma continued fraction did not converge for a = ${a}, x = ${x}`);
}

/**
 * Both tails of the regularized incomplete gamma function, with their logarithms.
 *
 * Method: for x < a + 1 the series P = x^a e^{−x}/Γ(a+1) · Σ x^k/((a+1)…(a+k)),
 * Q = 1 − P (Q is not small there, so nothing is lost); for x ≥ a + 1 the
 * Legendre continued fraction Q = x^a e^{−x}/Γ(a) · 1/(x+1−a− 1·(1−a)/(x+3−a− …))
 * evaluated by the modified Lentz method (Press et al., Numerical Recipes,
 * 3rd ed. 2007, §6.2; Lentz 1976). The prefactor is computed in logs as
 * −δ(a) − bd0(a, x) − ½ ln 2πa (Loader 2000), so ln Q stays accurate far
 * below the double range and for a, x in the millions.
 * Accuracy: relative error about 1e-14 in Q, and in ln Q, for a ≤ 10⁵.
 *
 * Cost: O(√a) iterations near x ≈ a, fewer away from it.
 *
 * @example
 * regularizedGammaTails(1, 2).upper; // 0.1353352832366127  (= e^{−2})
 */
export function regularizedGammaTails(a: number, x: number): GammaTails {
  checkArguments(a, x);
  if (x === 0) return { lower: 0, upper: 1, logLower: -Infinity, logUpper: 0 };
  if (x === Infinity) return { lower: 1, upper: 0, logLower: 0, logUpper: -Infinity };
  const logPrefactor = logPoissonDensity(a, x); // ln(x^a e^{−x}/Γ(a+1))
  if (x < a + 1) {
    const logLower = logPrefactor + Math.log(lowerSeries(a, x));
    const lower = Math.exp(logLower);
    return { lower, upper: 1 - lower, logLower, logUpper: Math.log1p(-lower) };
  }
  const logUpper = Math.log(a) + logPrefactor + Math.log(upperContinuedFraction(a, x));
  const upper = Math.exp(logUpper);
  return { lower: 1 - upper, upper, logLower: Math.log1p(-upper), logUpper };
}

/**
 * Regularized upper incomplete gamma function Q(a, x) = Γ(a, x)/Γ(a).
 *
 * Method and accuracy: see {@link regularizedGammaTails}. Returns 0 only when
 * Q is below the smallest double (~5e-324); use {@link logRegularizedGammaQ}
 * beyond that.
 *
 * @example
 * regularizedGammaQ(0.5, 2); // 0.04550026389635842  (= P(χ²₁ > 4))
 */
export function regularizedGammaQ(a: number, x: number): number {
  return regularizedGammaTails(a, x).upper;
}

/**
 * Natural log of Q(a, x), finite far below the double range.
 *
 * @example
 * logRegularizedGammaQ(1, 1000); // −1000  (Q = e^{−1000} underflows, its log does not)
 */
export function logRegularizedGammaQ(a: number, x: number): number {
  return regularizedGammaTails(a, x).logUpper;
}

/**
 * Regularized lower incomplete gamma function P(a, x) = γ(a, x)/Γ(a) = 1 − Q(a, x).
 *
 * @example
 * regularizedGammaP(1, 2); // 0.8646647167633873  (= 1 − e^{−2})
 */
export function regularizedGammaP(a: number, x: number): number {
  return regularizedGammaTails(a, x).lower;
}
