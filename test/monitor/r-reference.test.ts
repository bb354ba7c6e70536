/**
 * Window statistics against R. Reference values: test/fixtures/monitor/window-stats.json,
 * made by test/fixtures/monitor/window-stats.R with R 4.2.2 (2022-11-10 r83330):
 * xtabs for the window sums, chisq.test(correct = FALSE) for X², df and p, fisher.test
 * for the exact p of sparse windows, p.adjust(…, "BH" / "bonferroni") across windows.
 */
import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { bucketTallies } from "@/lib/monitor/cube";
import { dayNumber } from "@/lib/monitor/dates";
import { scanWindows, type ScanConfig, type TallyRow } from "@/lib/monitor";
import { SlidingSum } from "@/lib/monitor/sliding-sum";

interface RWindow {
  start: string;
  end: string;
  n: number;
  table: number[][];
  groups: string[];
  categories: string[];
  chiSquare: number | null;
  df: number | null;
  pValue: number | null;
  method: "asymptotic" | "exact" | null;
  bh: number | null;
  bonferroni: number | null;
}
interface RSet {
  compare: "line" | "shift";
  windowDays: number;
  stepDays: number;
  groupCodes: string[];
  categoryCodes: string[];
  rows: TallyRow[];
  windows: RWindow[];
}
const fixture = JSON.parse(readFileSync(new URL("../fixtures/monitor/window-stats.json", import.meta.url), "utf8")) as {
  tool: string;
  dense: RSet;
  sparse: RSet;
};

function config(set: RSet, extra: Partial<ScanConfig>): ScanConfig {
  return { compare: set.compare, windowDays: set.windowDays, stepDays: set.stepDays, alpha: 0.05, adjust: "bh", minEffect: 0, ...extra };
}

// Relative agreement: R prints 17 significant digits; our tail is good to ~1e-12 relative.
function close(actual: number | null, expected: number | null, rel = 1e-9): void {
  if (expected === null) return void expect(actual).toBeNull();
  expect(actual).not.toBeNull();
  expect(Math.abs(actual! - expected)).toBeLessThanOrEqual(rel * Math.max(Math.abs(expected), 1e-300));
}

describe(`window statistics agree with ${fixture.tool}`, () => {
  it("window sums equal R's xtabs over the same days (incremental sums, DST-spanning dates)", () => {
    const set = fixture.dense;
    const cube = bucketTallies(set.rows, { groupBy: "line" })!;
    expect(cube.groups).toEqual(set.groupCodes);
    expect(cube.categories).toEqual(set.categoryCodes);
    const sliding = new SlidingSum(cube, set.windowDays);
    for (const w of set.windows) {
      sliding.moveTo(dayNumber(w.start));
      expect([...sliding.sums]).toEqual(w.table.flat());
    }
  });

  it("dense set: same windows, n, kept groups and categories, X², df, p and BH-adjusted p", () => {
    const set = fixture.dense;
    const { windows } = scanWindows(set.rows, config(set, { sparse: "asymptotic" }));
    expect(windows.map((w) => [w.start, w.end])).toEqual(set.windows.map((w) => [w.start, w.end]));
    windows.forEach((w, i) => {
      const r = set.windows[i];
      expect(w.n).toBe(r.n);
      expect(w.groups).toEqual(r.groups);
      expect(w.categories).toEqual(r.categories);
      expect(w.df).toBe(r.df);
      close(w.chiSquare, r.chiSquare, 1e-12);
      close(w.pValue, r.pValue);
      close(w.adjustedPValue, r.bh);
      expect(w.method).toBe("asymptotic");
    });
    // The planted L2 × WLD change flags, driven by that cell.
    const flagged = windows.filter((w) => w.flagged);
    expect(flagged.map((w) => w.start)).toEqual(set.windows.filter((w) => w.bh! <= 0.05).map((w) => w.start));
    for (const w of flagged) expect(w.drivers[0]).toMatchObject({ row: "L2", category: "WLD" });
  });

  it("dense set: Bonferroni-adjusted p", () => {
    const set = fixture.dense;
    const { windows } = scanWindows(set.rows, config(set, { sparse: "asymptotic", adjust: "bonferroni" }));
    windows.forEach((w, i) => close(w.adjustedPValue, set.windows[i].bonferroni));
  });

  it("sparse set: windows failing Cochran's rule use the exact test, matching fisher.test, then BH", () => {
    const set = fixture.sparse;
    const { windows } = scanWindows(set.rows, config(set, { sparse: "auto" }));
    expect(windows).toHaveLength(set.windows.length);
    windows.forEach((w, i) => {
      const r = set.windows[i];
      expect(w.method).toBe(r.method);
      close(w.chiSquare, r.chiSquare, 1e-12);
      close(w.pValue, r.pValue, 1e-7);
      close(w.adjustedPValue, r.bh, 1e-7);
    });
  });
});
