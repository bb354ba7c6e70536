import { html, num, type Markup } from "@/lib/review/markup";
import { CHART } from "./palette";

export interface ParetoBar {
  category: string;
  count: number;
  /** Cumulative share up to and including this bar, in percent. */
  cumulative: number;
}

/**
 * A Pareto chart of one group drawn as SVG markup on the server: categories by count,
 * largest first, bars on the left axis and the cumulative share as a line on the right.
 * The window screen shows one per group (up to dozens), so these carry no chart library
 * and no React element per node: they are in the HTML at first paint and cost the
 * browser nothing to start. The bars are one path and the text is styled by the sheet
 * (review.css), which keeps a dozen charts small; the exact counts are in the
 * observed-count table, the largest three in the text alternative and the caption.
 *
 * @example
 * paretoSvg("Press line 3", [{ category: "Seal leak", count: 123, cumulative: 20.1 }]).html.includes('aria-label="Pareto chart of Press line 3: Seal leak 123"'); // true
 */
export function paretoSvg(name: string, bars: readonly ParetoBar[]): Markup {
  const W = 440;
  const H = 250;
  const m = { top: 10, right: 40, bottom: 92, left: 40 };
  const plotW = W - m.left - m.right;
  const plotH = H - m.top - m.bottom;
  const base = m.top + plotH;
  const max = Math.max(1, ...bars.map((b) => b.count));
  const step = niceStep(max);
  const top = Math.ceil(max / step) * step;
  const y = (v: number) => base - (v / top) * plotH;
  const yc = (pct: number) => base - (pct / 100) * plotH;
  const slot = plotW / Math.max(1, bars.length);
  const bw = Math.max(2, slot * 0.72);
  const x = (i: number) => m.left + slot * i + slot / 2;
  const ticks: number[] = [];
  for (let v = 0; v <= top; v += step) ticks.push(v);
  const line = bars.map((b, i) => `${i === 0 ? "M" : "L"}${num(x(i))},${num(yc(b.cumulative))}`).join(" ");
  const summary = bars
    .slice(0, 3)
    .map((b) => `${b.category} ${b.count}`)
    .join(", ");
  const grid = ticks.map(
    (v) => html`<line x1="${m.left}" x2="${W - m.right}" y1="${num(y(v))}" y2="${num(y(v))}" class="grid"/><text x="${m.left - 5}" y="${num(y(v) + 4)}" text-anchor="end">${v}</text>`,
  );
  const right = [0, 50, 80, 100].map((p) => html`<text x="${W - m.right + 5}" y="${num(yc(p) + 4)}">${p}%</text>`);
  const rects = bars.map((b, i) => `M${num(x(i) - bw / 2)},${base}V${num(y(b.count))}h${num(bw)}V${base}z`).join("");
  // One path for all the cumulative points: a dot is a zero-length segment drawn with a round cap.
  const dots = bars.map((b, i) => `M${num(x(i))},${num(yc(b.cumulative))}h0`).join("");
  const labels = bars.map(
    (b, i) => html`<text transform="translate(${num(x(i) + 3)},${base + 8})rotate(-50)">${b.category.length > 18 ? `${b.category.slice(0, 17)}…` : b.category}</text>`,
  );
  return html`<svg viewBox="0 0 ${W} ${H}" class="pareto-svg" role="img" aria-label="Pareto chart of ${name}: ${summary}${bars.length > 3 ? ", …" : ""}">${grid}${right}<line x1="${m.left}" x2="${m.left}" y1="${m.top}" y2="${base}" class="axis"/><line x1="${W - m.right}" x2="${W - m.right}" y1="${m.top}" y2="${base}" class="axis"/><path d="${rects}" fill="${CHART.structure}"/><path d="${line}" fill="none" stroke="${CHART.signal}" stroke-width="1.5"/><path d="${dots}" stroke="${CHART.signal}" stroke-width="4.4" stroke-linecap="round"/><g text-anchor="end">${labels}</g></svg>`;
}

/**
 * One captioned figure per group (name, chart, its three largest categories), for the
 * window screen's grid of Pareto charts.
 *
 * @example
 * paretoFigures([{ name: "Press line 3", bars: [{ category: "Seal leak", count: 123, cumulative: 20.1 }] }]).html.includes("Largest: Seal leak 123."); // true
 */
export function paretoFigures(groups: readonly { name: string; bars: readonly ParetoBar[] }[]): Markup {
  return html`${groups.map((g) => {
    const largest = g.bars
      .slice(0, 3)
      .map((b) => `${b.category} ${b.count}`)
      .join(", ");
    return html`<figure class="chart-card"><h3>${g.name}</h3><div data-chart="pareto">${paretoSvg(g.name, g.bars)}</div><figcaption>Largest: ${largest}.</figcaption></figure>`;
  })}`;
}

function niceStep(max: number): number {
  const raw = max / 4;
  const power = 10 ** Math.floor(Math.log10(raw));
  const f = raw / power;
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * power;
}
