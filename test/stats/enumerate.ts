/**
 * Brute-force enumeration of every r×c table with given margins, for checking
 * the exact and Monte Carlo routines on small tables. Independent of lib/stats:
 * its own log-factorials (running sum) and its own X².
 */
export interface EnumeratedTable {
  cells: number[];
  probability: number;
  chiSquare: number;
}

export function enumerateTables(rowTotals: number[], columnTotals: number[]): EnumeratedTable[] {
  const r = rowTotals.length;
  const c = columnTotals.length;
  const n = rowTotals.reduce((a, b) => a + b, 0);
  const lf = [0];
  for (let k = 1; k <= n; k++) lf.push(lf[k - 1] + Math.log(k));
  let logConstant = -lf[n];
  for (const t of [...rowTotals, ...columnTotals]) logConstant += lf[t];
  const out: EnumeratedTable[] = [];
  const cells = new Array<number>(r * c).fill(0);
  const rowLeft = rowTotals.slice();
  const columnLeft = columnTotals.slice();
  const fill = (k: number): void => {
    if (k === r * c) {
      let logP = logConstant;
      let x2 = 0;
      for (let i = 0; i < r; i++) {
        for (let j = 0; j < c; j++) {
          const o = cells[i * c + j];
          const e = (rowTotals[i] * columnTotals[j]) / n;
          logP -= lf[o];
          x2 += ((o - e) * (o - e)) / e;
        }
      }
      out.push({ cells: cells.slice(), probability: Math.exp(logP), chiSquare: x2 });
      return;
    }
    const i = Math.floor(k / c);
    const j = k % c;
    const lastColumn = j === c - 1;
    const lastRow = i === r - 1;
    let lo = 0;
    let hi = Math.min(rowLeft[i], columnLeft[j]);
    if (lastColumn) lo = hi = rowLeft[i];
    if (lastRow) {
      if (columnLeft[j] > rowLeft[i]) return;
      lo = hi = columnLeft[j];
    }
    if (lastColumn && lastRow && rowLeft[i] !== columnLeft[j]) return;
    for (let v = lo; v <= hi; v++) {
      if (v > rowLeft[i] || v > columnLeft[j]) continue;
      cells[k] = v;
      rowLeft[i] -= v;
      columnLeft[j] -= v;
      fill(k + 1);
      rowLeft[i] += v;
      columnLeft[j] += v;
    }
    cells[k] = 0;
  };
  fill(0);
  return out;
}

export function margins(table: number[][]): { rows: number[]; columns: number[] } {
  return {
    rows: table.map((row) => row.reduce((a, b) => a + b, 0)),
    columns: table[0].map((_, j) => table.reduce((a, row) => a + row[j], 0)),
  };
}

/** Exact conditional p-value by brute force, ordering tables by probability (FFH). */
export function bruteForceProbabilityPValue(table: number[][]): number {
  const { rows, columns } = margins(table);
  const all = enumerateTables(rows, columns);
  const observed = all.find((t) => t.cells.every((v, k) => v === table.flat()[k]));
  if (observed === undefined) throw new Error("observed table not enumerated");
  return all.filter((t) => t.probability <= observed.probability * (1 + 1e-7)).reduce((s, t) => s + t.probability, 0);
}

/** Exact conditional p-value by brute force, ordering tables by X² (the Monte Carlo target). */
export function bruteForceChiSquarePValue(table: number[][]): number {
  const { rows, columns } = margins(table);
  const all = enumerateTables(rows, columns);
  const observed = all.find((t) => t.cells.every((v, k) => v === table.flat()[k]));
  if (observed === undefined) throw new Error("observed table not enumerated");
  const threshold = observed.chiSquare * (1 - 1e-9) - 1e-9;
  return all.filter((t) => t.chiSquare >= threshold).reduce((s, t) => s + t.probability, 0);
}
