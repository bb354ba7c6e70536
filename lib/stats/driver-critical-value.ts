import { normalQuantile } from "./normal-quantile";

/**
 * Critical value for flagging the cells that drive a significant chi-square:
 * the Bonferroni-corrected two-sided normal quantile z_{1 − α/(2·r·c)}.
 *
 * Method: an adjusted residual is approximately N(0, 1) under homogeneity
 * (Haberman 1973); testing all r·c cells two-sided at family-wise level α
 * with Bonferroni's inequality gives the threshold |residual| > z_{1−α/(2rc)}
 * (Agresti, Categorical Data Analysis, 3rd ed. 2013, §3.3; MacDonald &
 * Gardner 2000, Educational and Psychological Measurement 60:735–754).
 * The quantile is computed as −Φ⁻¹(α/(2rc)) (AS 241), so no precision is lost
 * to 1 − small.
 *
 * @example
 * driverCriticalValue(2, 3, 0.05); // 2.6382…  (z_{1−0.05/12})
 */
export function driverCriticalValue(rows: number, columns: number, alpha: number): number {
  if (!Number.isInteger(rows) || rows < 1 || !Number.isInteger(columns) || columns < 1) {
    throw new RangeError(`rows and columns must be positive whole numbers (got ${rows} and ${columns})`);
  }
  if (!(alpha > 0 && alpha < 1)) throw new RangeError(`alpha must be between 0 and 1 (got ${alpha})`);
  return -normalQuantile(alpha / (2 * rows * columns));
}
