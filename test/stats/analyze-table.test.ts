import { describe, expect, it } from "vitest";
import {
  adjustedResiduals,
  analyzeTable,
  checkExpectedCounts,
  cramersV,
  cramersVCorrected,
  pearsonResiduals,
} from "@/lib/stats";
import { R, relativeError } from "./reference";

const PARTY_BY_GENDER = [
  [762, 327, 468], // females: Democrat, Independent, Republican
  [484, 239, 477], // males
];

describe("Agresti, An Introduction to Categorical Data Analysis (2nd ed. 2007), Table 2.5 / §2.4", () => {
  // Party identification by gender. The printed figures (X² ≈ 30.1, G² ≈ 30.0, df 2,
  // adjusted residuals 4.50, 0.70, −5.32 in the female row) are recalled from the book and
  // confirmed by R 4.2.2 (chisq.test(...)$stdres) to the book's precision; the full-precision
  // R values are in the fixture and checked below.
  const result = analyzeTable(PARTY_BY_GENDER);

  it("gives the printed statistics", () => {
    expect(result.df).toBe(2);
    expect(result.chiSquare.toFixed(1)).toBe("30.1");
    expect(result.gSquare.toFixed(1)).toBe("30.0");
    expect(result.adjustedResiduals[0].map((z) => z.toFixed(2))).toEqual(["4.50", "0.70", "-5.32"]);
    expect(result.adjustedResiduals[1].map((z) => z.toFixed(2))).toEqual(["-4.50", "-0.70", "5.32"]);
  });

  it(`matches ${R.version} chisq.test to full precision`, () => {
    const ref = R.tables.find((t) => t.name === "agresti-party-by-gender");
    expect(ref).toBeDefined();
    expect(relativeError(result.chiSquare, ref!.chiSquare)).toBeLessThan(1e-13);
    expect(relativeError(result.pValue, ref!.pValue)).toBeLessThan(1e-12);
  });
});

describe(`analyzeTable against ${R.version} (chisq.test, pchisq with log.p, fixture r-reference.json)`, () => {
  for (const ref of R.tables) {
    it(`${ref.name}: X², G², p-values, expected counts and residuals`, () => {
      expect(R.tool).toBe("R");
      const a = analyzeTable(ref.observed);
      expect(a.df).toBe(ref.df);
      expect(relativeError(a.chiSquare, ref.chiSquare)).toBeLessThan(1e-12);
      expect(relativeError(a.gSquare, ref.gSquare)).toBeLessThan(1e-10);
      // log10 p is compared for every table (some p underflow); p itself where R has it.
      expect(relativeError(a.log10PValue * Math.LN10, ref.logPValue)).toBeLessThan(1e-10);
      expect(relativeError(a.gLog10PValue * Math.LN10, ref.gLogPValue)).toBeLessThan(1e-9);
      if (ref.pValue > 0) expect(relativeError(a.pValue, ref.pValue)).toBeLessThan(1e-8);
      else expect(a.pValue).toBe(0);
      if (ref.gPValue > 0) expect(relativeError(a.gPValue, ref.gPValue)).toBeLessThan(1e-8);
      ref.expected.forEach((row, i) =>
        row.forEach((e, j) => {
          expect(relativeError(a.expected[i][j], e)).toBeLessThan(1e-14);
          expect(a.pearsonResiduals[i][j]).toBeCloseTo(ref.pearsonResiduals[i][j], 10);
          expect(a.adjustedResiduals[i][j]).toBeCloseTo(ref.adjustedResiduals[i][j], 10);
        }),
      );
    });
  }

  it("includes the hard cases: p < 1e-50, p ≈ 1e-300, p beyond doubles, expected < 1, n = 10⁶ near null", () => {
    expect(R.tables.some((t) => t.observed.flat().reduce((a, b) => a + b, 0) >= 1e6 && t.pValue > 0.5)).toBe(true);
    const logs = R.tables.map((t) => t.logPValue);
    expect(logs.some((l) => l < Math.log(1e-50))).toBe(true);
    expect(logs.some((l) => l < Math.log(1e-298) && l > Math.log(1e-301))).toBe(true);
    expect(R.tables.some((t) => t.pValue === 0)).toBe(true);
    expect(R.tables.some((t) => t.expected.flat().some((e) => e < 1))).toBe(true);
  });
});

describe("effect sizes", () => {
  it("Cramér's V is √(X²/(n(min(r,c)−1))) — by hand for the party table", () => {
    const a = analyzeTable(PARTY_BY_GENDER);
    expect(a.cramersV).toBeCloseTo(Math.sqrt(30.070149095754672 / 2757), 12);
    expect(cramersV(a.chiSquare, a.n, 2, 3)).toBe(a.cramersV);
  });

  it("bias-corrected V follows Bergsma (2013) — by hand for a 3×4 table", () => {
    const table = [
      [12, 7, 3, 9],
      [15, 4, 6, 2],
      [9, 11, 2, 5],
    ];
    const a = analyzeTable(table);
    const n = 85;
    const phi2 = Math.max(0, a.chiSquare / n - (3 * 2) / (n - 1));
    const kTilde = 4 - 9 / (n - 1);
    const rTilde = 3 - 4 / (n - 1);
    expect(a.n).toBe(n);
    expect(a.cramersVCorrected).toBeCloseTo(Math.sqrt(phi2 / Math.min(kTilde - 1, rTilde - 1)), 12);
    expect(a.cramersVCorrected).toBeLessThan(a.cramersV);
  });

  it("bias-corrected V is 0 when φ² is within its bias", () => {
    expect(cramersVCorrected(0.5, 100, 3, 3)).toBe(0); // φ² = 0.005 < 4/99
    expect(cramersVCorrected(2, 2, 2, 2)).toBe(0); // [[1,0],[0,1]]: φ² = 1 = (c−1)(r−1)/(n−1)
    expect(cramersVCorrected(5, 100, 3, 3)).toBeGreaterThan(0); // φ² = 0.05 > 4/99
  });
});

describe("cell diagnostics", () => {
  it("contributions are each cell's share of X² and sum to 1", () => {
    const a = analyzeTable(PARTY_BY_GENDER);
    const flat = a.contributions.flat();
    expect(flat.reduce((s, c) => s + c, 0)).toBeCloseTo(1, 14);
    const terms = a.pearsonResiduals.flat().map((r) => r * r);
    flat.forEach((c, k) => expect(c).toBeCloseTo(terms[k] / a.chiSquare, 14));
  });

  it("contributions are all 0, X² = G² = 0 and p = 1 when the rows are proportional", () => {
    const a = analyzeTable([
      [2, 4, 6],
      [3, 6, 9],
    ]);
    expect(a.chiSquare).toBe(0);
    expect(a.gSquare).toBe(0);
    expect(a.pValue).toBe(1);
    expect(a.contributions.flat().every((c) => c === 0)).toBe(true);
  });

  it("standalone residual functions agree with analyzeTable", () => {
    const a = analyzeTable(PARTY_BY_GENDER);
    const adjusted = adjustedResiduals(PARTY_BY_GENDER);
    const pearson = pearsonResiduals(PARTY_BY_GENDER);
    a.adjustedResiduals.flat().forEach((z, k) => expect(z).toBeCloseTo(adjusted.flat()[k], 12));
    a.pearsonResiduals.flat().forEach((z, k) => expect(z).toBeCloseTo(pearson.flat()[k], 12));
  });
});

  it("residuals follow their defining formulas on a wide table and on a narrow one after it (column factors are reused between calls)", () => {
    // 3×150 (more columns than the first factor buffer holds), then 2×3 again.
    const wide = [0, 1, 2].map((i) => Array.from({ length: 150 }, (_, j) => 1 + ((i * 7 + j * 13) % 11)));
    for (const table of [wide, PARTY_BY_GENDER, wide]) {
      const a = analyzeTable(table);
      const n = a.n;
      table.forEach((row, i) =>
        row.forEach((o, j) => {
          const e = (a.rowTotals[i] * a.columnTotals[j]) / n;
          // Pearson (O − E)/√E and Haberman (O − E)/√(E (1 − R/n)(1 − C/n)), by hand.
          expect(a.expected[i][j]).toBeCloseTo(e, 12);
          expect(a.pearsonResiduals[i][j]).toBeCloseTo((o - e) / Math.sqrt(e), 12);
          const v = e * (1 - a.rowTotals[i] / n) * (1 - a.columnTotals[j] / n);
          expect(a.adjustedResiduals[i][j]).toBeCloseTo((o - e) / Math.sqrt(v), 12);
        }),
      );
    }
  });

describe("expected-count rules", () => {
  // "Every expected count at least 5" is common practice (a rule of thumb), not a theorem;
  // Cochran's rule (1954) allows up to 20% below 5 and none below 1.
  it("an expected count of exactly 5 passes the all-≥-5 rule of thumb (common practice)", () => {
    const check = checkExpectedCounts([10, 10], [10, 10]); // every E = 5
    expect(check.minExpected).toBe(5);
    expect(check.allAtLeast5).toBe(true);
    expect(check.cochran).toBe(true);
  });

  it("Cochran: 20% of cells below 5 passes, more fails, any below 1 fails", () => {
    // 2×5, n = 100, column totals make E below 5 in exactly 2 of 10 cells (20%).
    const pass = checkExpectedCounts([50, 50], [24, 24, 24, 24, 4]);
    expect(pass.cellsBelow5).toBe(2);
    expect(pass.cochran).toBe(true);
    expect(pass.allAtLeast5).toBe(false);
    const tooMany = checkExpectedCounts([50, 50], [30, 30, 30, 6, 4]); // E = 3 and 2: 4 cells of 10
    expect(tooMany.fractionBelow5).toBe(0.4);
    expect(tooMany.cochran).toBe(false);
    const belowOne = checkExpectedCounts([90, 10], [50, 48, 2]); // E = 0.2 in one cell
    expect(belowOne.cellsBelow1).toBe(1);
    expect(belowOne.cochran).toBe(false);
  });

  it("analyzeTable reports the same verdict, minExpected and fraction below 5", () => {
    const table = [
      [5, 0, 1, 0],
      [3, 1, 0, 1],
      [7, 0, 0, 2],
    ];
    const a = analyzeTable(table);
    const check = checkExpectedCounts(a.rowTotals, a.columnTotals);
    expect(a.expectedCountCheck).toEqual(check);
    expect(a.minExpected).toBeCloseTo(Math.min(...a.expected.flat()), 14);
    expect(a.fractionExpectedBelow5).toBe(a.expected.flat().filter((e) => e < 5).length / 12);
    expect(a.expectedCountCheck.cochran).toBe(false);
  });
});

describe("bad input is rejected with a RangeError and a plain message", () => {
  const cases: [string, unknown, RegExp][] = [
    ["fewer than 2 rows", [[1, 2, 3]], /at least 2 rows/],
    ["no rows", [], /at least 2 rows/],
    ["fewer than 2 columns", [[1], [2]], /at least 2 columns/],
    ["ragged rows", [[1, 2, 3], [4, 5]], /row 2 has 2 counts but row 1 has 3/],
    ["a negative count", [[1, -2], [3, 4]], /row 1, column 2 is negative/],
    ["a fractional count", [[1, 2], [3.5, 4]], /row 2, column 1 is not a whole number/],
    ["NaN", [[1, Number.NaN], [3, 4]], /row 1, column 2 is NaN/],
    ["an infinite count", [[1, 2], [Infinity, 4]], /row 2, column 1 is infinite/],
    ["an all-zero row", [[1, 2], [0, 0], [3, 4]], /row 2 is all zeros/],
    ["an all-zero column", [[1, 0, 2], [3, 0, 4]], /column 2 is all zeros/],
    ["a non-number", [[1, "2"], [3, 4]], /row 1, column 2 is not a number/],
    ["a BigInt (a raw SQL SUM)", [[1, 2], [BigInt(3), 4]], /row 2, column 1 is not a number/],
  ];
  for (const [label, table, message] of cases) {
    it(label, () => {
      expect(() => analyzeTable(table as number[][])).toThrow(RangeError);
      expect(() => analyzeTable(table as number[][])).toThrow(message);
    });
  }
});
