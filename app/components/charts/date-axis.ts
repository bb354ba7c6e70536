import { CHART } from "./palette";

/** Tick text of every interactive chart's axes. */
export const AXIS_TICK = { fill: CHART.axis, fontSize: 12 };

/**
 * Props for a recharts XAxis over window start dates (x = day number), shared by the
 * timeline's two panels and the rate panels so their date axes line up tick for tick
 * with each other and with the server-drawn first paint (same ticks, same labels).
 */
export function dateAxisProps(series: { xDomain: [number, number]; xTicks: { x: number; label: string }[] }) {
  const labels = new Map(series.xTicks.map((t) => [t.x, t.label]));
  return {
    dataKey: "x",
    type: "number" as const,
    domain: series.xDomain,
    ticks: series.xTicks.map((t) => t.x),
    interval: 0 as const,
    tickFormatter: (x: number) => labels.get(x) ?? "",
    tick: AXIS_TICK,
    allowDataOverflow: true,
  };
}
