import type { Markup } from "@/lib/review/markup";
import { CHART } from "./palette";
import { plotMarkup, type PlotFrame } from "./plot-markup";
import { tickFormat } from "./scale";
import { EFFECT_PANEL, EVIDENCE_PANEL, RATE_PANEL, type RateSeries, type TimelineSeries } from "./timeline-series";

/**
 * Both panels as server-drawn markup: the first paint that the interactive chart
 * replaces once the page has hydrated (and what a browser without JavaScript shows).
 */
export function timelineFirstPaint(s: TimelineSeries, summary: string): { evidence: Markup; effect: Markup } {
  const frame = (panel: typeof EVIDENCE_PANEL | typeof EFFECT_PANEL, y: { domain: [number, number]; ticks: number[] }, yLabel: string): PlotFrame => ({
    ...panel,
    xDomain: s.xDomain,
    yDomain: y.domain,
    yTicks: y.ticks,
    yTickFormat: tickFormat(y.ticks),
    xTicks: s.xTicks,
    yLabel,
  });
  const flagged = s.flagged.flatMap((i) => (s.e[i] === null ? [] : [{ x: s.x[i], y: s.e[i]!, shape: "diamond" as const }]));
  const top = plotMarkup(
    frame(EVIDENCE_PANEL, s.evidence, "−log₁₀ adj. p"),
    {
      bands: s.bands.map((b) => ({ ...b, outline: true })),
      hLines: [{ y: s.alphaLine, stroke: CHART.signal, dash: "6 4", width: 1.5, label: "α", labelAt: "right" }],
      lines: [{ xs: s.x, ys: s.e, stroke: CHART.structure, width: 1.5 }],
      markers: flagged,
    },
    `Evidence per window, minus log10 of the adjusted p-value. ${summary}`,
  );
  const bottom = plotMarkup(
    frame(EFFECT_PANEL, s.effect, "V"),
    {
      bands: s.bands,
      hLines: s.minEffect > 0 ? [{ y: s.minEffect, stroke: CHART.signal, dash: "2 3", label: "min. effect", labelAt: "top-right" }] : [],
      lines: [{ xs: s.x, ys: s.v, stroke: CHART.second, width: 1.5 }],
    },
    "Bias-corrected Cramér's V per window",
  );
  return { evidence: top, effect: bottom };
}

/**
 * The rate panel of one group as server-drawn markup, the first paint of RateChart.
 */
export function rateFirstPaint(s: RateSeries, label: string): Markup {
  const flagged = new Set(s.rateFlagged);
  const markers = [...s.above, ...s.below].flatMap((i) =>
    s.u[i] === null ? [] : [{ x: s.x[i], y: s.u[i]!, shape: flagged.has(i) ? ("square" as const) : ("hollow" as const) }],
  );
  return plotMarkup(
    { ...RATE_PANEL, xDomain: s.xDomain, yDomain: s.y.domain, yTicks: s.y.ticks, yTickFormat: tickFormat(s.y.ticks), xTicks: s.xTicks },
    {
      lines: [
        { xs: s.x, ys: s.upper, stroke: CHART.limit, width: 1, dash: "5 3", step: true },
        { xs: s.x, ys: s.lower, stroke: CHART.limit, width: 1, dash: "5 3", step: true },
        { xs: s.x, ys: s.centre, stroke: CHART.limit, width: 1 },
        { xs: s.x, ys: s.u, stroke: CHART.structure, width: 1.5 },
      ],
      markers,
    },
    label,
  );
}
