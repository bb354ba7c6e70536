/**
 * Windows whose expected counts fail Cochran's rule: exact when small enough, else
 * sequential Monte Carlo seeded from the window (reruns agree), or pooled categories, per
 * `sparse`.
 * Exact p-values are checked against R's fisher.test in r-reference.test.ts.
 */
import { describe, expect, it } from "vitest";
import { MONTE_CARLO_REPLICATES, scanWindows, type ScanConfig, type TallyRow } from "@/lib/monitor";
import { addDays } from "@/lib/monitor/dates";
import { seedFrom } from "@/lib/monitor/seed";
import { MONTE_CARLO_STOP_AFTER_HITS } from "@/lib/monitor/window-test";
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
  it("auto: exact for a small table, sequential Monte Carlo (at most 10,000 tables, seeded from the window) for a large one", () => {
    const exact = scanWindows(small, config).windows;
    expect(exact.every((w) => w.method === "exact" && w.expectedCounts!.cochran === false)).toBe(true);
    const mc = scanWindows(sparse, config).windows;
    expect(mc.length).toBe(4);
    for (const w of mc) {
      expect(w.expectedCounts!.cochran).toBe(false);
      expect(w.method).toBe("monte-carlo");
      const r = w.monteCarlo!;
      expect(r).toMatchObject({ seed: seedFrom(`line|${w.start}|${w.end}`), stopAfterHits: MONTE_CARLO_STOP_AFTER_HITS, maxReplicates: MONTE_CARLO_REPLICATES });
      expect(r.standardError).toBeGreaterThan(0);
      // Besag & Clifford 1991: stopped at the h-th hit, p = h/L; else p = (1 + hits)/(B + 1).
      if (r.stoppedEarly) {
        expect(r.hits).toBe(MONTE_CARLO_STOP_AFTER_HITS);
        expect(r.replicates).toBeLessThanOrEqual(MONTE_CARLO_REPLICATES);
        expect(w.pValue).toBe(r.hits / r.replicates);
      } else {
        expect(r.replicates).toBe(MONTE_CARLO_REPLICATES);
        expect(r.hits).toBeLessThan(MONTE_CARLO_STOP_AFTER_HITS);
        expect(w.pValue).toBe((1 + r.hits) / (MONTE_CARLO_REPLICATES + 1));
      }
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

describe("a sparse shift comparison with a planted change (sequential Monte Carlo)", () => {
  // One line's three shifts over 25 categories with shares ∝ 1/(j + 2), about 30 defects a
  // shift-day, like the benchmark plant (test/bench/plant.ts): every 7-day window fails
  // Cochran's rule and is too large for the exact test. Shift B makes six times its
  // share of C05 for two weeks (the benchmark's planted factor; at three times, about 24
  // extra defects a week among ~650 over 48 df, no window reaches BH's threshold).
  const change = { shift: "B", category: "C05", from: "2026-03-06", to: "2026-03-19", factor: 6 };
  const weights = Array.from({ length: 25 }, (_, j) => 1 / (j + 2));
  const { tallies } = simulatePlant(
    {
      start: "2026-01-05",
      days: 120,
      lines: ["L01"],
      shifts: ["A", "B", "C"],
      categories: codes("C", 25),
      weights,
      unitsPerShift: 1000,
      defectsPerUnit: 0.03,
      changes: [change],
    },
    21,
  );
  const result = scanWindows(tallies, { compare: "shift", lines: ["L01"], windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0 });
  const windows = result.windows;
  const overlaps = (w: { start: string; end: string }) => w.end >= change.from && w.start <= change.to;

  it("tests every window by Monte Carlo", () => {
    expect(windows.length).toBe(114);
    expect(windows.every((w) => w.method === "monte-carlo" && w.expectedCounts!.cochran === false)).toBe(true);
  });

  it("still finds the change: flagged windows overlap it, one episode, driven by shift B × C05 in excess", () => {
    const flagged = windows.filter((w) => w.flagged);
    expect(flagged.length).toBeGreaterThan(5);
    expect(flagged.every(overlaps)).toBe(true);
    expect(result.episodes).toHaveLength(1);
    expect(result.episodes[0].drivers[0]).toMatchObject({ row: "B", category: "C05" });
    expect(result.episodes[0].drivers[0].adjustedResidual).toBeGreaterThan(0);
    // The flagged windows' p are far below 100/10,000: they drew the full 10,000 tables.
    expect(flagged.every((w) => !w.monteCarlo!.stoppedEarly && w.monteCarlo!.replicates === MONTE_CARLO_REPLICATES)).toBe(true);
  });

  it("stops the quiet windows early, so the scan draws a small fraction of 10,000 tables a window", () => {
    const quiet = windows.filter((w) => !overlaps(w));
    const stopped = quiet.filter((w) => w.monteCarlo!.stoppedEarly);
    expect(stopped.length).toBeGreaterThan(0.9 * quiet.length);
    for (const w of stopped) expect(w.pValue).toBe(MONTE_CARLO_STOP_AFTER_HITS / w.monteCarlo!.replicates);
    const drawn = windows.reduce((s, w) => s + w.monteCarlo!.replicates, 0);
    expect(drawn).toBeLessThan(0.25 * MONTE_CARLO_REPLICATES * windows.length);
  });
});
