/**
 * Windows whose expected counts fail Cochran's rule: exact when small enough, else Monte
 * Carlo seeded from the window (reruns agree), or pooled categories, per `sparse`.
 * Exact p-values are checked against R's fisher.test in r-reference.test.ts.
 */
import { describe, expect, it } from "vitest";
import { MONTE_CARLO_REPLICATES, scanWindows, type ScanConfig, type TallyRow } from "@/lib/monitor";
import { addDays } from "@/lib/monitor/dates";
import { seedFrom } from "@/lib/monitor/seed";
import { codes, simulatePlant } from "./helpers/simulate";

const config: ScanConfig = { compare: "line", windowDays: 2, stepDays: 2, alpha: 0.05, adjust: "bh", minEffect: 0 };

// Sparse: 6 lines × 12 categories with about one defect per line-day.
const sparse = simulatePlant(
  {
    start: "2026-05-04",
    days: 8,
    lines: codes("L", 6),
    shifts: ["A"],
    categories: codes("C", 12),
    weights: Array(12).fill(1),
    unitsPerShift: 100,
    defectsPerUnit: 0.05,
  },
  3,
).tallies;

// Small: two lines, three categories, a handful of defects per day.
const small: TallyRow[] = [];
for (let d = 0; d < 4; d++) {
  const date = addDays("2026-05-04", d);
  small.push(
    { date, line: "L1", shift: "A", category: "SCR", count: 2 + (d % 2) },
    { date, line: "L1", shift: "A", category: "DNT", count: 1 },
    { date, line: "L2", shift: "A", category: "SCR", count: 1 },
    { date, line: "L2", shift: "A", category: "PNT", count: 2 },
  );
}

describe("sparse windows", () => {
  it("auto: exact for a small table, Monte Carlo (10,000 replicates, seeded from the window) for a large one", () => {
    const exact = scanWindows(small, config).windows;
    expect(exact.every((w) => w.method === "exact" && w.expectedCounts!.cochran === false)).toBe(true);
    const mc = scanWindows(sparse, config).windows;
    expect(mc.length).toBe(4);
    for (const w of mc) {
      expect(w.expectedCounts!.cochran).toBe(false);
      expect(w.method).toBe("monte-carlo");
      expect(w.monteCarlo).toMatchObject({ replicates: MONTE_CARLO_REPLICATES, seed: seedFrom(`line|${w.start}|${w.end}`) });
      expect(w.monteCarlo!.standardError).toBeGreaterThan(0);
      // p = (1 + hits)/(B + 1): never 0, a multiple of 1/(B + 1).
      expect(Math.round(w.pValue! * (MONTE_CARLO_REPLICATES + 1)) / (MONTE_CARLO_REPLICATES + 1)).toBeCloseTo(w.pValue!, 12);
    }
  });

  it("Monte Carlo p-values repeat exactly on a rerun and depend on the window, not on the run", () => {
    const a = scanWindows(sparse, config).windows.map((w) => w.pValue);
    const b = scanWindows([...sparse].reverse(), config).windows.map((w) => w.pValue);
    expect(b).toEqual(a);
    expect(new Set(a).size).toBeGreaterThan(1);
  });

  it("monte-carlo: Monte Carlo even where the exact test is feasible", () => {
    const windows = scanWindows(small, { ...config, sparse: "monte-carlo" }).windows;
    expect(windows.every((w) => w.method === "monte-carlo")).toBe(true);
    const exact = scanWindows(small, config).windows;
    windows.forEach((w, i) => expect(Math.abs(w.pValue! - exact[i].pValue!)).toBeLessThan(4 * w.monteCarlo!.standardError + 1e-3));
  });

  it("asymptotic: the χ² tail whatever the expected counts, with the check still reported", () => {
    const windows = scanWindows(sparse, { ...config, sparse: "asymptotic" }).windows;
    expect(windows.every((w) => w.method === "asymptotic" && w.expectedCounts!.cochran === false)).toBe(true);
    expect(windows.every((w) => w.monteCarlo === null)).toBe(true);
  });

  it("windows meeting Cochran's rule are asymptotic under every sparse mode", () => {
    const dense = small.map((r) => ({ ...r, count: r.count * 40 }));
    for (const sparseMode of ["auto", "pool", "monte-carlo", "exact", "asymptotic"] as const) {
      const windows = scanWindows(dense, { ...config, sparse: sparseMode }).windows;
      expect(windows.every((w) => w.method === "asymptotic" && w.pooled === null)).toBe(true);
    }
  });

  it("pool: merges sparse categories by family first, says what it merged, and tests the pooled table", () => {
    const rows: TallyRow[] = [];
    const usual: Record<string, number> = { SCR: 12, DNT: 10, PNT: 9, WLD: 8, BUR: 1, CHP: 1, LEAK: 1, SEAL: 0 };
    for (let d = 0; d < 4; d++) {
      for (const line of ["L1", "L2", "L3"]) {
        for (const [category, n] of Object.entries(usual)) {
          const count = n + ((d + line.charCodeAt(1)) % 2) + (category === "SEAL" && line === "L2" ? 1 : 0);
          rows.push({ date: addDays("2026-05-04", d), line, shift: "A", category, count });
        }
      }
    }
    const families = { BUR: "edge", CHP: "edge", LEAK: "seal", SEAL: "seal" };
    const pooled = scanWindows(rows, { ...config, sparse: "pool", families }).windows;
    for (const w of pooled) {
      expect(w.expectedCounts!.cochran).toBe(false); // of the window's own table, before pooling
      expect(w.method).toBe("asymptotic");
      expect(w.pooled).toEqual({
        columns: ["edge", "DNT", "seal", "PNT", "SCR", "WLD"],
        merged: [
          { label: "edge", members: ["BUR", "CHP"] },
          { label: "seal", members: ["LEAK", "SEAL"] },
        ],
      });
      expect(w.df).toBe(2 * 5);
      expect(w.categories).toHaveLength(8);
    }
    // Without families the smallest categories go into one catch-all column.
    const catchAll = scanWindows(rows, { ...config, sparse: "pool" }).windows[0];
    expect(catchAll.pooled!.merged).toHaveLength(1);
    expect(catchAll.pooled!.merged[0]).toEqual({ label: "Other (pooled)", members: ["BUR", "CHP", "SEAL"] });
    // auto on the same windows: no pooling, a resampling method instead.
    expect(scanWindows(rows, { ...config, families }).windows.every((w) => w.pooled === null && w.method !== "asymptotic")).toBe(true);
  });
});
