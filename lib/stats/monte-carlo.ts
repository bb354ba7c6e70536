import { LOG_FACTORIAL_TABLE_LIMIT } from "./log-factorial";
import { createRandomTableSampler, type RandomTableSampler } from "./patefield";
import {
  createPermutationTableSampler,
  permutationLayout,
  PERMUTATION_SAMPLER_MAX_CELLS,
  PERMUTATION_SAMPLER_MAX_N,
} from "./permutation-sampler";
import { validateTable } from "./validate-table";

/** Options of {@link monteCarloPValue}. */
export interface MonteCarloOptions {
  /** Number of simulated tables B, or the cap N on them with stopAfterHits (default 10,000; at most 10⁸). */
  replicates?: number;
  /** Seed of the xoroshiro128+ generator (default 1); used as a 32-bit integer. */
  seed?: number;
  /**
   * Sequential stopping (Besag & Clifford 1991): stop at the draw L that brings
   * the count of tables at least as extreme as the observed one to h, and
   * report p = h/L. A whole number from 1 to `replicates`; undefined (the
   * default) draws all `replicates` tables.
   */
  stopAfterHits?: number;
}

/** Result of {@link monteCarloPValue}. */
export interface MonteCarloResult {
  /**
   * h/L when stopped at the h-th hit on draw L, else (1 + hits)/(B + 1).
   * Never 0: in the second case the observed table counts as one of the B + 1.
   */
  pValue: number;
  /**
   * Binomial √(p(1 − p)/B) for a full run; p·√((1 − p)/h) when stopped at the
   * h-th hit (the delta-method standard error of h/L for negative binomial L;
   * derived at sequentialStandardError). p = pValue in both.
   */
  standardError: number;
  /** Tables actually drawn: L when stopped, else B. */
  replicates: number;
  /** Simulated tables with X² at least the observed X² (up to rounding), among those drawn. */
  hits: number;
  /** True when the h-th hit came before or on the last allowed draw (p = h/L); false for a full run. */
  stoppedEarly: boolean;
  /** h of stopAfterHits, or null when sequential stopping was not asked for. */
  stopAfterHits: number | null;
  /** The cap B (= replicates for a full run). */
  maxReplicates: number;
  /** Observed Pearson X². */
  statistic: number;
  /** Seed used, as the 32-bit integer the generator saw. */
  seed: number;
}

const EPSILON = 2 ** -52;

function checkOptions(options: MonteCarloOptions): { replicates: number; seed: number; stopAfterHits: number | null } {
  const replicates = options.replicates ?? 10_000;
  const seed = options.seed ?? 1;
  const stopAfterHits = options.stopAfterHits ?? null;
  if (!Number.isInteger(replicates) || replicates < 1 || replicates > 1e8) {
    throw new RangeError(`replicates must be a whole number from 1 to 100,000,000 (got ${replicates})`);
  }
  if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be an integer (got ${seed})`);
  if (stopAfterHits !== null && (!Number.isInteger(stopAfterHits) || stopAfterHits < 1 || stopAfterHits > replicates)) {
    throw new RangeError(`stopAfterHits must be a whole number from 1 to replicates (${replicates}) (got ${stopAfterHits})`);
  }
  return { replicates, seed: seed | 0, stopAfterHits };
}

/**
 * Standard error of the sequential p-value h/L, where L is the draw that gave
 * the h-th hit, evaluated at p = h/L.
 *
 * Derivation (delta method): each draw is a hit with probability p, so L is
 * negative binomial with E[L] = h/p and Var[L] = h(1 − p)/p². With g(L) = h/L,
 * g′(E[L]) = −h/E[L]² = −p²/h, so Var[h/L] ≈ (p²/h)² · h(1 − p)/p²
 * = p²(1 − p)/h, and SE ≈ p·√((1 − p)/h): a relative error of about 1/√h
 * whatever p is. The same variance is Haldane's for inverse binomial sampling
 * (Biometrika 33:222–225, 1945; from memory). It is 0 at p = 1 (every draw a
 * hit), where the approximation says nothing useful.
 *
 * Cost: O(1).
 *
 * @example
 * sequentialStandardError(100, 2000); // 0.004873397172404482
 */
export function sequentialStandardError(hits: number, drawn: number): number {
  const p = hits / drawn;
  return p * Math.sqrt((1 - p) / hits);
}

// Σ O²/E = X² + n. The sampler sums the same terms in its own cell order, so a
// simulated copy of the observed table can differ in the last bits: the
// 4·r·c·ε·ΣO²/E term of the threshold absorbs that.
function sumSquaresOverExpected(table: ArrayLike<number>, inverseExpected: Float64Array): number {
  let s = 0;
  for (let k = 0; k < inverseExpected.length; k++) {
    const o = table[k];
    if (o !== 0) s += o * o * inverseExpected[k];
  }
  return s;
}

/** The two samplers of random tables with fixed margins. */
export type TableSamplerMethod = "patefield" | "permutation";

/**
 * Estimated time of one table by each sampler, in nanoseconds of a 2.6 GHz
 * core, fitted to measurements in Node 20 on 68 tables from 2×2 to 50×60
 * with n from 8 to 16,000 (on 64 of them it picks the faster sampler; on the
 * other 4, where the two are within 1.5×, the choice costs at most 22%).
 * Patefield: per drawn cell, a fixed part and a walk of about one standard
 * deviation, √(n/rc) standing in for it. Permutation: per shuffled unit,
 * rising with n as Lemire's rejections get likelier, and a pass over the
 * cells.
 */
function samplerCosts(rowTotals: readonly number[], columnTotals: readonly number[]): { patefield: number; permutation: number } {
  const rows = rowTotals.length;
  const columns = columnTotals.length;
  const cells = rows * columns;
  let n = 0;
  for (const t of rowTotals) n += t;
  const patefield = 80 + (rows - 1) * (columns - 1) * (35 + 9 * Math.sqrt(n / cells));
  const permutation = 30 + 3.3 * permutationLayout(rowTotals, columnTotals).shuffled * (1 + n / 65536) + 2.5 * cells;
  return { patefield, permutation };
}

/**
 * The sampler monteCarloPValue uses for tables with these margins: the
 * permutation sampler when it fits (n ≤ 16,384, r·c ≤ 16,384) and its cost
 * estimate is the lower, else Patefield's. A function of the margins alone,
 * so a seed still fixes the result.
 *
 * @example
 * chooseTableSampler([5, 5, 5], [3, 3, 3, 3, 3]); // "permutation"  (and "patefield" for [300, 300], [300, 300])
 */
export function chooseTableSampler(rowTotals: readonly number[], columnTotals: readonly number[]): TableSamplerMethod {
  let n = 0;
  for (const t of rowTotals) n += t;
  if (n > PERMUTATION_SAMPLER_MAX_N || rowTotals.length * columnTotals.length > PERMUTATION_SAMPLER_MAX_CELLS) return "patefield";
  const cost = samplerCosts(rowTotals, columnTotals);
  return cost.permutation < cost.patefield ? "permutation" : "patefield";
}

/**
 * Conditional Monte Carlo p-value of Pearson's X² for an r×c table.
 *
 * Method: draw B tables with the observed row and column totals from their
 * exact null distribution (the multiple hypergeometric law), compute X² of
 * each, and count the tables whose X² is at least the observed one:
 * p = (1 + hits)/(B + 1) (Davison & Hinkley 1997, Bootstrap Methods, §4.2;
 * Hope 1968), as R's chisq.test(simulate.p.value = TRUE). Tables come from
 * one of two exact samplers, chosen by chooseTableSampler from the margins:
 * Patefield's algorithm (AS 159, 1981; see createRandomTableSampler), one
 * hypergeometric draw per cell, or a partial shuffle of the n units (see
 * createPermutationTableSampler), one pick per unit — the latter when n is
 * modest against r·c. Like R, which counts X²_sim ≥ (1 − 64ε) X²_obs, a
 * small tolerance makes ties count: a simulated table counts when ΣO²/E ≥
 * ΣO²/E_obs − (64ε X²_obs + 4·r·c·ε ΣO²/E_obs), the second term bounding the
 * rounding of a sum of r·c positive terms (the simulated sums are taken in
 * another cell order). Both samplers run on pure-rand's xoroshiro128+ seeded
 * with `seed`, so a seed reproduces the result exactly.
 * standardError = √(p(1 − p)/B).
 *
 * Sequential stopping (`stopAfterHits: h`; Besag & Clifford 1991, "Sequential
 * Monte Carlo p-values", Biometrika 78:301–304): the same draws in the same
 * order, stopped at the draw L that brings the hits to h; then p = h/L and
 * standardError = p·√((1 − p)/h) (see sequentialStandardError). When fewer
 * than h of the B draws are hits the result is exactly the full run's,
 * (1 + hits)/(B + 1). Besag and Clifford show P(p ≤ u) ≤ u under the null
 * for every u, so the p-value stays valid for a multiple-testing adjustment.
 * A table with a large p stops after about h/p draws; for p uniform the
 * expected number is about h(1 + ln(B/h)) (B = 10,000, h = 100: ~560).
 *
 * Throws a RangeError for an invalid table (see validateTable) or options.
 *
 * Cost: B tables (or L when stopped) at the cheaper sampler's price: Patefield's at most
 * (r−1)(c−1) hypergeometric draws (~50 ns each), the permutation's
 * n − (largest margin total) picks (~3.5 ns each) plus O(r·c). 10,000
 * replicates of a 20×40 table with n ≈ 5,000 (permutation) take about
 * 0.16 s of CPU on a 2.6 GHz core (0.14 s at best), a third of the 0.43 s
 * or more of Patefield's algorithm (`npm run bench:stats` shows both).
 *
 * @example
 * monteCarloPValue([[3, 1], [1, 3]], { replicates: 10_000, seed: 1 }).pValue; // 0.4928507149285071  (exact: 0.4857, Fisher's tea tasting; with stopAfterHits: 100 the same draws stop at the 181st, p = 100/181 = 0.5525)
 */
export function monteCarloPValue(
  observed: readonly (readonly number[])[],
  options: MonteCarloOptions = {},
): MonteCarloResult {
  return monteCarloPValueBy(observed, options, undefined);
}

/**
 * {@link monteCarloPValue} with the sampler forced (`undefined`: chosen by
 * chooseTableSampler, as monteCarloPValue does). For tests and benchmarks.
 *
 * @example
 * monteCarloPValueBy([[3, 1], [1, 3]], { replicates: 2000, seed: 2 }, "patefield").replicates; // 2000
 */
export function monteCarloPValueBy(
  observed: readonly (readonly number[])[],
  options: MonteCarloOptions,
  method: TableSamplerMethod | undefined,
): MonteCarloResult {
  const { replicates, seed, stopAfterHits } = checkOptions(options);
  const { rows, columns, n, rowTotals, columnTotals } = validateTable(observed);
  if (n > LOG_FACTORIAL_TABLE_LIMIT) {
    throw new RangeError(
      `Monte Carlo p-values are limited to n ≤ ${LOG_FACTORIAL_TABLE_LIMIT.toLocaleString("en-US")} (got ${n}); at that size use the chi-square p-value`,
    );
  }
  const inverseExpected = new Float64Array(rows * columns);
  const flat = new Float64Array(rows * columns);
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < columns; j++) {
      inverseExpected[i * columns + j] = n / (rowTotals[i] * columnTotals[j]);
      flat[i * columns + j] = observed[i][j];
    }
  }
  const observedSum = sumSquaresOverExpected(flat, inverseExpected);
  const statistic = Math.max(0, observedSum - n);
  // R's 64ε on X², plus the rounding bound of a sum of r·c positive terms.
  const threshold = observedSum - (64 * EPSILON * statistic + 4 * rows * columns * EPSILON * observedSum);
  const samplerOptions = { seed, weights: inverseExpected };
  const sampler: RandomTableSampler =
    (method ?? chooseTableSampler(rowTotals, columnTotals)) === "permutation"
      ? createPermutationTableSampler(rowTotals, columnTotals, samplerOptions)
      : createRandomTableSampler(rowTotals, columnTotals, samplerOptions);
  // A cap above B never stops the loop: the full run is the sequential one with h = B + 1.
  const stopAt = stopAfterHits ?? replicates + 1;
  let hits = 0;
  let drawn = 0;
  while (drawn < replicates) {
    drawn++;
    if (sampler.sample() >= threshold && ++hits === stopAt) break;
  }
  const stoppedEarly = hits === stopAt;
  const pValue = stoppedEarly ? hits / drawn : (1 + hits) / (replicates + 1);
  return {
    pValue,
    standardError: stoppedEarly ? sequentialStandardError(hits, drawn) : Math.sqrt((pValue * (1 - pValue)) / replicates),
    replicates: drawn,
    hits,
    stoppedEarly,
    stopAfterHits,
    maxReplicates: replicates,
    statistic,
    seed,
  };
}
