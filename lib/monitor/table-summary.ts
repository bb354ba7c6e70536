/**
 * The lean per-window pass of the scan: margins, dropped rows and columns, Pearson's X²
 * and its degrees of freedom, straight from the window's flat sums. It allocates only
 * the small margin arrays; the full cell diagnostics (residuals, G², V) come from
 * lib/stats's analyzeTable, and only for windows that may flag.
 */
export interface TableSummary {
  n: number;
  /** Indices (into the cube's groups / categories) of rows and columns with a positive total. */
  keptRows: number[];
  keptColumns: number[];
  /** Margins of the kept rows and columns. */
  rowTotals: number[];
  columnTotals: number[];
  /** Pearson's X² = Σ (O − E)² / E over kept cells, E = R·C / n; NaN when fewer than 2 rows or columns are kept. */
  chiSquare: number;
  /** (r − 1)(c − 1) over kept rows and columns. */
  df: number;
}

/**
 * Summarises a rows × columns table given as a flat row-major array.
 *
 * Cost: two passes over the r·c cells, no per-cell allocation.
 *
 * @example
 * summarizeTable(Float64Array.from([10, 20, 30, 40]), 2, 2).chiSquare; // 0.7936507936507936
 */
export function summarizeTable(sums: Float64Array, rows: number, columns: number): TableSummary {
  const allRows = new Float64Array(rows);
  const allColumns = new Float64Array(columns);
  let n = 0;
  for (let i = 0; i < rows; i++) {
    const base = i * columns;
    let r = 0;
    for (let j = 0; j < columns; j++) {
      const v = sums[base + j];
      r += v;
      allColumns[j] += v;
    }
    allRows[i] = r;
    n += r;
  }
  const keptRows = positive(allRows);
  const keptColumns = positive(allColumns);
  const rowTotals = keptRows.map((i) => allRows[i]);
  const columnTotals = keptColumns.map((j) => allColumns[j]);
  const testable = keptRows.length >= 2 && keptColumns.length >= 2;
  const chiSquare = testable ? pearson(sums, columns, keptRows, keptColumns, rowTotals, columnTotals, n) : NaN;
  const df = testable ? (keptRows.length - 1) * (keptColumns.length - 1) : 0;
  return { n, keptRows, keptColumns, rowTotals, columnTotals, chiSquare, df };
}

function positive(totals: Float64Array): number[] {
  const kept: number[] = [];
  for (let i = 0; i < totals.length; i++) if (totals[i] > 0) kept.push(i);
  return kept;
}

function pearson(
  sums: Float64Array,
  columns: number,
  keptRows: number[],
  keptColumns: number[],
  rowTotals: number[],
  columnTotals: number[],
  n: number,
): number {
  let x2 = 0;
  const c = keptColumns.length;
  for (let a = 0; a < keptRows.length; a++) {
    const base = keptRows[a] * columns;
    const share = rowTotals[a] / n;
    for (let b = 0; b < c; b++) {
      const expected = share * columnTotals[b];
      const d = sums[base + keptColumns[b]] - expected;
      x2 += (d * d) / expected;
    }
  }
  return x2;
}

/**
 * The kept sub-table (rows and columns with positive totals) as number[][], the shape
 * lib/stats takes. Cost: O(r·c).
 *
 * @example
 * const sums = Float64Array.from([10, 0, 20, 0, 0, 0]); // 2 × 3, second row and column empty
 * keptTable(sums, 3, summarizeTable(sums, 2, 3)); // [[10, 20]]
 */
export function keptTable(sums: Float64Array, columns: number, summary: TableSummary): number[][] {
  return summary.keptRows.map((i) => summary.keptColumns.map((j) => sums[i * columns + j]));
}
