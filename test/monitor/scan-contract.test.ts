import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { scanWindows, type ScanConfig, type TallyRow } from "@/lib/monitor";
import { bucketTallies } from "@/lib/monitor/cube";
import { addDays, dayNumber } from "@/lib/monitor/dates";

const base: ScanConfig = { compare: "line", windowDays: 3, stepDays: 2, alpha: 0.05, adjust: "bh", minEffect: 0, sparse: "asymptotic" };

function row(date: string, line: string, category: string, count: number, shift = "A"): TallyRow {
  return { date, line, shift, category, count };
}

// Two lines, two categories, every day 2026-03-01 … 2026-03-10 (US clock change on 03-08).
function grid(days = 10): TallyRow[] {
  const rows: TallyRow[] = [];
  for (let d = 0; d < days; d++) {
    const date = addDays("2026-03-01", d);
    rows.push(row(date, "L1", "SCR", 10 + d), row(date, "L1", "DNT", 5), row(date, "L2", "SCR", 8), row(date, "L2", "DNT", 7 + (d % 3)));
  }
  return rows;
}

describe("scanWindows: window plan", () => {
  it("starts at the first date, steps by stepDays, ends inclusive, and keeps only windows ending by the last date", () => {
    const { windows } = scanWindows(grid(), base);
    expect(windows.map((w) => [w.start, w.end])).toEqual([
      ["2026-03-01", "2026-03-03"],
      ["2026-03-03", "2026-03-05"],
      ["2026-03-05", "2026-03-07"],
      ["2026-03-07", "2026-03-09"],
    ]);
  });

  it("honours from and to (windows may start before the data and stop before its end)", () => {
    const { windows } = scanWindows(grid(), { ...base, from: "2026-02-28", to: "2026-03-06" });
    expect(windows.map((w) => w.start)).toEqual(["2026-02-28", "2026-03-02", "2026-03-04"]);
    expect(windows[0].n).toBe(30 + 32); // only 03-01 (10+5+8+7) and 03-02 (11+5+8+8) have data
  });

  it("counts a window's days in the calendar, across a clock change", () => {
    const { windows } = scanWindows(grid(), { ...base, windowDays: 7, stepDays: 7 });
    expect(windows).toHaveLength(1);
    expect(windows[0]).toMatchObject({ start: "2026-03-01", end: "2026-03-07" });
    // 7 days of every cell: Σ_d (10+d) = 91, 7·5 = 35, 7·8 = 56, Σ_d (7 + d mod 3) = 55
    expect(windows[0].n).toBe(237);
  });

  it("sums shifts into the line and ignores rows outside the filters", () => {
    const rows = [...grid(3), row("2026-03-01", "L1", "SCR", 100, "B"), row("2026-03-02", "L3", "SCR", 50)];
    const all = scanWindows(rows, { ...base, stepDays: 1 });
    expect(all.windows[0].groups).toEqual(["L1", "L2", "L3"]);
    const filtered = scanWindows(rows, { ...base, stepDays: 1, lines: ["L1", "L2"], shifts: ["A"] });
    expect(filtered.windows[0].groups).toEqual(["L1", "L2"]);
    expect(filtered.windows[0].n).toBe(scanWindows(grid(3), { ...base, stepDays: 1 }).windows[0].n);
  });

  it("compares shifts within one line", () => {
    const rows = [row("2026-03-01", "L1", "SCR", 9, "A"), row("2026-03-01", "L1", "DNT", 1, "A"), row("2026-03-01", "L1", "SCR", 2, "B"), row("2026-03-01", "L1", "DNT", 8, "B"), row("2026-03-01", "L2", "SCR", 99, "C")];
    const { windows } = scanWindows(rows, { ...base, compare: "shift", lines: ["L1"], windowDays: 1, stepDays: 1 });
    expect(windows[0].groups).toEqual(["A", "B"]);
    expect(windows[0].n).toBe(20);
    expect(windows[0].df).toBe(1);
  });
});

describe("scanWindows: dropped rows and columns, untestable windows", () => {
  it("drops groups and categories with zero totals for that window and lists them", () => {
    const rows = [...grid(4), row("2026-03-04", "L3", "SCR", 4), row("2026-03-04", "L1", "WLD", 3)];
    const { windows } = scanWindows(rows, { ...base, windowDays: 2, stepDays: 1 });
    expect(windows[0]).toMatchObject({ droppedGroups: ["L3"], droppedCategories: ["WLD"], groups: ["L1", "L2"] });
    expect(windows[2]).toMatchObject({ droppedGroups: [], droppedCategories: [], groups: ["L1", "L2", "L3"] });
    expect(windows[2].df).toBe(2 * 2);
  });

  it("marks a window with fewer than 2 groups or categories as not testable, with a reason", () => {
    const rows = [row("2026-03-01", "L1", "SCR", 5), row("2026-03-01", "L1", "DNT", 5), row("2026-03-03", "L1", "SCR", 5), row("2026-03-03", "L2", "SCR", 5)];
    const { windows } = scanWindows(rows, { ...base, windowDays: 1, stepDays: 1 });
    expect(windows.map((w) => w.testable)).toEqual([false, false, false]);
    expect(windows.map((w) => w.pValue)).toEqual([null, null, null]);
    expect(windows.map((w) => w.flagged)).toEqual([false, false, false]);
    expect(windows[0].reason).toMatch(/fewer than 2 lines/);
    expect(windows[1].reason).toMatch(/no defects/);
    expect(windows[2].reason).toMatch(/fewer than 2 categories/);
  });

  it("returns no windows for no rows", () => {
    expect(scanWindows([], base)).toEqual({ windows: [], episodes: [] });
  });
});

describe("scanWindows: input checks", () => {
  it("refuses bad configurations and bad rows with a RangeError naming the problem", () => {
    expect(() => scanWindows(grid(), { ...base, windowDays: 0 })).toThrow(/windowDays/);
    expect(() => scanWindows(grid(), { ...base, alpha: 1.5 })).toThrow(/alpha/);
    expect(() => scanWindows(grid(), { ...base, from: "2026-02-30" })).toThrow(/from/);
    expect(() => scanWindows(grid(), { ...base, from: "2026-03-05", to: "2026-03-01" })).toThrow(/after/);
    expect(() => scanWindows([row("2026-03-01", "L1", "SCR", -1)], base)).toThrow(/row 1: count/);
    expect(() => scanWindows([row("2026-03-01", "L1", "SCR", 1.5)], base)).toThrow(RangeError);
    expect(() => scanWindows([row("03/01/2026", "L1", "SCR", 1)], base)).toThrow(/ISO date/);
  });
});

describe("scanWindows: properties", () => {
  const rowArb = fc.record({
    date: fc.integer({ min: 0, max: 12 }).map((d) => addDays("2026-03-25", d)),
    line: fc.constantFrom("L1", "L2", "L3"),
    shift: fc.constantFrom("A", "B"),
    category: fc.constantFrom("SCR", "DNT", "PNT"),
    count: fc.integer({ min: 0, max: 30 }),
  });
  const config: ScanConfig = { ...base, windowDays: 4, stepDays: 1 };

  it("is unchanged by reordering the input rows", () => {
    fc.assert(
      fc.property(fc.array(rowArb, { maxLength: 60 }), fc.array(fc.nat(), { minLength: 60, maxLength: 60 }), (rows, keys) => {
        const shuffled = rows.map((r, i) => ({ r, k: keys[i] })).sort((a, b) => a.k - b.k).map((x) => x.r);
        expect(scanWindows(shuffled, config)).toEqual(scanWindows(rows, config));
      }),
      { numRuns: 60 },
    );
  });

  it("gives the same cube whether rows come sorted by date (one-pass path) or not (staged path)", () => {
    fc.assert(
      fc.property(fc.array(rowArb, { minLength: 1, maxLength: 80 }), fc.boolean(), (rows, bounded) => {
        const sorted = [...rows].sort((a, b) => (a.date < b.date ? -1 : a.date > b.date ? 1 : 0));
        const spec = { groupBy: "line" as const, ...(bounded ? { fromDay: dayNumber("2026-03-27"), toDay: dayNumber("2026-04-03") } : {}) };
        const unsorted = [sorted[sorted.length - 1], ...sorted.slice(0, -1)];
        const a = bucketTallies(sorted, spec);
        const b = bucketTallies(unsorted, spec);
        expect(a).toEqual(b);
        expect(a).toEqual(bucketTallies(rows, spec));
      }),
      { numRuns: 150 },
    );
  });

  it("grows the one-pass layout when codes keep appearing (many lines and categories)", () => {
    const rows: TallyRow[] = [];
    for (let d = 0; d < 5; d++) {
      for (let l = 0; l < 21; l++) {
        for (let c = 0; c < 3 + 9 * d; c++) rows.push(row(addDays("2026-03-01", d), `L${l}`, `K${c}`, (d * 7 + l * 3 + c) % 5));
      }
    }
    const sorted = bucketTallies(rows, { groupBy: "line" })!;
    const staged = bucketTallies([...rows].reverse(), { groupBy: "line" })!;
    expect(sorted.categories).toHaveLength(39);
    expect(sorted).toEqual(staged);
  });

  it("is unchanged by splitting a count over two rows (only the sums matter)", () => {
    fc.assert(
      fc.property(fc.array(rowArb, { minLength: 1, maxLength: 40 }), fc.nat(), (rows, pick) => {
        const i = pick % rows.length;
        const half = Math.floor(rows[i].count / 2);
        const split = [...rows.slice(0, i), { ...rows[i], count: half }, { ...rows[i], count: rows[i].count - half }, ...rows.slice(i + 1)];
        expect(scanWindows(split, config)).toEqual(scanWindows(rows, config));
      }),
      { numRuns: 60 },
    );
  });

  it("never reports a p-value outside [0, 1] or an adjusted p below the raw p", () => {
    fc.assert(
      fc.property(fc.array(rowArb, { maxLength: 80 }), (rows) => {
        for (const w of scanWindows(rows, config).windows) {
          if (!w.testable) continue;
          expect(w.pValue!).toBeGreaterThanOrEqual(0);
          expect(w.pValue!).toBeLessThanOrEqual(1);
          expect(w.adjustedPValue!).toBeGreaterThanOrEqual(w.pValue! - 1e-15);
        }
      }),
      { numRuns: 60 },
    );
  });
});
