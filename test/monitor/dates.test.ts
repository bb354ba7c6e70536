import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { addDays, dayNumber, isoDate } from "@/lib/monitor/dates";

describe("calendar days", () => {
  it("counts days in UTC, so clock changes never shorten or lengthen a day", () => {
    // US clock change 2026-03-08, EU 2026-03-29, EU back 2026-10-25.
    expect(dayNumber("2026-03-09") - dayNumber("2026-03-08")).toBe(1);
    expect(addDays("2026-03-28", 2)).toBe("2026-03-30");
    expect(addDays("2026-10-24", 7)).toBe("2026-10-31");
    expect(addDays("2024-02-28", 1)).toBe("2024-02-29");
    expect(addDays("2025-02-28", 1)).toBe("2025-03-01");
    expect(dayNumber("1970-01-02")).toBe(1);
  });

  it("refuses strings that are not calendar dates", () => {
    for (const bad of ["2026-02-30", "2026-13-01", "2026-1-01", "20260101", "", "2026-01-01T00:00"]) {
      expect(() => dayNumber(bad)).toThrow(RangeError);
    }
  });

  it("round-trips every day number", () => {
    fc.assert(
      fc.property(fc.integer({ min: -50_000, max: 100_000 }), (d) => dayNumber(isoDate(d)) === d),
    );
  });
});
