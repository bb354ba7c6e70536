import { describe, expect, it } from "vitest";
import { buildEpisodes } from "@/lib/monitor/episodes";
import type { Driver, ScanWindow } from "@/lib/monitor";

function w(start: string, end: string, flagged: boolean, adjustedPValue = 0.01, pValue = 0.001, drivers: Partial<Driver>[] = []): ScanWindow {
  return {
    start,
    end,
    n: 100,
    groups: ["L1", "L2"],
    categories: ["A", "B"],
    droppedGroups: [],
    droppedCategories: [],
    testable: true,
    reason: null,
    chiSquare: 10,
    df: 1,
    pValue,
    method: "asymptotic",
    monteCarlo: null,
    pooled: null,
    expectedCounts: { minExpected: 10, fractionBelow5: 0, cochran: true },
    adjustedPValue,
    cramersVCorrected: 0.2,
    flagged,
    drivers: drivers.map((d) => ({ row: "L1", category: "A", observed: 1, expected: 1, ratio: 1, adjustedResidual: 4, contribution: 0.5, ...d })),
  };
}

describe("episodes", () => {
  it("merges flagged windows that overlap or touch, and splits at a gap of a day", () => {
    const episodes = buildEpisodes([
      w("2026-03-01", "2026-03-07", true),
      w("2026-03-03", "2026-03-09", false),
      w("2026-03-05", "2026-03-11", true), // overlaps the first
      w("2026-03-12", "2026-03-18", true), // starts the day after the last end: touches
      w("2026-03-20", "2026-03-26", true), // a free day (03-19) in between: new episode
    ]);
    expect(episodes.map((e) => [e.start, e.end, e.windows])).toEqual([
      ["2026-03-01", "2026-03-18", 3],
      ["2026-03-20", "2026-03-26", 1],
    ]);
  });

  it("takes the window with the smallest adjusted p as the peak (ties: smaller raw p)", () => {
    const [e] = buildEpisodes([
      w("2026-03-01", "2026-03-07", true, 0.02, 0.001),
      w("2026-03-02", "2026-03-08", true, 0.01, 0.004),
      w("2026-03-03", "2026-03-09", true, 0.01, 0.002),
      w("2026-03-04", "2026-03-10", true, 0.01, 0.003),
    ]);
    expect(e.peak.start).toBe("2026-03-03");
  });

  it("ranks drivers by the number of windows they drive, then by their largest |adjusted residual|", () => {
    const [e] = buildEpisodes([
      w("2026-03-01", "2026-03-07", true, 0.01, 0.001, [{ row: "L1", category: "A", adjustedResidual: 4 }, { row: "L2", category: "B", adjustedResidual: -9 }]),
      w("2026-03-02", "2026-03-08", true, 0.01, 0.001, [{ row: "L1", category: "A", adjustedResidual: 5 }, { row: "L2", category: "A", adjustedResidual: -6 }]),
      w("2026-03-03", "2026-03-09", true, 0.01, 0.001, [{ row: "L2", category: "A", adjustedResidual: -4.5 }]),
    ]);
    expect(e.drivers).toEqual([
      { row: "L2", category: "A", windows: 2, adjustedResidual: -6 },
      { row: "L1", category: "A", windows: 2, adjustedResidual: 5 },
      { row: "L2", category: "B", windows: 1, adjustedResidual: -9 },
    ]);
  });

  it("has no episode without a flagged window", () => {
    expect(buildEpisodes([w("2026-03-01", "2026-03-07", false)])).toEqual([]);
  });
});
