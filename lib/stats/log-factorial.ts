import { logGamma } from "./log-gamma";

/** Largest n for which {@link logFactorialTable} will build a table (80 MB of doubles). */
export const LOG_FACTORIAL_TABLE_LIMIT = 10_000_000;

let cache = new Float64Array(0);

/**
 * Table of ln k! for k = 0..n, shared across calls and grown on demand.
 *
 * Method: for k ≤ 170, the log of k! itself (a double, exact up to 22!);
 * beyond, ln Γ(k+1) by Stirling's series (see {@link logGamma}), evaluated
 * independently for each k so errors do not accumulate the way a running sum
 * of ln k does (R's chisq_sim uses the running sum; the difference reaches
 * ~1e-9 absolute near k = 10⁶). Every exact and Monte Carlo routine here
 * reads from this one table.
 *
 * Cost: O(n) the first time a size is reached, O(1) afterwards. The returned
 * array is shared: callers must not write to it.
 *
 * @example
 * logFactorialTable(10)[10]; // 15.104412573075516  (= ln 3628800)
 */
export function logFactorialTable(n: number): Float64Array {
  if (!Number.isInteger(n) || n < 0) {
    throw new RangeError(`logFactorialTable needs a non-negative integer (got ${n})`);
  }
  if (n > LOG_FACTORIAL_TABLE_LIMIT) {
    throw new RangeError(
      `logFactorialTable is limited to n ≤ ${LOG_FACTORIAL_TABLE_LIMIT} (got ${n})`,
    );
  }
  if (n < cache.length) return cache;
  const size = Math.min(LOG_FACTORIAL_TABLE_LIMIT + 1, Math.max(n + 1, 2 * cache.length, 1024));
  const table = new Float64Array(size);
  table.set(cache);
  // Up to 170! the factorial itself is a double (exact to 22!), so its log is good to an
  // ulp or two; beyond, Stirling's series.
  let factorial = 1;
  for (let k = 2; k < Math.min(size, 171); k++) {
    factorial *= k;
    if (k >= cache.length) table[k] = Math.log(factorial);
  }
  for (let k = Math.max(cache.length, 171); k < size; k++) table[k] = logGamma(k + 1);
  cache = table;
  return table;
}

/**
 * ln n! for a non-negative integer n.
 *
 * Method: table lookup for n ≤ 1,000,000 (see {@link logFactorialTable}), ln Γ(n+1)
 * by Stirling's series beyond.
 *
 * @example
 * logFactorial(5); // 4.787491742782046  (= ln 120)
 */
export function logFactorial(n: number): number {
  if (!Number.isInteger(n) || n < 0) {
    throw new RangeError(`logFactorial needs a non-negative integer (got ${n})`);
  }
  if (n < cache.length) return cache[n];
  return n <= 1_000_000 ? logFactorialTable(n)[n] : logGamma(n + 1);
}
