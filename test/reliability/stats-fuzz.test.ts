import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  adjustPValues,
  analyzeTable,
  exactPValue,
  monteCarloPValue,
  poolSparseCategories,
  rateHomogeneity,
  type PAdjustMethod,
  type PoolOptions,
} from "@/lib/stats";

/**
 * Bad input to the statistics engine: NaN, ±∞, negative, fractional, beyond 2⁵³, not a
 * number at all, ragged, empty, all-zero rows and columns, huge. Each call either
 * succeeds with a result free of NaN (p-values in [0, 1]) or throws a RangeError with a
 * plain message — never a TypeError from deep inside, never NaN dressed as a result.
 * (The valid-input properties live in test/stats/properties.test.ts.)
 */

const count = fc.oneof(
  { weight: 6, arbitrary: fc.integer({ min: 0, max: 60 }) },
  { weight: 1, arbitrary: fc.integer({ min: 0, max: 2 ** 31 }) },
  {
    weight: 2,
    arbitrary: fc.constantFrom(
      Number.NaN,
      Number.POSITIVE_INFINITY,
      Number.NEGATIVE_INFINITY,
      -1,
      -0,
      0.5,
      2.000001,
      1e300,
      2 ** 53,
      2 ** 53 + 2,
      Number.MAX_SAFE_INTEGER,
      Number.MAX_VALUE,
      Number.MIN_VALUE,
    ),
  },
  { weight: 1, arbitrary: fc.double() },
  // Not numbers at all, as JSON or a careless caller might pass them.
  { weight: 1, arbitrary: fc.constantFrom<unknown>("3", null, undefined, true, {}, [], 3n).map((v) => v as number) },
);

const rectangular = fc
  .tuple(fc.integer({ min: 0, max: 6 }), fc.integer({ min: 0, max: 7 }))
  .chain(([r, c]) => fc.array(fc.array(count, { minLength: c, maxLength: c }), { minLength: r, maxLength: r }));
const ragged = fc.array(fc.array(count, { maxLength: 7 }), { maxLength: 6 });
const notATable = fc.constantFrom<unknown>(null, undefined, 7, "table", {}, [1, 2, 3], [[1, 2], "row"], [[1, 2], null], [[]], []).map(
  (v) => v as number[][],
);
const table = fc.oneof({ weight: 5, arbitrary: rectangular }, { weight: 2, arbitrary: ragged }, { weight: 1, arbitrary: notATable });

/** Every number reachable in a result (arrays, nested objects), with its path. */
function numbers(value: unknown, path = "result", out: [string, number][] = []): [string, number][] {
  if (typeof value === "number") out.push([path, value]);
  else if (Array.isArray(value) || ArrayBuffer.isView(value)) Array.from(value as ArrayLike<unknown>).forEach((v, i) => numbers(v, `${path}[${i}]`, out));
  else if (value && typeof value === "object") for (const [k, v] of Object.entries(value)) numbers(v, `${path}.${k}`, out);
  return out;
}

/** Calls `f`; a throw must be a RangeError with a plain message; a result goes to `check`. */
function outcome<T>(f: () => T, check: (result: T) => void, allowNaN: (path: string) => boolean = () => false): void {
  let result: T;
  try {
    result = f();
  } catch (error) {
    expect(error, `threw ${String(error)}`).toBeInstanceOf(RangeError);
    const message = (error as Error).message;
    expect(message.length).toBeGreaterThan(5);
    expect(message).not.toMatch(/Cannot read|is not a function|undefined is|of undefined|of null/);
    return;
  }
  for (const [path, n] of numbers(result)) {
    if (Number.isNaN(n)) expect(allowNaN(path), `${path} is NaN in a result`).toBe(true);
  }
  check(result);
}

const probability = (p: number) => {
  expect(p).toBeGreaterThanOrEqual(0);
  expect(p).toBeLessThanOrEqual(1);
};

// Documented: Bergsma's corrected V is NaN when n ≤ max(r, c) (too few counts to correct).
const correctedV = (path: string) => path === "result.cramersVCorrected";

describe("statistics engine under bad input", () => {
  it("analyzeTable: a valid analysis or a RangeError", () => {
    fc.assert(
      fc.property(table, (t) =>
        outcome(
          () => analyzeTable(t),
          (a) => {
            expect(Number.isFinite(a.chiSquare) && a.chiSquare >= 0).toBe(true);
            probability(a.pValue);
            probability(a.gPValue);
            expect(a.df).toBeGreaterThan(0);
          },
          correctedV,
        ),
      ),
      { numRuns: 1500 },
    );
  });

  it("exactPValue: a p-value or a RangeError (including the step budget)", () => {
    fc.assert(fc.property(table, (t) => outcome(() => exactPValue(t, { maxSteps: 50_000 }), probability)), { numRuns: 800 });
  });

  it("exactPValue and monteCarloPValue refuse bad options with a RangeError", () => {
    const bad = fc.constantFrom<unknown>(Number.NaN, -1, 0, 1.5, Number.POSITIVE_INFINITY, "10", null, 1e9, 2 ** 60);
    fc.assert(
      fc.property(bad, bad, (a, b) => {
        outcome(() => exactPValue([[3, 1], [1, 3]], { maxSteps: a as number }), probability);
        outcome(() => monteCarloPValue([[3, 1], [1, 3]], { replicates: a as number, seed: b as number }), (r) => probability(r.pValue));
      }),
      { numRuns: 200 },
    );
  });

  it("monteCarloPValue: a p-value with its standard error, or a RangeError", () => {
    fc.assert(
      fc.property(table, fc.integer({ min: -5, max: 2 ** 40 }), (t, seed) =>
        outcome(
          () => monteCarloPValue(t, { replicates: 200, seed }),
          (r) => {
            probability(r.pValue);
            expect(r.pValue).toBeGreaterThan(0);
            expect(Number.isFinite(r.standardError)).toBe(true);
          },
        ),
      ),
      { numRuns: 600 },
    );
  });

  it("adjustPValues: adjusted values in [0, 1] never below the raw ones, or a RangeError", () => {
    const p = fc.oneof(
      fc.double({ min: 0, max: 1, noNaN: true }),
      fc.constantFrom(Number.NaN, -0, -1e-300, 1 + 1e-12, Number.POSITIVE_INFINITY, 5, Number.MIN_VALUE),
      fc.constantFrom<unknown>("0.5", null, undefined, true).map((v) => v as number),
    );
    const method = fc.oneof(fc.constantFrom<PAdjustMethod>("bh", "holm", "bonferroni"), fc.string({ maxLength: 8 }).map((s) => s as PAdjustMethod));
    fc.assert(
      fc.property(fc.oneof(fc.array(p, { maxLength: 30 }), fc.constantFrom<unknown>(null, "p", 0.5, {}).map((v) => v as number[])), method, (ps, m) =>
        outcome(
          () => adjustPValues(ps, m),
          (adjusted) => {
            expect(adjusted).toHaveLength(ps.length);
            adjusted.forEach((a, i) => {
              probability(a);
              expect(a).toBeGreaterThanOrEqual(ps[i]);
            });
          },
        ),
      ),
      { numRuns: 1000 },
    );
  });

  it("rateHomogeneity: a rate comparison or a RangeError", () => {
    const units = fc.oneof(
      fc.integer({ min: 1, max: 1e7 }),
      fc.double({ min: 1e-6, max: 1e12, noNaN: true }),
      fc.constantFrom(0, -3, Number.NaN, Number.POSITIVE_INFINITY, 1e308, Number.MIN_VALUE),
      fc.constantFrom<unknown>("100", null).map((v) => v as number),
    );
    fc.assert(
      fc.property(fc.array(count, { maxLength: 8 }), fc.array(units, { maxLength: 8 }), (d, u) =>
        outcome(
          () => rateHomogeneity(d, u),
          (r) => {
            probability(r.pValue);
            expect(r.chiSquare).toBeGreaterThanOrEqual(0);
            // Units as small as 5e-324 overflow X² to +∞: then the p-value is 0, not NaN.
            if (!Number.isFinite(r.chiSquare)) expect(r.pValue).toBe(0);
            expect(r.perGroup).toHaveLength(d.length);
          },
        ),
      ),
      { numRuns: 1500 },
    );
  });

  it("poolSparseCategories: a pooled table whose columns add up to the original, or a RangeError", () => {
    const label = fc.oneof(fc.constantFrom("scratch", "dent", "crack", "burr", "warp", "stain", "", "Other (pooled)", "surface"), fc.string({ maxLength: 4 }));
    fc.assert(
      fc.property(
        table,
        fc.array(label, { maxLength: 8 }),
        fc.dictionary(label, fc.oneof(label, fc.constant("surface")), { maxKeys: 4 }),
        fc.constantFrom<unknown>("cochran", "all5", "none", undefined, 5),
        fc.option(label, { nil: undefined }),
        (t, labels, families, rule, pooledLabel) =>
          outcome(
            () => {
              // Give most tables a label per column, so the pooling itself runs, not only the checks.
              const columnLabels = Array.isArray(t) && Array.isArray(t[0]) && labels.length < t[0].length ? t[0].map((_, j) => `c${j}`) : labels;
              const options = { columnLabels, families, rule, pooledLabel } as PoolOptions;
              return { result: poolSparseCategories(t, options), t };
            },
            ({ result, t: original }) => {
              const sum = (rows: number[][]) => rows.flat().reduce((s, x) => s + x, 0);
              expect(sum(result.observed)).toBe(sum(original));
              expect(result.labels.length).toBeGreaterThanOrEqual(2);
              expect(result.observed.every((row) => row.length === result.labels.length)).toBe(true);
            },
          ),
      ),
      { numRuns: 1500 },
    );
  });
});
