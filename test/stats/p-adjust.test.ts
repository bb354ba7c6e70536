import { describe, expect, it } from "vitest";
import { adjustPValues } from "@/lib/stats";
import { R, relativeError } from "./reference";

describe(`adjustPValues against ${R.version} p.adjust (fixture r-reference.json)`, () => {
  R.pAdjust.forEach((ref, k) => {
    for (const [method, rName] of [
      ["bh", "bh"],
      ["holm", "holm"],
      ["bonferroni", "bonferroni"],
    ] as const) {
      it(`vector ${k + 1}, ${method} (R: "${method === "bh" ? "BH" : method}")`, () => {
        const mine = adjustPValues(ref.p, method);
        mine.forEach((q, i) => expect(relativeError(q, ref[rName][i])).toBeLessThan(1e-14));
      });
    }
  });
});

describe("adjustPValues by hand", () => {
  it("BH: [0.01, 0.04, 0.03] → [0.03, 0.04, 0.04] (step-up, running minimum)", () => {
    expect(adjustPValues([0.01, 0.04, 0.03], "bh").map((q) => Number(q.toFixed(12)))).toEqual([0.03, 0.04, 0.04]);
  });

  it("Holm: [0.01, 0.04, 0.03] → [0.03, 0.06, 0.06] (step-down, running maximum)", () => {
    expect(adjustPValues([0.01, 0.04, 0.03], "holm").map((q) => Number(q.toFixed(12)))).toEqual([0.03, 0.06, 0.06]);
  });

  it("caps at 1 and keeps ties equal", () => {
    expect(adjustPValues([0.5, 0.9], "bonferroni")).toEqual([1, 1]);
    const q = adjustPValues([0.02, 0.02, 0.5], "bh");
    expect(q[0]).toBe(q[1]);
  });

  it("returns [] for [] and rejects values outside [0, 1]", () => {
    expect(adjustPValues([], "bh")).toEqual([]);
    expect(() => adjustPValues([0.1, 1.2], "bh")).toThrow(/p-value 2 is not a probability/);
    expect(() => adjustPValues([Number.NaN], "holm")).toThrow(RangeError);
    expect(() => adjustPValues([-0.1], "bonferroni")).toThrow(RangeError);
    expect(() => adjustPValues([0.1], "fdr" as "bh")).toThrow(/unknown p-value adjustment/);
  });
});
