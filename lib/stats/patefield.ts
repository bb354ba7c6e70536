import { expNonPositive } from "./exp-non-positive";
import { logFactorialTable } from "./log-factorial";
import { createXoroshiroStream } from "./xoroshiro-stream";

/** A seeded sampler of r×c tables with fixed margins (see {@link createRandomTableSampler}). */
export interface RandomTableSampler {
  readonly rows: number;
  readonly columns: number;
  /**
   * Draw one table. Writes it into `out` (row-major, length rows·columns)
   * when given, and returns Σ w_ij x_ij² over it for the weights the sampler
   * was made with (0 without weights; with w = 1/E it is X² + n).
   */
  sample(out?: Int32Array): number;
}

/** Options of {@link createRandomTableSampler}. */
export interface RandomTableSamplerOptions {
  /** Seed of pure-rand's xoroshiro128+ (used as a 32-bit integer). */
  seed: number;
  /** Row-major cell weights w for the returned Σ w x² (e.g. 1/E for X² + n). */
  weights?: ArrayLike<number>;
}

// Indices 0..k−1 ordered by total, ascending or descending; ties keep input order.
function orderBy(totals: readonly number[], ascending: boolean): Int32Array {
  const order = Array.from(totals, (_, k) => k);
  order.sort((a, b) => (ascending ? totals[a] - totals[b] : totals[b] - totals[a]) || a - b);
  return Int32Array.from(order);
}

/**
 * Checks the margins of a random table (at least 2×2, non-negative whole
 * totals, equal sums) and returns n; throws a RangeError otherwise. Shared by
 * both samplers.
 *
 * @example
 * checkTableMargins([2, 3], [4, 1]); // 5
 */
export function checkTableMargins(rowTotals: readonly number[], columnTotals: readonly number[]): number {
  if (rowTotals.length < 2 || columnTotals.length < 2) {
    throw new RangeError("a random table needs at least 2 rows and 2 columns");
  }
  let n = 0;
  let m = 0;
  for (const t of rowTotals) {
    if (!Number.isInteger(t) || t < 0) throw new RangeError(`row total ${t} is not a non-negative integer`);
    n += t;
  }
  for (const t of columnTotals) {
    if (!Number.isInteger(t) || t < 0) throw new RangeError(`column total ${t} is not a non-negative integer`);
    m += t;
  }
  if (n !== m) throw new RangeError(`row totals sum to ${n} but column totals sum to ${m}`);
  return n;
}

/**
 * Seeded sampler of random r×c tables with both margins fixed, drawn from
 * their exact conditional (multiple hypergeometric) distribution under
 * independence.
 *
 * Method: Patefield, W. M. 1981, "Algorithm AS 159: An efficient method of
 * generating random R × C tables with given row and column totals", Applied
 * Statistics 30:91–97 (R's rcont2). Cells are drawn one at a time from the
 * hypergeometric law of the cell given what is left of its row (ia), its
 * column (id) and the sub-table (ie): P(x) = C(id, x) C(ie−id, ia−x)/C(ie, ia).
 * Each draw starts near the mean, takes that point's probability from
 * precomputed log-factorials, and walks outwards, alternately up and down,
 * adding probabilities (updated by their one-step ratios)
 * until they pass a uniform U — about one standard deviation of steps.
 * Rows go from the smallest total, columns from the largest, so small rows
 * run out early and the rest of the row is zero; the largest row is filled
 * by subtraction. Permuting rows and columns does not change the conditional
 * law; output is in the caller's order. Random words come from pure-rand's
 * xoroshiro128+ seeded with `seed` (see createXoroshiroStream); U has 32-bit
 * resolution, so a draw's probabilities are off by at most 2⁻³².
 *
 * Cost: O(r·c) setup plus shared tables up to n; per table at most
 * (r−1)(c−1) draws, each one table-driven exponential and a few
 * multiplications, and no allocation.
 *
 * @example
 * const out = new Int32Array(4);
 * createRandomTableSampler([4, 4], [4, 4], { seed: 1 }).sample(out); // 0; out holds a 2×2 table with those margins
 */
export function createRandomTableSampler(
  rowTotals: readonly number[],
  columnTotals: readonly number[],
  options: RandomTableSamplerOptions,
): RandomTableSampler {
  const n = checkTableMargins(rowTotals, columnTotals);
  const rows = rowTotals.length;
  const columns = columnTotals.length;
  const cells = rows * columns;
  if (options.weights !== undefined && options.weights.length !== cells) {
    throw new RangeError(`weights need ${cells} cells (got ${options.weights.length})`);
  }
  const stream = createXoroshiroStream(options.seed);
  const logFactorial = logFactorialTable(n);
  const rowOrder = orderBy(rowTotals, true);
  const columnOrder = orderBy(columnTotals, false);
  const rowSize = Int32Array.from(rowOrder, (i) => rowTotals[i]);
  const columnSize = Int32Array.from(columnOrder, (j) => columnTotals[j]);
  // Everything inside works in the sorted order, cell (l, m) at l·columns + m.
  const weights = new Float64Array(cells);
  if (options.weights !== undefined) {
    for (let l = 0; l < rows; l++) {
      for (let m = 0; m < columns; m++) {
        weights[l * columns + m] = options.weights[rowOrder[l] * columns + columnOrder[m]];
      }
    }
  }
  const columnLeft = new Int32Array(columns);
  const table = new Int32Array(cells);

  /**
   * One hypergeometric draw: how many of the `ia` units left in this row fall
   * in this column, which has `id` of the `ie` units left in the sub-table.
   */
  function drawCell(ia: number, id: number, ie: number): number {
    const ib = ie - ia; // units of the rows below, columns m..
    const ii = ib - id; // units of the rows below, columns right of m (negative forces x up)
    const lo = ii < 0 ? -ii : 0;
    const hi = ia < id ? ia : id;
    if (lo === hi) return lo;
    // Any start in [lo, hi] is exact; the rounded mean keeps the walk short.
    let start = Math.floor((ia * id) / ie + 0.5);
    if (start < lo) start = lo;
    else if (start > hi) start = hi;
    // Summed as a tree: a left-to-right chain of eight additions is latency-bound.
    const logP =
      logFactorial[ia] + logFactorial[ib] + (logFactorial[ie - id] + logFactorial[id]) -
      (logFactorial[ie] + logFactorial[start] + (logFactorial[id - start] + logFactorial[ia - start])) -
      logFactorial[ii + start];
    const pStart = expNonPositive(logP);
    let u = stream.nextUniform32();
    for (;;) {
      let sum = pStart;
      if (u < sum) return start;
      let up = start;
      let down = start;
      let pUp = pStart;
      let pDown = pStart;
      while (up < hi || down > lo) {
        if (up < hi) {
          pUp *= ((id - up) * (ia - up)) / ((up + 1) * (ii + up + 1));
          up++;
          sum += pUp;
          if (u < sum) return up;
        }
        if (down > lo) {
          pDown *= (down * (ii + down)) / ((id - down + 1) * (ia - down + 1));
          down--;
          sum += pDown;
          if (u < sum) return down;
        }
      }
      // Rounding left the total a hair below 1 and u beyond it: redraw within the total.
      u = sum * stream.nextUniform32();
    }
  }

  // Fills `table` (sorted order) and returns Σ w x².
  function draw(): number {
    columnLeft.set(columnSize);
    table.fill(0);
    let weighted = 0;
    let rowsLeft = n; // total of rows l..r−1
    for (let l = 0; l < rows - 1; l++) {
      const offset = l * columns;
      let ia = rowSize[l];
      let ic = rowsLeft; // units of rows l.. in columns m..
      rowsLeft -= ia;
      let m = 0;
      for (; m < columns - 1 && ia > 0; m++) {
        const id = columnLeft[m];
        const ie = ic;
        ic -= id;
        if (id === 0) continue;
        const x = drawCell(ia, id, ie);
        if (x === 0) continue;
        table[offset + m] = x;
        weighted += x * x * weights[offset + m];
        ia -= x;
        columnLeft[m] = id - x;
      }
      if (m === columns - 1 && ia > 0) {
        table[offset + m] = ia;
        weighted += ia * ia * weights[offset + m];
        columnLeft[m] -= ia;
      }
    }
    const offset = (rows - 1) * columns;
    for (let m = 0; m < columns; m++) {
      const x = columnLeft[m];
      table[offset + m] = x;
      weighted += x * x * weights[offset + m];
    }
    return weighted;
  }

  return {
    rows,
    columns,
    sample(out?: Int32Array): number {
      if (out !== undefined && out.length !== cells) {
        throw new RangeError(`output buffer needs ${cells} cells (got ${out.length})`);
      }
      const weighted = draw();
      if (out !== undefined) {
        for (let l = 0; l < rows; l++) {
          for (let m = 0; m < columns; m++) {
            out[rowOrder[l] * columns + columnOrder[m]] = table[l * columns + m];
          }
        }
      }
      return weighted;
    },
  };
}
