import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { windowStarts, windowsCovering } from "@/lib/monitor/plan";

describe("window plan", () => {
  it("starts at the first day, steps, and keeps only windows that end by the last day", () => {
    expect([...windowStarts(0, 9, 7, 1)]).toEqual([0, 1, 2, 3]);
    expect([...windowStarts(0, 9, 7, 3)]).toEqual([0, 3]);
    expect([...windowStarts(0, 5, 7, 1)]).toEqual([]);
    expect([...windowStarts(0, 6, 7, 1)]).toEqual([0]);
    expect([...windowStarts(10, 30, 7, 1, 14)]).toEqual([24]);
  });

  it("finds exactly the windows that cover a day", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 10 }),
        fc.integer({ min: 1, max: 5 }),
        fc.integer({ min: 0, max: 60 }),
        fc.integer({ min: -5, max: 70 }),
        (w, s, last, day) => {
          const starts = windowStarts(0, last, w, s);
          const expected = [...starts].map((x, i) => [x, i]).filter(([x]) => x <= day && day <= x + w - 1).map(([, i]) => i);
          const got = windowsCovering(starts, w, day);
          const range = got ? Array.from({ length: got[1] - got[0] + 1 }, (_, k) => got[0] + k) : [];
          expect(range).toEqual(expected);
        },
      ),
    );
  });
});
