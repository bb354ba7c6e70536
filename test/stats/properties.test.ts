import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { adjustPValues, analyzeTable, exactPValue, monteCarloPValue } from "@/lib/stats";
import { chooseTableSampler, monteCarloPValueBy, type TableSamplerMethod } from "@/lib/stats/monte-carlo";
import { bruteForceChiSquarePValue, bruteForceProbabilityPValue } from "./enumerate";

// Tables of counts with no all-zero row or column.
function tableArbitrary(maxRows: number, maxColumns: number, maxCount: number) {
  return fc
    .tuple(fc.integer({ min: 2, max: maxRows }), fc.integer({ min: 2, max: maxColumns }))
    .chain(([r, c]) =>
      fc.array(fc.array(fc.integer({ min: 0, max: maxCount }), { minLength: c, maxLength: c }), {
        minLength: r,
        maxLength: r,
      }),
    )
    .filter(
      (t) => t.every((row) => row.some((x) => x > 0)) && t[0].every((_, j) => t.some((row) => row[j] > 0)),
    );
}

function permutation(size: number) {
  return fc.array(fc.nat(), { minLength: size, maxLength: size }).map((keys) =>
    keys.map((k, i) => [k, i] as const).sort((a, b) => a[0] - b[0] || a[1] - b[1]).map(([, i]) => i),
  );
}

const close = (a: number, b: number, tolerance = 1e-10) => Math.abs(a - b) <= tolerance * Math.max(1, Math.abs(b));

describe("invariances of the chi-square analysis", () => {
  it("permuting rows and columns permutes the residuals and leaves X², p and V unchanged", () => {
    fc.assert(
      fc.property(
        tableArbitrary(6, 8, 30).chain((t) => fc.tuple(fc.constant(t), permutation(t.length), permutation(t[0].length))),
        ([table, rowOrder, columnOrder]) => {
          const permuted = rowOrder.map((i) => columnOrder.map((j) => table[i][j]));
          const a = analyzeTable(table);
          const b = analyzeTable(permuted);
          expect(close(b.chiSquare, a.chiSquare)).toBe(true);
          expect(close(b.pValue, a.pValue, 1e-8)).toBe(true);
          expect(close(b.cramersV, a.cramersV)).toBe(true);
          expect(close(b.gSquare, a.gSquare, 1e-9)).toBe(true);
          rowOrder.forEach((i, p) =>
            columnOrder.forEach((j, q) => {
              expect(close(b.adjustedResiduals[p][q], a.adjustedResiduals[i][j])).toBe(true);
              expect(close(b.pearsonResiduals[p][q], a.pearsonResiduals[i][j])).toBe(true);
            }),
          );
        },
      ),
      { numRuns: 200 },
    );
  });

  it("multiplying every count by k multiplies X² (and G²) by k", () => {
    fc.assert(
      fc.property(tableArbitrary(5, 6, 20), fc.integer({ min: 2, max: 50 }), (table, k) => {
        const a = analyzeTable(table);
        const b = analyzeTable(table.map((row) => row.map((x) => k * x)));
        expect(close(b.chiSquare, k * a.chiSquare, 1e-9)).toBe(true);
        expect(close(b.gSquare, k * a.gSquare, 1e-8)).toBe(true);
        expect(close(b.cramersV, a.cramersV, 1e-9)).toBe(true);
      }),
      { numRuns: 200 },
    );
  });

  it("identical rows give X² = 0 and p = 1", () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: 1, max: 500 }), { minLength: 2, maxLength: 12 }),
        fc.integer({ min: 2, max: 8 }),
        (row, copies) => {
          const a = analyzeTable(Array.from({ length: copies }, () => row.slice()));
          expect(a.chiSquare).toBe(0);
          expect(a.pValue).toBe(1);
          expect(a.gSquare).toBe(0);
        },
      ),
      { numRuns: 200 },
    );
  });

  it("contributions sum to 1 and residual signs follow O − E", () => {
    fc.assert(
      fc.property(tableArbitrary(5, 7, 25), (table) => {
        const a = analyzeTable(table);
        const total = a.contributions.flat().reduce((s, c) => s + c, 0);
        expect(a.chiSquare === 0 ? total === 0 : close(total, 1, 1e-12)).toBe(true);
        table.forEach((row, i) =>
          row.forEach((o, j) => {
            const d = o - a.expected[i][j];
            if (Math.abs(d) > 1e-9) expect(Math.sign(a.adjustedResiduals[i][j])).toBe(Math.sign(d));
          }),
        );
      }),
      { numRuns: 200 },
    );
  });
});

describe("exact and Monte Carlo p-values against brute-force enumeration", () => {
  it("exactPValue equals the brute-force Fisher–Freeman–Halton sum", () => {
    fc.assert(
      fc.property(tableArbitrary(3, 4, 3), (table) => {
        expect(close(exactPValue(table), bruteForceProbabilityPValue(table), 1e-10)).toBe(true);
      }),
      { numRuns: 60 },
    );
  });

  it.each<TableSamplerMethod>(["patefield", "permutation"])(
    "Monte Carlo p-values by the %s sampler agree with the exact X²-ordered p-value within 4 standard errors",
    (method) => {
      // Exact here means the same conditional test ordered by X², enumerated in full
      // (see enumerate.ts); the FFH test orders by probability, a different statistic.
      fc.assert(
        fc.property(tableArbitrary(3, 3, 3), fc.integer({ min: 1, max: 1_000_000 }), (table, seed) => {
          const exact = bruteForceChiSquarePValue(table);
          const mc = monteCarloPValueBy(table, { replicates: 4000, seed }, method);
          // The estimator is (1 + hits)/(B + 1); its bias, below 1/(B + 1), is allowed for.
          expect(Math.abs(mc.pValue - exact)).toBeLessThanOrEqual(4 * mc.standardError + 1 / 4001);
        }),
        { numRuns: 40 },
      );
    },
  );

  it("monteCarloPValue is monteCarloPValueBy with the sampler chooseTableSampler picks", () => {
    fc.assert(
      fc.property(tableArbitrary(4, 5, 30), fc.integer({ min: 1, max: 1_000_000 }), (table, seed) => {
        const rows = table.map((row) => row.reduce((a, b) => a + b, 0));
        const columns = table[0].map((_, j) => table.reduce((a, row) => a + row[j], 0));
        const method = chooseTableSampler(rows, columns);
        expect(monteCarloPValue(table, { replicates: 300, seed })).toEqual(monteCarloPValueBy(table, { replicates: 300, seed }, method));
      }),
      { numRuns: 30 },
    );
  });
});

describe("Benjamini–Hochberg adjustment", () => {
  const pValues = fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 40 });

  it("is monotone in the raw p-values and never below them", () => {
    fc.assert(
      fc.property(pValues, (p) => {
        const q = adjustPValues(p, "bh");
        p.forEach((pi, i) => {
          expect(q[i]).toBeGreaterThanOrEqual(pi);
          expect(q[i]).toBeLessThanOrEqual(1);
          p.forEach((pj, j) => {
            if (pi < pj) expect(q[i]).toBeLessThanOrEqual(q[j]);
          });
        });
      }),
      { numRuns: 300 },
    );
  });

  it("lies between the raw p-values and Holm, and Holm lies below Bonferroni", () => {
    fc.assert(
      fc.property(pValues, (p) => {
        const bh = adjustPValues(p, "bh");
        const holm = adjustPValues(p, "holm");
        const bonferroni = adjustPValues(p, "bonferroni");
        p.forEach((_, i) => {
          expect(bh[i]).toBeLessThanOrEqual(holm[i] + 1e-15);
          expect(holm[i]).toBeLessThanOrEqual(bonferroni[i] + 1e-15);
        });
      }),
      { numRuns: 300 },
    );
  });
});
