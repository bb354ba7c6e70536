import { LOG_FACTORIAL_TABLE_LIMIT } from "./log-factorial";
import { createRandomTableSampler } from "./patefield";
import { validateTable } from "./validate-table";

/** Options of {@link monteCarloPValue}. */
export interface MonteCarloOptions {
  /** Number of simulated tables B (default 10,000; at most 10⁸). */
  replicates?: number;
  /** Seed of the xoroshiro128+ generator (default 1); used as a 32-bit integer. */
  seed?: number;
}

/** Result of {@link monteCarloPValue}. */
export interface MonteCarloResult {
  /** (1 + hits)/(B + 1). Never 0: the observed table counts as one of the B + 1. */
  pValue: number;
  /** √(p(1 − p)/B) with p = pValue: the binomial standard error of the estimate. */
  standardError: number;
  /** B, the number of simulated tables. */
  replicates: number;
  /** Simulated tables with X² at least the observed X² (up to rounding). */
  hits: number;
  /** Observed Pearson X². */
  statistic: number;
  /** Seed used, as the 32-bit integer the generator saw. */
  seed: number;
}

const EPSILON = 2 ** -52;

function checkOptions(options: MonteCarloOptions): { replicates: number; seed: number } {
  const replicates = options.replicates ?? 10_000;
  const seed = options.seed ?? 1;
  if (!Number.isInteger(replicates) || replicates < 1 || replicates > 1e8) {
    throw new RangeError(`replicates must be a whole number from 1 to 100,000,000 (got ${replicates})`);
  }
  if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be an integer (got ${seed})`);
  return { replicates, seed: seed | 0 };
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

/**
 * Conditional Monte Carlo p-value of Pearson's X² for an r×c table.
 *
 * Method: draw B tables with the observed row and column totals from their
 * exact null distribution by Patefield's algorithm (AS 159, 1981; see
 * createRandomTableSampler), compute X² of each, and count the tables whose
 * X² is at least the observed one: p = (1 + hits)/(B + 1) (Davison & Hinkley
 * 1997, Bootstrap Methods, §4.2; Hope 1968), as R's
 * chisq.test(simulate.p.value = TRUE). Like R, which counts X²_sim ≥
 * (1 − 64ε) X²_obs, a small tolerance makes ties count: a simulated table
 * counts when ΣO²/E ≥ ΣO²/E_obs − (64ε X²_obs + 4·r·c·ε ΣO²/E_obs), the
 * second term bounding the rounding of a sum of r·c positive terms (the
 * simulated sums are taken in another cell order). The generator
 * is pure-rand's xoroshiro128+, so a seed reproduces the result exactly.
 * standardError = √(p(1 − p)/B).
 *
 * Throws a RangeError for an invalid table (see validateTable) or options.
 *
 * Cost: B · (at most (r−1)(c−1) hypergeometric draws, each ~50 ns); 10,000
 * replicates of a 20×40 table with n ≈ 5,000 (7.4 million draws) take about
 * 0.4 s of CPU on a 2.6 GHz core, on a par with R's compiled rcont2.
 *
 * @example
 * monteCarloPValue([[3, 1], [1, 3]], { replicates: 10_000, seed: 1 }).pValue; // 0.49135086491350866  (exact: 0.4857, Fisher's tea tasting)
 */
export function monteCarloPValue(
  observed: readonly (readonly number[])[],
  options: MonteCarloOptions = {},
): MonteCarloResult {
  const { replicates, seed } = checkOptions(options);
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
  const sampler = createRandomTableSampler(rowTotals, columnTotals, { seed, weights: inverseExpected });
  let hits = 0;
  for (let b = 0; b < replicates; b++) {
    if (sampler.sample() >= threshold) hits++;
  }
  const pValue = (1 + hits) / (replicates + 1);
  return {
    pValue,
    standardError: Math.sqrt((pValue * (1 - pValue)) / replicates),
    replicates,
    hits,
    statistic,
    seed,
  };
}
