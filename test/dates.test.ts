import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { addDays, daysBetween, isIsoDate, isoWeek, isoWeekStart } from "@/lib/dates";
import reference from "./fixtures/dates/iso-weeks.json";

describe("calendar arithmetic on production dates", () => {
  // Expected weeks from Python's datetime.isocalendar (tool and version in the fixture;
  // script: test/fixtures/dates/make-iso-weeks.py).
  it.each(reference.weeks)("ISO week of $date matches Python's isocalendar", ({ date, year, week, monday }) => {
    expect(isoWeek(date)).toEqual({ year, week });
    expect(isoWeekStart(year, week)).toBe(monday);
  });

  it("rejects impossible dates", () => {
    expect(isIsoDate("2026-02-30")).toBe(false);
    expect(isIsoDate("2026-13-01")).toBe(false);
    expect(isIsoDate("2024-02-29")).toBe(true);
    expect(isIsoDate("2025-02-29")).toBe(false);
    expect(isIsoDate("26-02-01")).toBe(false);
    expect(() => addDays("2026-02-30", 1)).toThrow(RangeError);
  });

  it("crosses month, year and DST boundaries by whole days", () => {
    expect(addDays("2026-03-28", 2)).toBe("2026-03-30"); // European DST change on 2026-03-29
    expect(addDays("2026-12-31", 1)).toBe("2027-01-01");
    expect(addDays("2024-03-01", -1)).toBe("2024-02-29");
  });

  it("addDays and daysBetween are inverse (property)", () => {
    fc.assert(
      fc.property(fc.integer({ min: -4000, max: 4000 }), (n) => daysBetween("2026-01-15", addDays("2026-01-15", n)) === n),
    );
  });
});
