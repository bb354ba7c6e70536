import { contrastRatio } from "@/lib/review/heatmap";
import { html, num, type Markup } from "@/lib/review/markup";
import type { MixSeries } from "@/lib/review/window";

const W = 520;
const LEFT = 175;
const ROW = 30;
const BAR = 22;
const TOP = 4;
const AXIS = 22;
/** Segments narrower than this (percent) carry no printed value; their <title> still does. */
const PRINT_FROM = 7;

function inkOn(fill: string): string {
  return contrastRatio(fill, "#000000") >= contrastRatio(fill, "#ffffff") ? "#000000" : "#ffffff";
}

/**
 * Each group's mix of categories as 100% stacked bars, drawn as SVG on the server: one
 * bar per group, one segment per category (the largest categories coloured from a
 * colour-vision-safe set, the rest folded into a grey "Other"), white gaps between
 * segments, the percent printed inside every segment wide enough to hold it (in black
 * or white, whichever contrasts more) and a <title> on each. The legend is HTML below
 * the chart; the counts are in the observed-count table.
 *
 * @example
 * mixSvg([{ key: "c0", name: "Seal leak", colour: "#0072b2" }], [{ row: "Press line 1", c0: 100 }], "Mix").html.includes("100%"); // true
 */
export function mixSvg(series: readonly MixSeries[], bars: readonly Record<string, number | string>[], label: string): Markup {
  const H = TOP + ROW * Math.max(1, bars.length) + AXIS;
  // Room on the right for the last tick's label ("100%"), centred on the axis end.
  const plotW = W - LEFT - 18;
  const x = (pct: number) => LEFT + (pct / 100) * plotW;
  const axisY = TOP + ROW * Math.max(1, bars.length);
  const grid = [0, 25, 50, 75, 100].map(
    (v) => html`<line x1="${num(x(v))}" x2="${num(x(v))}" y1="${TOP}" y2="${axisY}" class="grid"/><text x="${num(x(v))}" y="${axisY + 15}" text-anchor="middle">${v}%</text>`,
  );
  const rows = bars.map((b, i) => {
    const y = TOP + i * ROW + (ROW - BAR) / 2;
    let at = 0;
    const segments = series.map((s) => {
      const pct = Number(b[s.key] ?? 0);
      if (!(pct > 0)) return "";
      const x0 = x(at);
      at += pct;
      const w = x(at) - x0;
      const text =
        pct >= PRINT_FROM
          ? html`<text x="${num(x0 + w / 2)}" y="${num(y + BAR / 2 + 4)}" text-anchor="middle" fill="${inkOn(s.colour)}">${pct.toFixed(0)}</text>`
          : "";
      return html`<g><title>${String(b.row)}: ${s.name} ${pct.toFixed(1)}%</title><rect x="${num(x0)}" y="${num(y)}" width="${num(w)}" height="${BAR}" fill="${s.colour}" stroke="#fff" stroke-width="1"/>${text}</g>`;
    });
    return html`<text x="${LEFT - 8}" y="${num(y + BAR / 2 + 4)}" text-anchor="end" class="label">${String(b.row)}</text>${segments}`;
  });
  return html`<svg viewBox="0 0 ${W} ${H}" class="static-chart" role="img" aria-label="${label}">${grid}${rows}</svg>`;
}

/**
 * The mix chart's legend as an HTML list: a swatch and the category's name per series.
 *
 * @example
 * mixLegend([{ key: "c0", name: "Seal leak", colour: "#0072b2" }]).html; // '<ul class="chart-legend"><li><span class="swatch" style="background:#0072b2" aria-hidden="true"></span>Seal leak</li></ul>'
 */
export function mixLegend(series: readonly MixSeries[]): Markup {
  const items = series.map((s) => html`<li><span class="swatch" style="background:${s.colour}" aria-hidden="true"></span>${s.name}</li>`);
  return html`<ul class="chart-legend">${items}</ul>`;
}
