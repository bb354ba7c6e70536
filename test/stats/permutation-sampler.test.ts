import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { chiSquareUpperTail, createRandomTableSampler, type RandomTableSampler } from "@/lib/stats";
import { chooseTableSampler } from "@/lib/stats/monte-carlo";
import {
  createPermutationTableSampler,
  permutationLayout,
  PERMUTATION_SAMPLER_MAX_N,
  useShuffleKernel,
} from "@/lib/stats/permutation-sampler";
import { createShuffleKernel, shuffleKernelBytes } from "@/lib/stats/shuffle-kernel";
import { enumerateTables } from "./enumerate";

type SamplerFactory = (rows: number[], columns: number[], seed: number) => RandomTableSampler;
const samplers: [string, SamplerFactory][] = [
  ["Patefield", (rows, columns, seed) => createRandomTableSampler(rows, columns, { seed })],
  ["permutation", (rows, columns, seed) => createPermutationTableSampler(rows, columns, { seed })],
];

/**
 * Pearson goodness of fit of observed counts to probabilities, with
 * lib/stats's own upper tail; categories expected below 5 times are pooled
 * into one (pooled with the smallest of the rest if still below 5).
 */
function goodnessOfFit(counts: number[], probabilities: number[], draws: number): { x2: number; df: number; p: number } {
  const bins: { o: number; e: number }[] = [];
  let small = { o: 0, e: 0 };
  counts.forEach((o, k) => {
    const e = draws * probabilities[k];
    if (e < 5) small = { o: small.o + o, e: small.e + e };
    else bins.push({ o, e });
  });
  if (small.e > 0) {
    if (small.e < 5 && bins.length > 0) {
      bins.sort((a, b) => a.e - b.e);
      bins[0] = { o: bins[0].o + small.o, e: bins[0].e + small.e };
    } else bins.push(small);
  }
  const x2 = bins.reduce((s, b) => s + ((b.o - b.e) * (b.o - b.e)) / b.e, 0);
  const df = bins.length - 1;
  return { x2, df, p: chiSquareUpperTail(x2, df) };
}

function checkMargins(out: Int32Array, rows: number[], columns: number[]): boolean {
  const c = columns.length;
  for (let i = 0; i < rows.length; i++) {
    let s = 0;
    for (let j = 0; j < c; j++) s += out[i * c + j];
    if (s !== rows[i]) return false;
  }
  for (let j = 0; j < c; j++) {
    let s = 0;
    for (let i = 0; i < rows.length; i++) s += out[i * c + j];
    if (s !== columns[j]) return false;
  }
  return out.every((x) => x >= 0);
}

// Margins of r×c tables, zeros allowed: a random table's row and column sums.
const marginsArbitrary = fc
  .tuple(fc.integer({ min: 2, max: 7 }), fc.integer({ min: 2, max: 9 }))
  .chain(([r, c]) => fc.array(fc.array(fc.nat({ max: 40 }), { minLength: c, maxLength: c }), { minLength: r, maxLength: r }))
  .map((t) => ({
    rows: t.map((row) => row.reduce((a, b) => a + b, 0)),
    columns: t[0].map((_, j) => t.reduce((a, row) => a + row[j], 0)),
  }));

describe("permutation sampler", () => {
  it("keeps both margins in every table and returns Σ w x² of the table it wrote (property)", () => {
    fc.assert(
      fc.property(marginsArbitrary, fc.integer(), ({ rows, columns }, seed) => {
        const cells = rows.length * columns.length;
        const weights = Float64Array.from({ length: cells }, (_, k) => 1 + (k % 7) / 3);
        const sampler = createPermutationTableSampler(rows, columns, { seed, weights });
        const out = new Int32Array(cells);
        for (let b = 0; b < 20; b++) {
          const weighted = sampler.sample(out);
          expect(checkMargins(out, rows, columns)).toBe(true);
          const direct = Array.from(out).reduce((s, x, k) => s + x * x * weights[k], 0);
          expect(Math.abs(weighted - direct)).toBeLessThanOrEqual(1e-12 * Math.max(1, direct));
        }
      }),
      { numRuns: 300 },
    );
  });

  it("is reproducible for a seed, and interleaved samplers draw what each draws alone", () => {
    const a = () => createPermutationTableSampler([5, 9, 4], [6, 3, 7, 2], { seed: 21 });
    const b = () => createPermutationTableSampler([30, 12], [10, 10, 22], { seed: 21 });
    const alone = (make: () => RandomTableSampler, cells: number) => {
      const s = make();
      const out = new Int32Array(cells);
      return Array.from({ length: 50 }, () => (s.sample(out), Array.from(out).join(",")));
    };
    const aAlone = alone(a, 12);
    const bAlone = alone(b, 6);
    expect(alone(a, 12)).toEqual(aAlone);
    const sa = a();
    const sb = b();
    const outA = new Int32Array(12);
    const outB = new Int32Array(6);
    for (let k = 0; k < 50; k++) {
      sa.sample(outA);
      sb.sample(outB);
      expect(Array.from(outA).join(",")).toBe(aAlone[k]);
      expect(Array.from(outB).join(",")).toBe(bAlone[k]);
    }
    expect(new Set(aAlone).size).toBeGreaterThan(10);
  });

  it("lays the blocks along the margin with the largest total, that block last", () => {
    expect(permutationLayout([3, 5], [2, 2, 4])).toMatchObject({ blocksAreColumns: false, shuffled: 3 });
    expect(permutationLayout([4, 4], [1, 6, 1])).toMatchObject({ blocksAreColumns: true, shuffled: 2 });
    expect(Array.from(permutationLayout([4, 4], [1, 6, 1]).blockOrder)).toEqual([0, 2, 1]);
  });

  it("refuses tables beyond its workspace", () => {
    expect(() => createPermutationTableSampler([PERMUTATION_SAMPLER_MAX_N, 1], [1, PERMUTATION_SAMPLER_MAX_N], { seed: 1 })).toThrow(RangeError);
    expect(() => createPermutationTableSampler([1], [1, 0], { seed: 1 })).toThrow(/at least 2 rows/);
    expect(() => createPermutationTableSampler([2, 3], [4, 2], { seed: 1 })).toThrow(/sum to/);
  });
});

describe("WebAssembly shuffle kernel", () => {
  it("is valid WebAssembly and instantiates here (Node 20)", () => {
    expect(WebAssembly.validate(shuffleKernelBytes())).toBe(true);
    expect(createShuffleKernel()).not.toBeNull();
    expect(useShuffleKernel(true)).toBe(true);
  });

  // The kernel is a transcription of the JavaScript loops: for every seed and
  // margins they must draw the very same tables and sums, to the last bit
  // (so the distribution tests below, run with the kernel, cover both).
  it("draws exactly the tables and Σ w x² of the JavaScript loops, seed by seed (property)", () => {
    // Tables and Σ w x² (weights 1/E, as monteCarloPValue's), with and without an output buffer.
    const draw = (kernel: boolean, rows: number[], columns: number[], seed: number) => {
      useShuffleKernel(kernel);
      const n = rows.reduce((a, b) => a + b, 0);
      const weights = Float64Array.from({ length: rows.length * columns.length }, (_, k) => {
        const e = (rows[Math.floor(k / columns.length)] * columns[k % columns.length]) / n;
        return e > 0 ? 1 / e : 0;
      });
      const sampler = createPermutationTableSampler(rows, columns, { seed, weights });
      const out = new Int32Array(rows.length * columns.length);
      return Array.from({ length: 30 }, (_, b) => (b % 2 === 0 ? `${sampler.sample(out)}:${Array.from(out).join(",")}` : `${sampler.sample()}`));
    };
    try {
      fc.assert(
        fc.property(marginsArbitrary, fc.integer(), ({ rows, columns }, seed) => {
          expect(draw(true, rows, columns, seed)).toEqual(draw(false, rows, columns, seed));
        }),
        { numRuns: 200 },
      );
      // Large n (many Lemire rejections) and the benchmark's shape.
      const wide = Array.from({ length: 40 }, (_, j) => 20 + ((j * 37) % 90));
      const total = wide.reduce((a, b) => a + b, 0);
      const tall = Array.from({ length: 20 }, (_, i) => Math.floor(total / 20) + (i < total % 20 ? 1 : 0));
      for (const [rows, columns] of [
        [[7000, 9000], [6000, 10000]],
        [tall, wide],
      ]) {
        expect(draw(true, rows, columns, 77)).toEqual(draw(false, rows, columns, 77));
      }
    } finally {
      useShuffleKernel(true);
    }
  });
});

describe.each(samplers)("%s sampler: exact conditional law", (_, make) => {
  // 2×3 and 3×3 margins with n ≤ 12, the largest total in a row or in a column
  // (the permutation sampler's two layouts), and shuffled positions m = n − max
  // of each residue mod 3 (its picks come three to a generator step).
  const cases: [number[], number[]][] = [
    [[5, 7], [3, 4, 5]], // m = 5
    [[9, 3], [4, 4, 4]], // m = 3
    [[6, 4], [3, 3, 4]], // m = 4
    [[2, 4], [1, 2, 3]], // m = 2
    [[4, 3, 5], [2, 6, 4]], // m = 6, blocks are columns
    [[3, 4, 5], [4, 4, 4]], // m = 7
    [[3, 4, 4], [3, 3, 5]], // m = 6
  ];
  it.each(cases)("rows %j, columns %j: frequencies of all tables over 200,000 draws fit (χ² p > 1e-4)", (rows, columns) => {
    const all = enumerateTables(rows, columns);
    const index = new Map(all.map((t, k) => [t.cells.join(","), k]));
    const counts = new Array<number>(all.length).fill(0);
    const sampler = make(rows, columns, 12_345);
    const out = new Int32Array(rows.length * columns.length);
    const draws = 200_000;
    for (let b = 0; b < draws; b++) {
      sampler.sample(out);
      counts[index.get(Array.from(out).join(",")) as number]++;
    }
    const fit = goodnessOfFit(
      counts,
      all.map((t) => t.probability),
      draws,
    );
    expect(fit.df).toBeGreaterThan(2);
    expect(fit.p).toBeGreaterThan(1e-4);
  });

  it("2×2 with n = 16,000 (bounds near 2¹⁴: many Lemire rejections): the cell follows its hypergeometric law", () => {
    // x = cell (0, 0) given rows [7000, 9000] and columns [6000, 10000].
    const [r0, r1, c0] = [7000, 9000, 6000];
    const n = r0 + r1;
    const lo = Math.max(0, r0 + c0 - n);
    const hi = Math.min(r0, c0);
    // P(x) by the ratio recurrence from the mode, normalised.
    const mode = Math.floor(((r0 + 1) * (c0 + 1)) / (n + 2));
    const p = new Float64Array(hi - lo + 1);
    p[mode - lo] = 1;
    for (let x = mode; x < hi; x++) p[x + 1 - lo] = (p[x - lo] * (r0 - x) * (c0 - x)) / ((x + 1) * (r1 - c0 + x + 1));
    for (let x = mode; x > lo; x--) p[x - 1 - lo] = (p[x - lo] * x * (r1 - c0 + x)) / ((r0 - x + 1) * (c0 - x + 1));
    const total = p.reduce((a, b) => a + b, 0);
    const sampler = make([r0, r1], [c0, n - c0], 99);
    const out = new Int32Array(4);
    const draws = 20_000;
    const counts = new Array<number>(p.length).fill(0);
    for (let b = 0; b < draws; b++) {
      sampler.sample(out);
      counts[out[0] - lo]++;
    }
    const fit = goodnessOfFit(
      counts,
      Array.from(p, (v) => v / total),
      draws,
    );
    expect(fit.df).toBeGreaterThan(20);
    expect(fit.p).toBeGreaterThan(1e-4);
  });

  it("has cell means R·C/n on a 6×9 table with n = 9,000", () => {
    const rows = [800, 1200, 1500, 1700, 1800, 2000];
    const columns = [300, 500, 700, 900, 1000, 1100, 1300, 1500, 1700];
    const n = 9000;
    const sampler = make(rows, columns, 5);
    const out = new Int32Array(54);
    const sums = new Float64Array(54);
    const draws = 4000;
    for (let b = 0; b < draws; b++) {
      sampler.sample(out);
      for (let k = 0; k < 54; k++) sums[k] += out[k];
    }
    for (let i = 0; i < 6; i++) {
      for (let j = 0; j < 9; j++) {
        const e = (rows[i] * columns[j]) / n;
        // Var(x) ≤ E: the mean of `draws` draws has standard error below √(e/draws).
        expect(Math.abs(sums[i * 9 + j] / draws - e)).toBeLessThan(5 * Math.sqrt(e / draws));
      }
    }
  });
});

describe("choice of sampler", () => {
  it("takes the permutation sampler for the benchmark's 20×40 table with n ≈ 5,000, Patefield for large n per cell", () => {
    const rows = Array.from({ length: 20 }, (_, i) => 150 + 12 * i); // 5,280
    const columns = Array.from({ length: 40 }, (_, j) => 132);
    expect(chooseTableSampler(rows, columns)).toBe("permutation");
    expect(chooseTableSampler([300, 300], [300, 300])).toBe("patefield");
    expect(chooseTableSampler([20_000, 20_000], Array.from({ length: 400 }, () => 100))).toBe("patefield"); // n beyond the workspace
    expect(chooseTableSampler([3, 1], [1, 3])).toBe("permutation");
  });
});
