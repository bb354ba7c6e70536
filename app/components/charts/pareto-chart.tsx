"use client";

import { Bar, CartesianGrid, ComposedChart, Line, Tooltip, XAxis, YAxis } from "recharts";
import { CHART } from "./palette";

function short(name: string): string {
  return name.length > 16 ? `${name.slice(0, 15)}…` : name;
}

/** A Pareto chart of one group: categories by count, largest first, with the cumulative share. */
export function ParetoChart({ name, bars }: { name: string; bars: { category: string; count: number; cumulative: number }[] }) {
  return (
    <div data-chart="pareto">
      <ComposedChart
        data={bars}
        responsive
        style={{ width: "100%", height: 280 }}
        margin={{ top: 8, right: 8, bottom: 4, left: 0 }}
        title={`Pareto chart of ${name}`}
      >
        <CartesianGrid stroke={CHART.grid} vertical={false} />
        <XAxis dataKey="category" tick={{ fill: CHART.axis, fontSize: 11 }} interval={0} angle={-45} textAnchor="end" height={100} tickFormatter={short} />
        <YAxis yAxisId="count" width={44} tick={{ fill: CHART.axis, fontSize: 11 }} allowDecimals={false} />
        <YAxis yAxisId="cum" orientation="right" width={40} domain={[0, 100]} ticks={[0, 50, 80, 100]} tickFormatter={(v: number) => `${v}%`} tick={{ fill: CHART.axis, fontSize: 11 }} />
        <Tooltip formatter={(v, key) => (key === "Cumulative" ? `${Number(v).toFixed(0)}%` : String(v))} />
        <Bar yAxisId="count" dataKey="count" name="Defects" fill={CHART.structure} isAnimationActive={false} />
        <Line yAxisId="cum" dataKey="cumulative" name="Cumulative" stroke={CHART.signal} strokeWidth={1.5} dot={{ r: 2.5, fill: CHART.signal }} isAnimationActive={false} />
      </ComposedChart>
    </div>
  );
}
