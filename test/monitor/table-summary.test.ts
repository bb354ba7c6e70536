import { describe, expect, it } from "vitest";
import { keptTable, summarizeTable } from "@/lib/monitor/table-summary";

describe("lean table summary", () => {
  it("computes Pearson's X² and df (R: chisq.test(matrix(c(10,30,20,40),2), correct=FALSE) → 0.7936508, df 1)", () => {
    const s = summarizeTable(Float64Array.from([10, 20, 30, 40]), 2, 2);
    expect(s.chiSquare).toBeCloseTo(0.7936507936507936, 12);
    expect(s.df).toBe(1);
    expect(s.n).toBe(100);
  });

  it("drops all-zero rows and columns before computing X² and df", () => {
    // rows: [10 0 20], [0 0 0], [30 0 40] → the 2×2 table above.
    const sums = Float64Array.from([10, 0, 20, 0, 0, 0, 30, 0, 40]);
    const s = summarizeTable(sums, 3, 3);
    expect(s.keptRows).toEqual([0, 2]);
    expect(s.keptColumns).toEqual([0, 2]);
    expect(s.chiSquare).toBeCloseTo(0.7936507936507936, 12);
    expect(s.df).toBe(1);
    expect(keptTable(sums, 3, s)).toEqual([
      [10, 20],
      [30, 40],
    ]);
  });

  it("gives NaN and df 0 when fewer than two rows survive", () => {
    const s = summarizeTable(Float64Array.from([5, 7, 0, 0]), 2, 2);
    expect(s.keptRows).toEqual([0]);
    expect(Number.isNaN(s.chiSquare)).toBe(true);
    expect(s.df).toBe(0);
  });
});
