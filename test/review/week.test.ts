import { describe, expect, it } from "vitest";
import { namesOf } from "@/lib/review/names";
import { lastCompleteWeek, parseIsoWeek, shapeWeek, shiftWeek, testWeek, type WeekCounts } from "@/lib/review/week";

const names = namesOf({
  lines: { P1: "Press line 1", P2: "Press line 2", P3: "Press line 3" },
  categories: { A: "Short shot", B: "Flash", S: "Seal leak" },
});

function counts(table: Record<string, [number, number, number]>, units: number | null = 10_000): WeekCounts {
  const rows = Object.keys(table);
  return { rows, categories: ["A", "B", "S"], counts: rows.map((r) => table[r]), units: rows.map(() => units) };
}

describe("ISO weeks for the weekly review", () => {
  it("parses 2026-W47 to Monday 16 Nov – Sunday 22 Nov 2026", () => {
    expect(parseIsoWeek("2026-W47")).toMatchObject({ label: "2026-W47", start: "2026-11-16", end: "2026-11-22" });
  });

  it("knows 53-week years and refuses weeks that do not exist", () => {
    expect(parseIsoWeek("2026-W53")?.start).toBe("2026-12-28");
    expect(parseIsoWeek("2025-W53")).toBeNull();
    expect(parseIsoWeek("2026-W00")).toBeNull();
    expect(parseIsoWeek("2026-47")).toBeNull();
    expect(parseIsoWeek("next week")).toBeNull();
  });

  it("defaults to the last complete week, across a year boundary too", () => {
    expect(lastCompleteWeek("2026-11-25").label).toBe("2026-W47");
    expect(lastCompleteWeek("2026-11-23").label).toBe("2026-W47"); // a Monday: last week just ended
    expect(lastCompleteWeek("2026-11-22").label).toBe("2026-W46"); // a Sunday: its week is not over
    expect(lastCompleteWeek("2027-01-06").label).toBe("2026-W53");
    expect(shiftWeek(parseIsoWeek("2027-W01")!, -1).label).toBe("2026-W53");
  });
});

describe("the weekly review shaping", () => {
  const before = counts({ P1: [300, 200, 20], P2: [280, 190, 18], P3: [310, 210, 22] });
  const now = counts({ P1: [300, 200, 20], P2: [280, 190, 18], P3: [300, 200, 90] });
  const review = shapeWeek({ week: parseIsoWeek("2026-W47")!, alpha: 0.05, current: now, previous: before }, names);

  it("compares the lines this week and the week before, with the change in V", () => {
    expect(review.previousWeek.label).toBe("2026-W46");
    expect(review.current.testable).toBe(true);
    expect(review.current.pValue!).toBeLessThan(1e-6);
    expect(review.previous.pValue!).toBeGreaterThan(0.05);
    expect(review.deltaV).toBeCloseTo(review.current.cramersV! - review.previous.cramersV!, 12);
    expect(review.deltaV!).toBeGreaterThan(0);
  });

  it("names the new top driver, P3 × Seal leak, and says it is new this week", () => {
    const top = review.drivers[0];
    expect(top).toMatchObject({ row: "P3", rowName: "Press line 3", category: "S", categoryName: "Seal leak", observed: 90, alsoLastWeek: false });
    expect(top.ratio).toBeGreaterThan(1.8);
    expect(top.adjustedResidual).toBeGreaterThan(review.critical!);
    expect(review.summary.join(" ")).toContain("the strongest: Press line 3 × Seal leak");
  });

  it("gives each line its top categories with the change in share from the week before", () => {
    const p3 = review.lines.find((l) => l.code === "P3")!;
    expect(p3.defects).toBe(590);
    expect(p3.previousDefects).toBe(542);
    expect(p3.top.map((t) => t.name)).toEqual(["Short shot", "Flash", "Seal leak"]);
    const seal = p3.top[2];
    expect(seal.share).toBeCloseTo(90 / 590, 12);
    expect(seal.change).toBeCloseTo(90 / 590 - 22 / 542, 12);
    expect(p3.strongest?.categoryName).toBe("Seal leak");
    expect(p3.dpu).toBeCloseTo(590 / 10_000, 12);
  });

  it("marks a driver that was already beyond the critical value the week before", () => {
    const r = shapeWeek({ week: parseIsoWeek("2026-W47")!, alpha: 0.05, current: now, previous: now }, names);
    expect(r.drivers[0].alsoLastWeek).toBe(true);
  });

  it("does not test a week with fewer than two lines with defects", () => {
    const t = testWeek(counts({ P1: [3, 1, 0], P2: [0, 0, 0] }));
    expect(t.test.testable).toBe(false);
    expect(t.test.reason).toBe("fewer than 2 groups with defects");
    const r = shapeWeek({ week: parseIsoWeek("2026-W47")!, alpha: 0.05, current: counts({ P1: [3, 1, 0] }), previous: before }, names);
    expect(r.drivers).toEqual([]);
    expect(r.summary[0]).toMatch(/cannot be compared/);
  });
});
