/** Largest k kept in {@link xLogXTable}; larger counts fall back to k·Math.log(k). */
export const X_LOG_X_TABLE_LIMIT = 1 << 20;

let cache = new Float64Array(0);

/**
 * Table of k ln k for k = 0..n (0 ln 0 = 0), shared across calls and grown on
 * demand up to {@link X_LOG_X_TABLE_LIMIT}.
 *
 * Why: the likelihood-ratio statistic can be written with margins only,
 * G²/2 = Σ O ln O − Σ R ln R − Σ C ln C + n ln n, so a table of k ln k turns
 * a logarithm per cell into one read. Callers must check k against the table
 * length and must not write to it.
 *
 * Cost: O(n) once per new size, O(1) afterwards.
 *
 * @example
 * xLogXTable(10)[10]; // 23.02585092994046
 */
export function xLogXTable(n: number): Float64Array {
  if (!Number.isInteger(n) || n < 0) {
    throw new RangeError(`xLogXTable needs a non-negative integer (got ${n})`);
  }
  const wanted = Math.min(n, X_LOG_X_TABLE_LIMIT);
  if (wanted < cache.length) return cache;
  const size = Math.min(X_LOG_X_TABLE_LIMIT + 1, Math.max(wanted + 1, 2 * cache.length, 4096));
  const table = new Float64Array(size);
  table.set(cache);
  for (let k = Math.max(cache.length, 1); k < size; k++) table[k] = k * Math.log(k);
  cache = table;
  return table;
}

/**
 * k ln k for a count k ≥ 0 (0 for k = 0), from {@link xLogXTable} when it fits.
 *
 * @example
 * xLogX(0); // 0
 */
export function xLogX(k: number): number {
  return k < cache.length ? cache[k] : k > 0 ? k * Math.log(k) : 0;
}
