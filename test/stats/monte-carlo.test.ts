import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import { skipN } from "pure-rand/utils/skipN";
import { describe, expect, it } from "vitest";
import {
  analyzeTable,
  createRandomTableSampler,
  createXoroshiroStream,
  expNonPositive,
  monteCarloPValue,
  WARM_UP,
} from "@/lib/stats";
import { bruteForceChiSquarePValue, enumerateTables, margins } from "./enumerate";

describe("xoroshiro128+ stream", () => {
  it("returns exactly pure-rand's xoroshiro128plus(seed).next() sequence after the warm-up", () => {
    for (const seed of [0, 1, 42, -7, 2 ** 31 - 1, 123_456_789]) {
      const reference = xoroshiro128plus(seed);
      skipN(reference, WARM_UP);
      const stream = createXoroshiroStream(seed);
      let mismatches = 0;
      for (let k = 0; k < 10_000; k++) if (stream.nextInt32() !== reference.next()) mismatches++;
      expect(mismatches).toBe(0);
      expect(stream.getState()).toEqual([...reference.getState()]);
    }
  });

  it("gives uniforms in [0, 1) with mean ½", () => {
    const stream = createXoroshiroStream(5);
    let sum = 0;
    let outside = 0;
    for (let k = 0; k < 100_000; k++) {
      const u = stream.nextUniform32();
      if (!(u >= 0 && u < 1)) outside++;
      sum += u;
    }
    expect(outside).toBe(0);
    expect(Math.abs(sum / 100_000 - 0.5)).toBeLessThan(4 * Math.sqrt(1 / 12 / 100_000));
  });
});

describe("table-driven exponential", () => {
  it("is within 1e-15 relative of Math.exp on [−64, 0] and defers outside", () => {
    let worst = 0;
    for (let k = 0; k <= 200_000; k++) {
      const x = -64 * (k / 200_000) ** 1.5;
      worst = Math.max(worst, Math.abs(expNonPositive(x) / Math.exp(x) - 1));
    }
    expect(worst).toBeLessThan(1e-15);
    expect(expNonPositive(-100)).toBe(Math.exp(-100));
    expect(Math.abs(expNonPositive(1e-12) / Math.exp(1e-12) - 1)).toBeLessThan(1e-15);
    expect(expNonPositive(0)).toBe(1);
  });
});

describe("Patefield's sampler (AS 159)", () => {
  it("keeps both margins in every table", () => {
    const rows = [7, 3, 12, 5];
    const columns = [6, 9, 2, 10];
    const sampler = createRandomTableSampler(rows, columns, { seed: 3 });
    const out = new Int32Array(16);
    let broken = 0;
    for (let b = 0; b < 2000; b++) {
      sampler.sample(out);
      for (let i = 0; i < 4; i++) if (out[i * 4] + out[i * 4 + 1] + out[i * 4 + 2] + out[i * 4 + 3] !== rows[i]) broken++;
      for (let j = 0; j < 4; j++) if (out[j] + out[4 + j] + out[8 + j] + out[12 + j] !== columns[j]) broken++;
      if (!out.every((x) => x >= 0)) broken++;
    }
    expect(broken).toBe(0);
  });

  it("draws each table with its exact conditional probability (χ² goodness of fit over all tables)", () => {
    const table = [
      [2, 1, 1],
      [0, 2, 1],
      [1, 0, 2],
    ];
    const { rows, columns } = margins(table);
    const all = enumerateTables(rows, columns);
    const index = new Map(all.map((t, k) => [t.cells.join(","), k]));
    const counts = new Array<number>(all.length).fill(0);
    const sampler = createRandomTableSampler(rows, columns, { seed: 11 });
    const out = new Int32Array(9);
    const draws = 200_000;
    for (let b = 0; b < draws; b++) {
      sampler.sample(out);
      counts[index.get(Array.from(out).join(",")) as number]++;
    }
    let x2 = 0;
    all.forEach((t, k) => {
      const e = draws * t.probability;
      x2 += ((counts[k] - e) * (counts[k] - e)) / e;
    });
    // df = tables − 1; a fair sampler exceeds df + 5√(2 df) with probability far below 1e-4.
    const df = all.length - 1;
    expect(x2).toBeLessThan(df + 5 * Math.sqrt(2 * df));
  });

  it("has cell means equal to the expected counts R·C/n", () => {
    const rows = [40, 25, 60];
    const columns = [30, 45, 10, 40];
    const n = 125;
    const sampler = createRandomTableSampler(rows, columns, { seed: 8 });
    const out = new Int32Array(12);
    const sums = new Float64Array(12);
    const draws = 20_000;
    for (let b = 0; b < draws; b++) {
      sampler.sample(out);
      for (let k = 0; k < 12; k++) sums[k] += out[k];
    }
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 4; j++) {
        const e = (rows[i] * columns[j]) / n;
        // Standard error of a mean of 20,000 draws is below √(e/20,000).
        expect(Math.abs(sums[i * 4 + j] / draws - e)).toBeLessThan(5 * Math.sqrt(e / draws));
      }
    }
  });

  it("returns Σ w x² for the weights it was given", () => {
    const weights = Float64Array.from({ length: 6 }, (_, k) => k + 1);
    const a = createRandomTableSampler([3, 4], [2, 2, 3], { seed: 2, weights });
    const b = createRandomTableSampler([3, 4], [2, 2, 3], { seed: 2 });
    const out = new Int32Array(6);
    for (let k = 0; k < 100; k++) {
      const weighted = a.sample();
      b.sample(out);
      expect(weighted).toBe(Array.from(out).reduce((s, x, c) => s + x * x * weights[c], 0));
    }
  });
});

describe("monteCarloPValue", () => {
  const table = [
    [12, 7, 3, 9],
    [15, 4, 6, 2],
    [9, 11, 2, 5],
  ];

  it("is reproducible for a seed and changes with the seed", () => {
    const a = monteCarloPValue(table, { replicates: 2000, seed: 7 });
    const b = monteCarloPValue(table, { replicates: 2000, seed: 7 });
    const c = monteCarloPValue(table, { replicates: 2000, seed: 8 });
    expect(a).toEqual(b);
    expect(c.hits).not.toBe(a.hits);
  });

  it("reports p = (1 + hits)/(B + 1), SE = √(p(1−p)/B) and the observed X²", () => {
    const r = monteCarloPValue(table, { replicates: 999, seed: 1 });
    expect(r.replicates).toBe(999);
    expect(r.pValue).toBe((1 + r.hits) / 1000);
    expect(r.standardError).toBeCloseTo(Math.sqrt((r.pValue * (1 - r.pValue)) / 999), 15);
    expect(r.statistic).toBeCloseTo(analyzeTable(table).chiSquare, 10);
  });

  it("counts ties: a table with X² = 0 has p = 1", () => {
    const r = monteCarloPValue(
      [
        [2, 4],
        [3, 6],
      ],
      { replicates: 500, seed: 1 },
    );
    expect(r.hits).toBe(500);
    expect(r.pValue).toBe(1);
  });

  it("agrees with the exact X²-ordered conditional p-value within 4 standard errors (Fisher's tea table)", () => {
    const tea = [
      [3, 1],
      [1, 3],
    ];
    const exact = bruteForceChiSquarePValue(tea); // P(X² ≥ 2) = 0.4857…
    const r = monteCarloPValue(tea, { replicates: 20_000, seed: 4 });
    expect(Math.abs(r.pValue - exact)).toBeLessThan(4 * r.standardError);
  });

  it("defaults to 10,000 replicates and seed 1", () => {
    const r = monteCarloPValue([[3, 1], [1, 3]]);
    expect(r.replicates).toBe(10_000);
    expect(r.seed).toBe(1);
    expect(r).toEqual(monteCarloPValue([[3, 1], [1, 3]], { replicates: 10_000, seed: 1 }));
  });

  it("rejects bad options and bad tables", () => {
    expect(() => monteCarloPValue(table, { replicates: 0 })).toThrow(RangeError);
    expect(() => monteCarloPValue(table, { replicates: 1.5 })).toThrow(RangeError);
    expect(() => monteCarloPValue(table, { seed: 0.5 })).toThrow(RangeError);
    expect(() => monteCarloPValue([[1, 2, 3]], {})).toThrow(/at least 2 rows/);
    expect(() => monteCarloPValue([[1, -1], [2, 3]], {})).toThrow(/negative/);
  });
});
