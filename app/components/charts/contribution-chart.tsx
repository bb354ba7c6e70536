"use client";

import { Bar, BarChart, CartesianGrid, Rectangle, Tooltip, XAxis, YAxis, type BarShapeProps, type TooltipContentProps } from "recharts";
import { CHART } from "./palette";

export interface ContributionBar {
  label: string;
  /** Share of X² in percent. */
  percent: number;
  residual: number;
  beyond: boolean;
}

/**
 * Each cell's share of X², largest first. Bars for more-than-expected cells are red and
 * solid, fewer-than-expected blue and hatched by an outline, and the label carries the
 * sign, so the direction does not rest on colour.
 */
export function ContributionChart({ bars }: { bars: ContributionBar[] }) {
  const data = bars.map((b) => ({ ...b, name: `${b.residual >= 0 ? "▲" : "▼"} ${b.label}` }));
  return (
    <div data-chart="contribution">
      <BarChart
        data={data}
        layout="vertical"
        responsive
        style={{ width: "100%", height: Math.max(160, 28 * data.length + 40) }}
        margin={{ top: 4, right: 24, bottom: 4, left: 8 }}
        title="Share of the chi-square carried by each cell"
      >
        <CartesianGrid stroke={CHART.grid} horizontal={false} />
        <XAxis type="number" dataKey="percent" tickFormatter={(v: number) => `${v}%`} tick={{ fill: CHART.axis, fontSize: 12 }} />
        <YAxis type="category" dataKey="name" width={230} tick={{ fill: CHART.axis, fontSize: 12 }} interval={0} />
        <Tooltip content={ContributionTooltip} cursor={{ fill: "#0000000d" }} />
        <Bar dataKey="percent" isAnimationActive={false} shape={ContributionShape} name="Share of X²" />
      </BarChart>
    </div>
  );
}

function ContributionShape(props: BarShapeProps) {
  const b = props.payload as ContributionBar | undefined;
  const more = (b?.residual ?? 0) >= 0;
  return (
    <Rectangle
      {...props}
      fill={more ? CHART.more : "#ffffff"}
      stroke={more ? CHART.more : CHART.fewer}
      strokeWidth={more ? 0 : 2}
      fillOpacity={b?.beyond ? 1 : 0.55}
    />
  );
}

function ContributionTooltip(props: TooltipContentProps) {
  if (!props.active || !props.payload?.length) return null;
  const b = props.payload[0]?.payload as ContributionBar | undefined;
  if (!b) return null;
  return (
    <div className="chart-tooltip">
      <strong>{b.label}</strong>
      <div>{b.percent.toFixed(1)}% of X²</div>
      <div>
        adjusted residual {b.residual >= 0 ? "+" : "−"}
        {Math.abs(b.residual).toFixed(1)} ({b.residual >= 0 ? "more" : "fewer"} than expected)
      </div>
    </div>
  );
}
