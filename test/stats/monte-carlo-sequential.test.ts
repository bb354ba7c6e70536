/**
 * Sequential Monte Carlo p-values (Besag & Clifford 1991, "Sequential Monte Carlo
 * p-values", Biometrika 78(2):301–304): draw tables until h of them are at least as
 * extreme as the observed one, p = h/L at the L-th draw, else the full run's
 * (1 + hits)/(B + 1).
 */
import { describe, expect, it } from "vitest";
import { createRandomTableSampler, exactPValue, monteCarloPValue } from "@/lib/stats";
import { monteCarloPValueBy, sequentialStandardError, type TableSamplerMethod } from "@/lib/stats/monte-carlo";
import { bruteForceChiSquarePValue, margins } from "./enumerate";

const table = [
  [12, 7, 3, 9],
  [15, 4, 6, 2],
  [9, 11, 2, 5],
];
const samplers: TableSamplerMethod[] = ["patefield", "permutation"];

describe("sequential stopping: the same draws, cut at the h-th hit", () => {
  it.each(samplers)("with the %s sampler, stops at the draw whose running count of the full run reaches h", (method) => {
    for (const [seed, h] of [
      [1, 10],
      [2, 50],
      [3, 100],
      [4, 1],
    ]) {
      const s = monteCarloPValueBy(table, { replicates: 10_000, seed, stopAfterHits: h }, method);
      expect(s.stoppedEarly).toBe(true);
      expect(s.hits).toBe(h);
      // The non-sequential function on the first L, and on the first L − 1, draws of
      // the same seed: the L-th draw is the h-th hit (draws are a prefix of the full run).
      expect(monteCarloPValueBy(table, { replicates: s.replicates, seed }, method).hits).toBe(h);
      if (s.replicates > 1) expect(monteCarloPValueBy(table, { replicates: s.replicates - 1, seed }, method).hits).toBe(h - 1);
    }
  });

  it("reports p = h/L, SE = p√((1 − p)/h), the drawn count as replicates, and the cap", () => {
    const s = monteCarloPValue(table, { replicates: 10_000, seed: 5, stopAfterHits: 40 });
    expect(s.stoppedEarly).toBe(true);
    expect(s.pValue).toBe(40 / s.replicates);
    expect(s.standardError).toBeCloseTo(s.pValue * Math.sqrt((1 - s.pValue) / 40), 15);
    expect(s.standardError).toBe(sequentialStandardError(40, s.replicates));
    expect(s.maxReplicates).toBe(10_000);
    expect(s.stopAfterHits).toBe(40);
    expect(s.replicates).toBeLessThan(10_000);
  });

  it("when h is never reached, equals the non-sequential run", () => {
    // Exact X²-ordered p ≈ 0.00023 (enumeration): about 2 hits in 10,000, never 100.
    const rare = [
      [8, 1, 2],
      [1, 6, 1],
      [2, 1, 7],
    ];
    for (const seed of [1, 2, 3]) {
      const full = monteCarloPValue(rare, { replicates: 10_000, seed });
      const s = monteCarloPValue(rare, { replicates: 10_000, seed, stopAfterHits: 100 });
      expect(s.stoppedEarly).toBe(false);
      expect({ ...s, stopAfterHits: null }).toEqual(full);
      expect(s.pValue).toBe((1 + s.hits) / 10_001);
    }
    // h equal to the cap: only a run whose every draw is a hit stops, on the last draw.
    const capped = monteCarloPValue(table, { replicates: 500, seed: 9, stopAfterHits: 500 });
    expect(capped).toEqual({ ...monteCarloPValue(table, { replicates: 500, seed: 9 }), stopAfterHits: 500 });
  });

  it("a full run reports stoppedEarly false, stopAfterHits null and maxReplicates = replicates", () => {
    const full = monteCarloPValue(table, { replicates: 999, seed: 1 });
    expect(full).toMatchObject({ stoppedEarly: false, stopAfterHits: null, maxReplicates: 999, replicates: 999 });
  });

  it("counts ties as hits: a table with X² = 0 stops after h draws with p = 1", () => {
    const r = monteCarloPValue(
      [
        [2, 4],
        [3, 6],
      ],
      { replicates: 500, seed: 1, stopAfterHits: 20 },
    );
    expect(r).toMatchObject({ stoppedEarly: true, hits: 20, replicates: 20, pValue: 1 });
  });

  it("rejects bad stopAfterHits with a RangeError", () => {
    for (const h of [0, -1, 1.5, Number.NaN, Number.POSITIVE_INFINITY, 10_001]) {
      expect(() => monteCarloPValue(table, { replicates: 10_000, stopAfterHits: h })).toThrow(RangeError);
    }
    expect(() => monteCarloPValue(table, { stopAfterHits: 20_000 })).toThrow(/from 1 to replicates \(10000\)/);
  });
});

describe("agreement with exact conditional p-values", () => {
  // The target is the exact X²-ordered conditional p, enumerated over every table with
  // the margins (enumerate.ts, independent of lib/stats). Where X² and probability
  // order the tables alike, it equals the Fisher–Freeman–Halton p (exactPValue, itself
  // checked against R's fisher.test), and that is checked too. The two orderings differ
  // in general (e.g. 0.2439 by X² against FFH 0.2526 for the 3×4 table below).
  const cases: { table: number[][]; ffhSameOrder: boolean }[] = [
    { table: [[3, 1], [1, 3]], ffhSameOrder: true }, // p = 0.4857 (Fisher's tea tasting)
    { table: [[5, 4, 3, 2], [3, 4, 5, 4]], ffhSameOrder: true }, // p = 0.7789
    { table: [[2, 3, 1, 4], [3, 1, 5, 2], [4, 2, 3, 0]], ffhSameOrder: false }, // p = 0.2439
    { table: [[10, 2, 3], [2, 9, 2]], ffhSameOrder: true }, // p = 0.0059
    { table: [[12, 3, 1, 2], [2, 10, 4, 1]], ffhSameOrder: false }, // p = 0.0019
    { table: [[8, 1, 2], [1, 6, 1], [2, 1, 7]], ffhSameOrder: false }, // p = 0.00023
  ];
  for (const { table: t, ffhSameOrder } of cases) {
    it(`${JSON.stringify(t)}, h = 20 and 100, three seeds each: within 4 standard errors`, () => {
      const exact = bruteForceChiSquarePValue(t);
      if (ffhSameOrder) expect(exactPValue(t)).toBeCloseTo(exact, 12);
      let stopped = 0;
      for (const h of [20, 100]) {
        for (const seed of [11, 12, 13]) {
          const r = monteCarloPValue(t, { replicates: 10_000, seed, stopAfterHits: h });
          if (r.stoppedEarly) stopped++;
          // 1/(B + 1): the full run's (1 + hits)/(B + 1) sits up to that above hits/B.
          expect(Math.abs(r.pValue - exact)).toBeLessThanOrEqual(4 * r.standardError + 1 / 10_001);
        }
      }
      // Large p stops (about h/p draws), small p draws the cap: both branches are exercised.
      if (exact > 0.05) expect(stopped).toBe(6);
      if (exact < 0.001) expect(stopped).toBe(0);
    });
  }
});

describe("validity under the null (Besag & Clifford 1991: P(p ≤ u) ≤ u)", () => {
  // Null tables: drawn by Patefield's sampler from fixed margins, i.e. from the exact
  // conditional null distribution. Each gets a sequential p with its own seed.
  const rows = [14, 12, 9];
  const columns = [10, 8, 7, 6, 4];
  const count = 4000;
  const h = 5;
  const cap = 200;
  const alphas = [0.01, 0.05, 0.1, 0.25, 0.5];
  const sampler = createRandomTableSampler(rows, columns, { seed: 2024 });
  const out = new Int32Array(rows.length * columns.length);
  const results: { p: number; hits: number; drawn: number; stopped: boolean }[] = [];
  for (let k = 0; k < count; k++) {
    sampler.sample(out);
    const t = rows.map((_, i) => Array.from(out.subarray(i * columns.length, (i + 1) * columns.length)));
    const r = monteCarloPValue(t, { replicates: cap, seed: 100 + k, stopAfterHits: h });
    results.push({ p: r.pValue, hits: r.hits, drawn: r.replicates, stopped: r.stoppedEarly });
  }
  // Binomial sampling error of a rejection fraction at level α over `count` tables.
  const bound = (alpha: number) => alpha + 3 * Math.sqrt((alpha * (1 - alpha)) / count);

  it("draws null tables with the fixed margins and stops most of them early", () => {
    expect(margins(rows.map((_, i) => Array.from(out.subarray(i * 5, i * 5 + 5))))).toEqual({ rows, columns });
    const stopped = results.filter((r) => r.stopped).length;
    expect(stopped).toBeGreaterThan(0.8 * count);
    expect(stopped).toBeLessThan(count);
  });

  it.each(alphas)("the fraction with p ≤ %s is not above α beyond 3 binomial standard errors", (alpha) => {
    const rejected = results.filter((r) => r.p <= alpha).length / count;
    expect(rejected).toBeLessThanOrEqual(bound(alpha));
  });

  it("has teeth: the same draws with (h − 1)/(L − 1), the unbiased estimate of p, are not a valid p-value", () => {
    // Haldane's (1945) unbiased estimator under inverse sampling (from memory), applied
    // to the stopped runs: it sits below h/L, and at α = 0.25 it rejects too often.
    const rejected = results.filter((r) => (r.stopped ? (r.hits - 1) / (r.drawn - 1) : r.p) <= 0.25).length / count;
    expect(rejected).toBeGreaterThan(bound(0.25));
  });
});
