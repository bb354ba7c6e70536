import { formatSigned } from "@/lib/review/format";
import { html, num, type Markup } from "@/lib/review/markup";
import { CHART } from "./palette";

export interface ContributionBar {
  label: string;
  /** Share of X², 0–1. */
  share: number;
  residual: number;
  beyond: boolean;
}

const W = 520;
const ROW = 34;
const TOP = 6;
const AXIS = 22;
const RIGHT = 44;
/** Room for the first tick's label ("0%"), centred on the axis start. */
const LEFT = 14;

/**
 * Each cell's share of X², largest first, drawn as SVG on the server. Each bar has its
 * label above it and its share at its end. More-than-expected cells are red and solid,
 * fewer-than-expected outlined in blue, and the label starts with ▲ or ▼, so direction
 * does not rest on colour; cells within the critical value are drawn faded. A <title>
 * per bar gives the adjusted residual on hover; the figure caption and the tables beside
 * carry the numbers.
 *
 * @example
 * contributionSvg([{ label: "Press line 3 × Seal leak", share: 0.41, residual: 7.9, beyond: true }], "Share of X²").html.startsWith("<svg"); // true
 */
export function contributionSvg(bars: readonly ContributionBar[], label: string): Markup {
  const H = TOP + ROW * Math.max(1, bars.length) + AXIS;
  const plotW = W - LEFT - RIGHT;
  const max = Math.max(0.01, ...bars.map((b) => b.share));
  const step = max > 0.5 ? 0.2 : max > 0.2 ? 0.1 : max > 0.1 ? 0.05 : 0.02;
  const top = Math.ceil(max / step) * step;
  const x = (share: number) => LEFT + (share / top) * plotW;
  const ticks: number[] = [];
  for (let v = 0; v <= top + 1e-9; v += step) ticks.push(v);
  const axisY = TOP + ROW * Math.max(1, bars.length);
  const grid = ticks.map(
    (v) => html`<line x1="${num(x(v))}" x2="${num(x(v))}" y1="${TOP}" y2="${axisY}" class="grid"/><text x="${num(x(v))}" y="${axisY + 15}" text-anchor="middle">${Math.round(v * 100)}%</text>`,
  );
  const rows = bars.map((b, i) => {
    const y = TOP + i * ROW;
    const more = b.residual >= 0;
    const w = Math.max(1, x(b.share) - LEFT);
    // Faded bars only, never faded words: the labels keep their contrast.
    const faded = b.beyond ? "" : html` opacity="0.55"`;
    const shape = more
      ? html`<rect x="${LEFT}" y="${y + 16}" width="${num(w)}" height="13" fill="${CHART.more}"${faded}/>`
      : html`<rect x="${LEFT + 1}" y="${y + 17}" width="${num(Math.max(1, w - 2))}" height="11" fill="#fff" stroke="${CHART.fewer}" stroke-width="2"${faded}/>`;
    const title = `${b.label}: ${(100 * b.share).toFixed(1)}% of X², adjusted residual ${formatSigned(b.residual)} (${more ? "more" : "fewer"} than expected)`;
    return html`<g><title>${title}</title><text x="${LEFT}" y="${y + 12}" class="label">${more ? "▲" : "▼"} ${b.label}</text>${shape}<text x="${num(LEFT + w + 5)}" y="${y + 27}">${(100 * b.share).toFixed(0)}%</text></g>`;
  });
  return html`<svg viewBox="0 0 ${W} ${H}" class="static-chart" role="img" aria-label="${label}">${grid}${rows}</svg>`;
}
