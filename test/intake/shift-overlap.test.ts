import { describe, expect, it } from "vitest";
import { describeShiftOverlap, findShiftOverlap, sharedStretches, shiftArcs } from "@/lib/intake/shift-overlap";

// Expected values are worked out by hand from the clock times (minutes after midnight).
const s = (code: string, startTime: string, endTime: string) => ({ code, startTime, endTime });
const A = s("A", "06:00", "14:00");
const B = s("B", "14:00", "22:00");
const N = s("N", "22:00", "06:00");

describe("shift clock times as arcs of the day", () => {
  it("splits a shift that crosses midnight, keeps one that ends at midnight whole, and gives a placeholder none", () => {
    expect(shiftArcs(A)).toEqual([[360, 840]]);
    expect(shiftArcs(N)).toEqual([[1320, 1440], [0, 360]]);
    expect(shiftArcs(s("L", "18:00", "00:00"))).toEqual([[1080, 1440]]);
    expect(shiftArcs(s("P", "00:00", "00:00"))).toEqual([]);
  });

  it("refuses a time that is not HH:MM with a plain RangeError", () => {
    expect(() => shiftArcs(s("X", "6:00", "14:00"))).toThrow(RangeError);
    expect(() => shiftArcs(s("X", "06:00", "24:00"))).toThrow(/Not a clock time in HH:MM form: "24:00"/);
  });
});

describe("overlaps between shifts", () => {
  it("three shifts that meet end to start do not overlap (end times are exclusive)", () => {
    expect(sharedStretches(A, B)).toEqual([]);
    expect(sharedStretches(B, N)).toEqual([]);
    expect(sharedStretches(N, A)).toEqual([]);
    expect(findShiftOverlap(N, [A, B])).toBeNull();
  });

  it("a night shift starting before the late shift ends overlaps it by that hour", () => {
    expect(findShiftOverlap(s("N", "21:00", "06:00"), [A, B])).toEqual({ other: B, from: "21:00", to: "22:00", minutes: 60 });
  });

  it("a night shift ending after the early shift starts overlaps it after midnight", () => {
    expect(sharedStretches(s("N", "22:00", "07:30"), A)).toEqual([{ from: "06:00", to: "07:30", minutes: 90 }]);
  });

  it("two night shifts share one stretch across midnight, not two", () => {
    expect(sharedStretches(N, s("M", "23:00", "05:00"))).toEqual([{ from: "23:00", to: "05:00", minutes: 360 }]);
    expect(sharedStretches(s("M", "20:00", "08:00"), N)).toEqual([{ from: "22:00", to: "06:00", minutes: 480 }]);
  });

  it("a shift inside another, and a crossing shift against one that ends at midnight", () => {
    expect(sharedStretches(A, s("Q", "08:00", "10:00"))).toEqual([{ from: "08:00", to: "10:00", minutes: 120 }]);
    expect(sharedStretches(s("L", "18:00", "00:00"), N)).toEqual([{ from: "22:00", to: "00:00", minutes: 120 }]);
    expect(sharedStretches(s("L", "18:00", "00:00"), s("E", "00:00", "06:00"))).toEqual([]);
  });

  it("a placeholder shift without clock times overlaps nothing", () => {
    expect(findShiftOverlap(s("P", "00:00", "00:00"), [A, B, N])).toBeNull();
    expect(findShiftOverlap(A, [s("P", "06:00", "06:00")])).toBeNull();
  });

  it("names both shifts, their times and the shared stretch in the message", () => {
    const candidate = s("N", "21:00", "06:00");
    expect(describeShiftOverlap(candidate, findShiftOverlap(candidate, [A, B])!)).toBe(
      "Shift N (21:00–06:00) would overlap shift B (14:00–22:00) from 21:00 to 22:00. Shifts must not overlap: each minute of the day belongs to one shift. Change the clock times, or retire B first.",
    );
  });
});
