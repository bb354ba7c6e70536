import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { contributionSvg } from "@/app/components/charts/contribution-svg";
import { mixLegend, mixSvg } from "@/app/components/charts/mix-svg";
import { paretoSvg } from "@/app/components/charts/pareto-svg";
import { plotMarkup } from "@/app/components/charts/plot-markup";
import { niceTicks, tickFormat } from "@/app/components/charts/scale";
import { heatScale, RDBU_9 } from "@/lib/review/heatmap";

describe("heat classes in review.css", () => {
  // The cells carry class heat-k0…8 and the colours live in the stylesheet: they must be
  // the scale's own fill and contrast-checked text colour (lib/review/heatmap.ts).
  it("match the RdBu fills and the text colours the scale chose for contrast", () => {
    const css = readFileSync(path.join(__dirname, "../../app/components/review/review.css"), "utf8");
    const scale = heatScale(3.29);
    scale.classes.forEach((c, k) => {
      const rule = css.match(new RegExp(`\\.heat-k${k} \\{ background: (#[0-9a-f]{6}); color: (#[0-9a-f]{6}); \\}`));
      expect(rule, `rule for heat-k${k}`).not.toBeNull();
      expect(rule![1]).toBe(RDBU_9[k]);
      expect(rule![2]).toBe(c.text);
    });
  });
});

describe("niceTicks", () => {
  // Worked by hand: 11.7 / 4 intervals = 2.925, rounded up to the next of 1, 2, 2.5, 5 × 10^k = 5, so 0, 5, 10, 15;
  // 0.098 / 3 = 0.033 → 0.05; 0.0016 / 4 = 0.0004 → 0.0005 from 0.003.
  it("covers the range with round steps", () => {
    expect(niceTicks(0, 11.7)).toEqual({ domain: [0, 15], ticks: [0, 5, 10, 15] });
    expect(niceTicks(0, 0.098, 3)).toEqual({ domain: [0, 0.1], ticks: [0, 0.05, 0.1] });
    expect(niceTicks(0.0031, 0.0047)).toEqual({ domain: [0.003, 0.005], ticks: [0.003, 0.0035, 0.004, 0.0045, 0.005] });
  });
  it("gives a flat series a unit-wide axis and refuses non-finite bounds", () => {
    expect(niceTicks(0, 0).domain).toEqual([0, 1]);
    expect(() => niceTicks(0, Number.NaN)).toThrow(RangeError);
  });
  it("formats every tick with the decimals the finest one needs", () => {
    const f = tickFormat([0, 0.025, 0.05]);
    expect([0, 0.025, 0.05].map(f)).toEqual(["0.000", "0.025", "0.050"]);
  });
});

describe("server-drawn charts", () => {
  it("escape names and label direction with a marker, not colour alone", () => {
    const svg = contributionSvg(
      [
        { label: "Line <3> × Seal leak", share: 0.41, residual: 7.9, beyond: true },
        { label: "Line 2 × Flash", share: 0.06, residual: -1.2, beyond: false },
      ],
      "Share of X²",
    ).html;
    expect(svg).toContain("▲ Line &lt;3&gt; × Seal leak");
    expect(svg).toContain("▼ Line 2 × Flash");
    expect(svg).toContain(">41%<");
    // Faded bar within the critical value, the label keeps full ink.
    expect(svg).toMatch(/stroke="#2166ac" stroke-width="2" opacity="0.55"/);
  });

  it("print each wide-enough mix segment with its percent in black or white by contrast", () => {
    const series = [
      { key: "c0", name: "Seal leak", colour: "#000000" },
      { key: "c1", name: "Flash", colour: "#f0e442" },
      { key: "other", name: "Other (3 categories)", colour: "#9a9a9a" },
    ];
    const svg = mixSvg(series, [{ row: "Press line 1", c0: 60, c1: 35, other: 5 }], "Mix").html;
    expect(svg).toContain('fill="#ffffff">60<'); // on black
    expect(svg).toContain('fill="#000000">35<'); // on yellow
    expect(svg).not.toContain(">5<"); // too narrow to print, still in its <title>
    expect(svg).toContain("<title>Press line 1: Other (3 categories) 5.0%</title>");
    expect(mixLegend(series).html).toContain('<span class="swatch" style="background:#f0e442" aria-hidden="true"></span>Flash');
  });

  it("name the group and its largest categories in the Pareto chart's text alternative", () => {
    const svg = paretoSvg("Press line 3", [
      { category: "Seal leak", count: 123, cumulative: 50 },
      { category: "Flash", count: 100, cumulative: 90.7 },
      { category: "Warp", count: 20, cumulative: 98.8 },
      { category: "Burr", count: 3, cumulative: 100 },
    ]).html;
    expect(svg).toContain('aria-label="Pareto chart of Press line 3: Seal leak 123, Flash 100, Warp 20, …"');
    // One bar per category, drawn as closed subpaths of one path.
    expect(svg.match(/z/g)).toHaveLength(4);
  });

  it("place a first-paint plot in the recharts geometry: plot area from `left` to width − `right`", () => {
    const m = plotMarkup(
      { height: 150, top: 8, bottom: 4, left: 62, right: 16, xDomain: [0, 10], yDomain: [0, 1], yTicks: [0, 0.5, 1], xTicks: [{ x: 5, label: "Mid" }] },
      { lines: [{ xs: [0, 5, 10], ys: [0, null, 1], stroke: "#000", width: 1 }], markers: [{ x: 10, y: 1, shape: "diamond" }] },
      "V per window",
    ).html;
    // 150 − 8 − 4 − 30 (x axis) = 108 px of plot, ticks below it at 8 + 108 = 116 px; a null breaks the line.
    expect(m).toContain('d="M0,108M1000,0"');
    expect(m).toContain("width:calc(100% - 78px);height:108px");
    expect(m).toContain('left:calc(62px + (100% - 78px) * 0.50000);top:116px">Mid<');
    expect(m).toContain('class="plot-mark plot-diamond" style="left:calc(62px + (100% - 78px) * 1.00000);top:8px"');
    expect(m).toContain('role="img" aria-label="V per window"');
  });
});
