/**
 * The freshness words the review pages show (lib/review/freshness). Expected strings are
 * the wording the pages promise; clock times are built from local date parts so the
 * test holds in any server time zone (the plant's clock is the server's).
 */
import { describe, expect, it } from "vitest";
import { combineFreshness, formatClock, freshnessText, shownFreshness, warmUpText } from "@/lib/review/freshness";

const local = (h: number, m: number, s: number) => new Date(2026, 11, 2, h, m, s).toISOString();

describe("formatClock", () => {
  it("writes the plant-local clock time, 24-hour with seconds, zero-padded", () => {
    expect(formatClock(local(9, 5, 7))).toBe("09:05:07");
    expect(formatClock(local(23, 59, 59))).toBe("23:59:59");
    expect(formatClock(local(0, 0, 0))).toBe("00:00:00");
  });
  it("refuses what is not an instant, in plain words", () => {
    expect(() => formatClock("yesterday")).toThrow(/Not an instant: "yesterday"/);
  });
});

describe("freshnessText", () => {
  it("says when the results are from and, when entries wait, how many", () => {
    expect(freshnessText({ asOf: local(10, 42, 5), pendingEntries: 12 })).toEqual({ asOf: "Results as of 10:42:05", pending: "12 entries since, being added" });
    expect(freshnessText({ asOf: local(10, 42, 5), pendingEntries: 1 })).toEqual({ asOf: "Results as of 10:42:05", pending: "1 entry since, being added" });
    expect(freshnessText({ asOf: local(10, 42, 5), pendingEntries: 1234 }).pending).toBe("1,234 entries since, being added");
  });
  it("says nothing of pending entries when there are none, and nothing at all without a scan", () => {
    expect(freshnessText({ asOf: local(7, 0, 0), pendingEntries: 0 })).toEqual({ asOf: "Results as of 07:00:00", pending: null });
    expect(freshnessText({ asOf: null, pendingEntries: 0 })).toEqual({ asOf: null, pending: null });
  });
  it("refuses a pending count that is not a whole number ≥ 0", () => {
    expect(() => freshnessText({ asOf: local(7, 0, 0), pendingEntries: -1 })).toThrow(RangeError);
    expect(() => freshnessText({ asOf: local(7, 0, 0), pendingEntries: 1.5 })).toThrow(RangeError);
  });
});

describe("combineFreshness", () => {
  it("takes the oldest asOf and the most pending entries (the same entries, counted by each scan), not their sum", () => {
    const f = combineFreshness([
      { asOf: "2026-12-02T10:42:09.000Z", pendingEntries: 4 },
      { asOf: "2026-12-02T10:42:05.000Z", pendingEntries: 10 },
      null,
      { asOf: "2026-12-02T10:42:20.000Z", pendingEntries: 0 },
    ]);
    expect(f).toEqual({ asOf: "2026-12-02T10:42:05.000Z", pendingEntries: 10 });
  });
  it("has no asOf when nothing was scanned", () => {
    expect(combineFreshness([])).toEqual({ asOf: null, pendingEntries: 0 });
    expect(combineFreshness([null, undefined])).toEqual({ asOf: null, pendingEntries: 0 });
  });
});

describe("shownFreshness", () => {
  const now = new Date("2026-12-02T10:30:00.000Z");
  it("kept page data that held every entry still does (it is dropped at the next write): as of now", () => {
    expect(shownFreshness({ asOf: "2026-12-02T10:00:00.000Z", pendingEntries: 0 }, now)).toEqual({ asOf: "2026-12-02T10:30:00.000Z", pendingEntries: 0 });
  });
  it("data behind the entries keeps its own asOf, so the page never looks fresher than it is", () => {
    expect(shownFreshness({ asOf: "2026-12-02T10:29:50.000Z", pendingEntries: 3 }, now)).toEqual({ asOf: "2026-12-02T10:29:50.000Z", pendingEntries: 3 });
    expect(shownFreshness({ asOf: null, pendingEntries: 0 }, now).asOf).toBeNull();
  });
});

describe("warmUpText", () => {
  it("says how far the warm-up after a start is", () => {
    expect(warmUpText({ ready: 3, total: 26 })).toBe("being computed since server start (3 of 26 ready)");
    expect(() => warmUpText({ ready: 27, total: 26 })).toThrow(RangeError);
  });
});
