import { html, num, type Markup } from "@/lib/review/markup";
import { CHART } from "./palette";

/**
 * The server-drawn first paint of an interactive (recharts) line chart: the same frame,
 * axes, bands, reference lines, lines and point markers, as markup in the page's HTML,
 * so the chart is on screen as soon as the HTML is, and the interactive chart that
 * replaces it after hydration draws on top of the same geometry.
 *
 * The server does not know the chart's width, so the plot area is an SVG stretched to
 * whatever width the page gives it (viewBox 1000 units wide, preserveAspectRatio none,
 * strokes that do not scale), while text and point markers are HTML positioned in
 * percent of the plot width: nothing in it is distorted at any width. Margins are those
 * of the recharts version: `left` = its YAxis width plus left margin, XAxis 30 px high.
 */

export interface PlotFrame {
  /** Total height in px (the recharts chart's height). */
  height: number;
  top: number;
  bottom: number;
  /** From the chart's left edge to the plot area (YAxis width + left margin). */
  left: number;
  right: number;
  xDomain: [number, number];
  yDomain: [number, number];
  yTicks: number[];
  yTickFormat?: (v: number) => string;
  xTicks: { x: number; label: string }[];
  /** Rotated label beside the y axis. */
  yLabel?: string;
}

export interface PlotLine {
  xs: readonly number[];
  ys: readonly (number | null)[];
  stroke: string;
  width: number;
  dash?: string;
  /** Draw as steps (horizontal, then vertical), as recharts' "stepAfter". */
  step?: boolean;
}

export interface PlotLayers {
  bands?: { x1: number; x2: number; outline?: boolean }[];
  hLines?: { y: number; stroke: string; dash?: string; width?: number; label?: string; labelAt?: "right" | "top-right" }[];
  lines: PlotLine[];
  markers?: { x: number; y: number; shape: "diamond" | "square" | "hollow" }[];
}

/** x axis height of recharts' XAxis (its default). */
export const X_AXIS_HEIGHT = 30;
const VIEW_W = 1000;

/**
 * Markup of one chart panel; `label` is its text alternative (role="img").
 *
 * Cost: linear in the number of points (one path per line).
 *
 * @example
 * plotMarkup(
 *   { height: 150, top: 8, bottom: 4, left: 62, right: 16, xDomain: [0, 10], yDomain: [0, 1], yTicks: [0, 1], xTicks: [] },
 *   { lines: [{ xs: [0, 10], ys: [0, 1], stroke: "#000", width: 1 }] },
 *   "V per window",
 * ).html.includes('d="M0,108L1000,0"'); // true
 */
export function plotMarkup(f: PlotFrame, layers: PlotLayers, label: string): Markup {
  const plotH = f.height - f.top - f.bottom - X_AXIS_HEIGHT;
  const [x0, x1] = f.xDomain;
  const [y0, y1] = f.yDomain;
  const fx = (x: number) => (x1 === x0 ? 0.5 : (x - x0) / (x1 - x0));
  const vx = (x: number) => num(VIEW_W * fx(x));
  const py = (y: number) => plotH * (1 - (Math.min(y1, Math.max(y0, y)) - y0) / (y1 - y0 || 1));
  // A horizontal position inside the plot area, for HTML placed over it.
  const left = (x: number) => `calc(${f.left}px + (100% - ${f.left + f.right}px) * ${fx(x).toFixed(5)})`;
  const fmt = f.yTickFormat ?? ((v: number) => String(v));

  const yAxis = f.yTicks.map(
    (v) =>
      html`<line x1="${f.left - 6}" x2="${f.left}" y1="${num(f.top + py(v))}" y2="${num(f.top + py(v))}" class="axis"/><text x="${f.left - 8}" y="${num(f.top + py(v) + 4)}" text-anchor="end">${fmt(v)}</text>`,
  );
  const yLabel = f.yLabel
    ? html`<text transform="translate(14,${num(f.top + plotH / 2)}) rotate(-90)" text-anchor="middle">${f.yLabel}</text>`
    : "";
  const grid = f.yTicks.map((v) => `M0,${num(py(v))}H${VIEW_W}`).join("");
  const bands = (layers.bands ?? []).map(
    (b) =>
      html`<rect x="${vx(b.x1)}" y="0" width="${num(Math.max(1, VIEW_W * (fx(b.x2) - fx(b.x1))))}" height="${plotH}" fill="${CHART.bandFill}" fill-opacity="0.9"${
        b.outline ? html` stroke="${CHART.signal}" stroke-opacity="0.5" vector-effect="non-scaling-stroke"` : ""
      }/>`,
  );
  const hLines = (layers.hLines ?? []).map(
    (l) =>
      html`<path d="M0,${num(py(l.y))}H${VIEW_W}" stroke="${l.stroke}" stroke-width="${l.width ?? 1}"${l.dash ? html` stroke-dasharray="${l.dash}"` : ""} vector-effect="non-scaling-stroke"/>`,
  );
  const lines = layers.lines.map((l) => {
    let d = "";
    let open = false;
    for (let i = 0; i < l.xs.length; i++) {
      const y = l.ys[i];
      if (y === null || !Number.isFinite(y)) {
        open = false;
        continue;
      }
      const X = vx(l.xs[i]);
      const Y = num(py(y));
      if (!open) d += `M${X},${Y}`;
      else d += l.step ? `H${X}V${Y}` : `L${X},${Y}`;
      open = true;
    }
    return html`<path d="${d}" fill="none" stroke="${l.stroke}" stroke-width="${l.width}"${l.dash ? html` stroke-dasharray="${l.dash}"` : ""} vector-effect="non-scaling-stroke"/>`;
  });
  const labels = (layers.hLines ?? [])
    .filter((l) => l.label)
    .map((l) =>
      l.labelAt === "top-right"
        ? html`<span class="plot-note" style="right:${f.right + 4}px;top:${num(f.top + py(l.y) - 17)}px;color:${l.stroke}">${l.label}</span>`
        : html`<span class="plot-note" style="left:calc(100% - ${f.right - 5}px);top:${num(f.top + py(l.y) - 9)}px;color:${l.stroke}">${l.label}</span>`,
    );
  const markers = (layers.markers ?? []).map(
    (m) => html`<span class="plot-mark plot-${m.shape}" style="left:${left(m.x)};top:${num(f.top + py(m.y))}px"></span>`,
  );
  const xTicks = f.xTicks.map(
    (t) =>
      html`<span class="plot-tick" style="left:${left(t.x)};top:${f.top + plotH}px">${t.label}</span>`,
  );
  return html`<div class="plot" style="height:${f.height}px" role="img" aria-label="${label}"><svg class="plot-y" width="${f.left}" height="${f.height}" aria-hidden="true">${yAxis}${yLabel}</svg><svg class="plot-area" style="left:${f.left}px;top:${f.top}px;width:calc(100% - ${f.left + f.right}px);height:${plotH}px" viewBox="0 0 ${VIEW_W} ${plotH}" preserveAspectRatio="none" aria-hidden="true"><path d="${grid}" class="grid" vector-effect="non-scaling-stroke"/>${bands}${hLines}${lines}<path d="M0,0V${plotH}H${VIEW_W}" class="axis" fill="none" vector-effect="non-scaling-stroke"/></svg><div aria-hidden="true">${labels}${markers}${xTicks}</div></div>`;
}
