import { describe, expect, it } from "vitest";
import { classOf, contrastRatio, heatCell, heatLegend, heatScale, luminance, RDBU_9 } from "@/lib/review/heatmap";

describe("the residual heatmap colour scale", () => {
  const scale = heatScale(3.29);

  it("is symmetric: a value and its negative sit in mirrored classes", () => {
    for (const v of [0.3, 1.2, 2.5, 3.5, 7.9, 20]) {
      const up = scale.classes.indexOf(classOf(scale, v));
      const down = scale.classes.indexOf(classOf(scale, -v));
      expect(up + down).toBe(scale.classes.length - 1);
    }
  });

  it("diverges: near-white at 0, darker with |residual|, red for more and blue for fewer", () => {
    expect(classOf(scale, 0).fill).toBe("#f7f7f7");
    const pos = [0.5, 1.5, 2.5, 4, 8].map((v) => luminance(classOf(scale, v).fill));
    const neg = [0.5, 1.5, 2.5, 4, 8].map((v) => luminance(classOf(scale, -v).fill));
    for (let k = 1; k < pos.length; k++) {
      expect(pos[k]).toBeLessThan(pos[k - 1]);
      expect(neg[k]).toBeLessThan(neg[k - 1]);
    }
    const red = (hex: string) => Number.parseInt(hex.slice(1, 3), 16) > Number.parseInt(hex.slice(5, 7), 16);
    expect(red(classOf(scale, 8).fill)).toBe(true);
    expect(red(classOf(scale, -8).fill)).toBe(false);
  });

  it("uses ColorBrewer RdBu and puts the critical value on a class edge", () => {
    expect(scale.classes.map((c) => c.fill)).toEqual([...RDBU_9]);
    expect(scale.edges).toContain(3.29);
    expect(classOf(scale, 3.2)).not.toBe(classOf(scale, 3.4));
  });

  it("never relies on colour alone: sign, marker and words beyond the critical value", () => {
    const more = heatCell(scale, 7.94);
    expect(more.printed).toBe("+7.9");
    expect(more.marker).toBe("▲");
    expect(more.beyond).toBe(true);
    expect(more.description).toBe("+7.9, more than expected, beyond ±3.29");
    const fewer = heatCell(scale, -3.41);
    expect(fewer.printed).toBe("−3.4");
    expect(fewer.marker).toBe("▼");
    const within = heatCell(scale, 2.1);
    expect(within.marker).toBe("");
    expect(within.beyond).toBe(false);
    expect(within.description).toBe("+2.1, more than expected");
    expect(heatCell(scale, 3.29).beyond).toBe(false);
  });

  it("prints every cell's value at WCAG AA contrast (4.5:1) on its fill", () => {
    for (const c of scale.classes) expect(contrastRatio(c.fill, c.text)).toBeGreaterThanOrEqual(4.5);
  });

  it("has a legend with one entry per class and the marker rule", () => {
    const legend = heatLegend(scale);
    expect(legend.classes).toHaveLength(9);
    expect(legend.classes[0].label).toBe("below −6.6");
    expect(legend.classes[4].label).toBe("−1 to +1");
    expect(legend.classes[8].label).toBe("above +6.6");
    expect(legend.note).toContain("▲ more and ▼ fewer");
    expect(legend.note).toContain("±3.29");
  });

  it("keeps edges increasing for small critical values and refuses a non-positive one", () => {
    for (const crit of [0.8, 1.5, 2, 2.5, 4.4]) {
      const s = heatScale(crit);
      for (let k = 1; k < s.edges.length; k++) expect(s.edges[k]).toBeGreaterThan(s.edges[k - 1]);
      expect(s.edges).toContain(crit);
    }
    expect(() => heatScale(0)).toThrow(RangeError);
  });
});
