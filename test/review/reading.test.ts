import { describe, expect, it } from "vitest";
import { cellSentence, generateReading, type ReadingInput } from "@/lib/review/reading";

const flagged: ReadingInput = {
  kind: "line",
  start: "2026-10-20",
  end: "2026-10-26",
  testable: true,
  flagged: true,
  n: 3870,
  pValue: 1.2e-12,
  adjustedPValue: 3.4e-10,
  adjust: "bh",
  alpha: 0.05,
  minEffect: 0,
  cramersV: 0.071,
  method: "asymptotic",
  critical: 3.29,
  drivers: [
    { rowName: "Press line 3", categoryName: "Seal leak", observed: 48, expected: 14.1, adjustedResidual: 7.94, contribution: 0.412 },
    { rowName: "Press line 1", categoryName: "Seal leak", observed: 5, expected: 15.6, adjustedResidual: -3.41, contribution: 0.09 },
  ],
};

describe("the plain-language reading", () => {
  it("names the line, category, counts, ratio, residual and share of the driving cell", () => {
    const s = cellSentence(flagged.drivers[0], "line");
    expect(s).toBe(
      "Press line 3 recorded 48 “Seal leak” defects where 14 were expected at the plant's mix (3.4×, adjusted residual +7.9); this cell carries 41% of the chi-square.",
    );
  });

  it("says 'fewer than its share' for a negative residual and prints a true minus", () => {
    const s = cellSentence(flagged.drivers[1], "line");
    expect(s).toContain("Press line 1 recorded 5 “Seal leak” defects where 16 were expected");
    expect(s).toContain("0.32×");
    expect(s).toContain("adjusted residual −3.4, fewer than its share");
    expect(s).toContain("9% of the chi-square");
  });

  it("heads a flagged window with the adjusted p, α and V, then the driver sentences and their joint share", () => {
    const r = generateReading(flagged);
    expect(r.headline).toContain("differs between the lines in 20–26 Oct 2026");
    expect(r.headline).toContain("false-discovery-rate adjusted p = 3.4 × 10⁻¹⁰");
    expect(r.headline).toContain("α = 0.05");
    expect(r.headline).toContain("V = 0.071");
    expect(r.sentences[0]).toContain("Press line 3 recorded 48");
    expect(r.sentences[1]).toContain("Press line 1 recorded 5");
    expect(r.sentences).toContain("Together these cells carry 50% of the chi-square.");
    expect(r.sentences.at(-1)).toContain("chi-square test, on 3,870 defects");
  });

  it("always carries the four standing cautions, with this window's n and V", () => {
    for (const input of [flagged, { ...flagged, flagged: false, drivers: [] }, { ...flagged, testable: false, reason: "no defects" }]) {
      const c = generateReading(input).cautions;
      expect(c).toHaveLength(4);
      expect(c[0]).toMatch(/not a cause/);
      expect(c[1]).toMatch(/Very large samples make small, unimportant differences significant/);
      expect(c[1]).toContain("3,870 defects");
      expect(c[1]).toContain("V (0.071)");
      expect(c[2]).toMatch(/says nothing about the defect rate/);
      expect(c[3]).toMatch(/quality system, customer requirements and local regulations/);
    }
  });

  it("keeps a rate signal apart from the mix and calls it a rate signal, not a mix signal", () => {
    const r = generateReading({
      ...flagged,
      flagged: false,
      drivers: [],
      adjustedPValue: 0.6,
      pValue: 0.2,
      rateSignals: [{ groupName: "Press line 2", rate: 0.00631, upperLimit: 0.0042, lowerLimit: 0.0028, direction: "above" }],
    });
    expect(r.headline).toMatch(/^No difference in mix between the lines is shown/);
    expect(r.rateSentences).toHaveLength(1);
    expect(r.rateSentences[0]).toContain("Rate signal, not a mix signal: Press line 2 made 0.00631 defects per unit");
    expect(r.rateSentences[0]).toContain("above its u-chart upper limit of 0.00420");
    expect(r.sentences.join(" ")).not.toContain("Press line 2");
  });

  it("explains a quiet window with p below α held back by the minimum effect", () => {
    const r = generateReading({ ...flagged, flagged: false, drivers: [], minEffect: 0.1, adjustedPValue: 0.001 });
    expect(r.headline).toContain("V = 0.071 is under the minimum effect of 0.1");
  });

  it("says a window cannot be tested and why", () => {
    const r = generateReading({ ...flagged, testable: false, flagged: false, reason: "fewer than 2 lines with defects in the window (P1)" });
    expect(r.headline).toBe("The window 20–26 Oct 2026 cannot be tested: fewer than 2 lines with defects in the window (P1).");
  });

  it("words a history comparison against the line's own past, and shifts within a line", () => {
    const h = cellSentence({ ...flagged.drivers[0], rowName: "This window" }, "history", "Press line 3", 8);
    expect(h).toContain("This window recorded 48 “Seal leak” defects");
    expect(h).toContain("Press line 3's mix over this window and its previous 8 weeks");
    const s = generateReading({ ...flagged, kind: "shift", subject: "Press line 3" });
    expect(s.headline).toContain("between the shifts of Press line 3");
    expect(s.cautions[0]).toContain("between a shift and a defect category");
  });

  it("caps the spelled-out cells at three and points to the rest", () => {
    const many = Array.from({ length: 5 }, (_, k) => ({ ...flagged.drivers[0], rowName: `Line ${k}` }));
    const r = generateReading({ ...flagged, drivers: many });
    expect(r.sentences.filter((s) => s.includes("recorded"))).toHaveLength(3);
    expect(r.sentences).toContain("2 more cells lie beyond the critical value of ±3.29; see the residual table.");
  });

  it("names pooled categories", () => {
    const r = generateReading({ ...flagged, pooled: [{ label: "surface", members: ["Scratch", "Burn mark"] }] });
    expect(r.sentences).toContain("Sparse categories were pooled before testing: surface (Scratch, Burn mark).");
  });
});
