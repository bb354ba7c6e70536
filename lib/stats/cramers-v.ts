function checkArguments(chiSquare: number, n: number, rows: number, columns: number): void {
  if (!(chiSquare >= 0) || !Number.isFinite(chiSquare)) {
    throw new RangeError(`Cramér's V needs a finite chi-square ≥ 0 (got ${chiSquare})`);
  }
  if (!(n > 0)) throw new RangeError(`Cramér's V needs n > 0 (got ${n})`);
  if (!Number.isInteger(rows) || !Number.isInteger(columns) || rows < 2 || columns < 2) {
    throw new RangeError(`Cramér's V needs at least 2 rows and 2 columns (got ${rows}×${columns})`);
  }
}

/**
 * Cramér's V, V = √(X² / (n · (min(r, c) − 1))), an effect size in [0, 1].
 *
 * Method: Cramér, H. 1946, Mathematical Methods of Statistics, §21.9. V is
 * biased upwards in small or sparse tables; see {@link cramersVCorrected}.
 *
 * @example
 * cramersV(30.0701491, 2757, 2, 3); // 0.1044358…  (Agresti's party-identification table)
 */
export function cramersV(chiSquare: number, n: number, rows: number, columns: number): number {
  checkArguments(chiSquare, n, rows, columns);
  return Math.sqrt(chiSquare / (n * (Math.min(rows, columns) - 1)));
}

/**
 * Bias-corrected Cramér's V (Bergsma, W. 2013, "A bias-correction for Cramér's V
 * and Tschuprow's T", Journal of the Korean Statistical Society 42:323–328):
 * φ̃² = max(0, φ² − (c−1)(r−1)/(n−1)) with φ² = X²/n,
 * c̃ = c − (c−1)²/(n−1), r̃ = r − (r−1)²/(n−1), Ṽ = √(φ̃² / min(c̃−1, r̃−1)).
 *
 * Returns 0 when φ̃² = 0 (which covers the tiny tables, n ≤ max(r, c), where
 * min(c̃−1, r̃−1) ≤ 0 in our checks); NaN is kept as a guard should that
 * denominator ever be ≤ 0 with φ̃² > 0.
 *
 * @example
 * cramersVCorrected(30.0701491, 2757, 2, 3); // 0.1009199…
 */
export function cramersVCorrected(chiSquare: number, n: number, rows: number, columns: number): number {
  checkArguments(chiSquare, n, rows, columns);
  if (n < 2) return Number.NaN;
  const phi2 = Math.max(0, chiSquare / n - ((columns - 1) * (rows - 1)) / (n - 1));
  if (phi2 === 0) return 0;
  const cTilde = columns - ((columns - 1) * (columns - 1)) / (n - 1);
  const rTilde = rows - ((rows - 1) * (rows - 1)) / (n - 1);
  const denominator = Math.min(cTilde - 1, rTilde - 1);
  return denominator > 0 ? Math.sqrt(phi2 / denominator) : Number.NaN;
}
