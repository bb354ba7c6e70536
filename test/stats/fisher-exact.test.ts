import { describe, expect, it } from "vitest";
import { exactIsFeasible, exactPValue, fisherExactTest } from "@/lib/stats";
import { bruteForceProbabilityPValue, enumerateTables, margins } from "./enumerate";
import { R, relativeError } from "./reference";

describe("Fisher's tea-tasting table [[3, 1], [1, 3]] (Fisher 1935)", () => {
  it("two-sided exact p = 0.4857 (R fisher.test gives 0.4857)", () => {
    expect(exactPValue([[3, 1], [1, 3]]).toFixed(4)).toBe("0.4857");
  });

  it(`is twice R's one-sided 0.2429 (${R.version} fisher.test, alternative = "greater"), the table being symmetric`, () => {
    expect(R.teaOneSided.toFixed(4)).toBe("0.2429");
    expect(exactPValue([[3, 1], [1, 3]])).toBeCloseTo(2 * R.teaOneSided, 14);
  });
});

describe(`Fisher–Freeman–Halton p-values against ${R.version} fisher.test (fixture r-reference.json)`, () => {
  for (const { observed, pValue } of R.fisher) {
    const shape = `${observed.length}×${observed[0].length}`;
    it(`${shape} ${JSON.stringify(observed)}`, () => {
      expect(relativeError(exactPValue(observed), pValue)).toBeLessThan(1e-9);
    });
  }

  it("is the same for the table and its transpose", () => {
    const table = [
      [2, 3, 1, 4],
      [3, 1, 5, 2],
      [4, 2, 3, 0],
    ];
    const transpose = table[0].map((_, j) => table.map((row) => row[j]));
    expect(exactPValue(transpose)).toBeCloseTo(exactPValue(table), 13);
  });
});

describe("against a brute-force enumeration of every table with the margins", () => {
  const tables = [
    [
      [1, 2, 0],
      [0, 1, 3],
    ],
    [
      [2, 0, 1],
      [1, 2, 0],
      [0, 1, 2],
    ],
    [
      [3, 1, 0, 2],
      [0, 2, 3, 1],
    ],
    [
      [1, 1, 2],
      [2, 0, 1],
      [0, 3, 1],
      [1, 1, 0],
    ],
  ];
  for (const table of tables) {
    it(JSON.stringify(table), () => {
      const { rows, columns } = margins(table);
      expect(enumerateTables(rows, columns).reduce((s, t) => s + t.probability, 0)).toBeCloseTo(1, 12);
      expect(exactPValue(table)).toBeCloseTo(bruteForceProbabilityPValue(table), 12);
    });
  }
});

describe("work limits", () => {
  it("throws a RangeError naming the limit when the budget is exceeded", () => {
    const table = [
      [4, 5, 3, 6, 2, 8],
      [7, 2, 6, 3, 5, 4],
      [3, 6, 4, 5, 7, 1],
    ];
    expect(() => exactPValue(table, { maxSteps: 1000 })).toThrow(RangeError);
    expect(() => exactPValue(table, { maxSteps: 1000 })).toThrow(/more than 1,000 enumeration steps; use monteCarloPValue/);
    expect(fisherExactTest(table).steps).toBeGreaterThan(1000);
  });

  it("exactIsFeasible gives a result object with a reason, both ways", () => {
    const small = exactIsFeasible([[3, 1], [1, 3]]);
    expect(small.feasible).toBe(true);
    expect(small.reason).toMatch(/within the budget/);
    const big = exactIsFeasible([
      [400, 300, 200, 100, 50],
      [350, 320, 180, 120, 60],
      [300, 310, 220, 90, 80],
      [420, 280, 210, 110, 40],
    ]);
    expect(big.feasible).toBe(false);
    expect(big.reason).toMatch(/use monteCarloPValue/);
    expect(big.estimatedSteps).toBeGreaterThan(big.maxSteps);
  });

  it("its estimate is above the steps actually taken for the R fixture tables", () => {
    for (const { observed } of R.fisher) {
      const screen = exactIsFeasible(observed);
      expect(screen.feasible).toBe(true);
      expect(screen.estimatedSteps).toBeGreaterThanOrEqual(fisherExactTest(observed).steps);
    }
  });

  it("rejects bad input and a bad budget", () => {
    expect(() => exactPValue([[1, 2]])).toThrow(RangeError);
    expect(() => exactPValue([[1, 0], [2, 0]])).toThrow(/column 2 is all zeros/);
    expect(() => exactPValue([[1, 2], [3, 4]], { maxSteps: 0 })).toThrow(RangeError);
  });
});

describe("2×2 tables with large counts", () => {
  it("are feasible and exact: [[60, 40], [30, 70]] against the hypergeometric sum", () => {
    const table = [
      [60, 40],
      [30, 70],
    ];
    expect(exactIsFeasible(table).feasible).toBe(true);
    // Brute force over the single free cell x11 (row totals 100, 100; column totals 90, 110).
    const lf = [0];
    for (let k = 1; k <= 200; k++) lf.push(lf[k - 1] + Math.log(k));
    const logP = (x: number) =>
      lf[100] + lf[100] + lf[90] + lf[110] - lf[200] - lf[x] - lf[100 - x] - lf[90 - x] - lf[10 + x];
    const observed = logP(60);
    let p = 0;
    for (let x = 0; x <= 90; x++) if (logP(x) <= observed + 1e-7) p += Math.exp(logP(x));
    expect(relativeError(exactPValue(table), p)).toBeLessThan(1e-9);
  });
});
