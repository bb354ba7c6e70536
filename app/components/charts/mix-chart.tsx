"use client";

import { Bar, BarChart, CartesianGrid, Legend, Tooltip, XAxis, YAxis } from "recharts";
import type { MixSeries } from "@/lib/review/window";
import { CHART } from "./palette";

/** Each group's mix of categories as a 100% stacked bar; the numbers are in the table beside it. */
export function MixChart({ series, bars }: { series: MixSeries[]; bars: Record<string, number | string>[] }) {
  return (
    <div data-chart="mix">
      <BarChart
        data={bars}
        layout="vertical"
        responsive
        style={{ width: "100%", height: Math.max(150, 34 * bars.length + 90) }}
        margin={{ top: 4, right: 16, bottom: 4, left: 8 }}
        title="Mix of defect categories per group, percent of the group's defects"
      >
        <CartesianGrid stroke={CHART.grid} horizontal={false} />
        <XAxis type="number" domain={[0, 100]} ticks={[0, 25, 50, 75, 100]} tickFormatter={(v: number) => `${v}%`} tick={{ fill: CHART.axis, fontSize: 12 }} />
        <YAxis type="category" dataKey="row" width={150} tick={{ fill: CHART.axis, fontSize: 12 }} interval={0} />
        <Tooltip formatter={(v) => `${Number(v).toFixed(1)}%`} />
        <Legend wrapperStyle={{ fontSize: 12 }} formatter={(value) => <span style={{ color: CHART.ink }}>{value}</span>} />
        {series.map((s) => (
          <Bar key={s.key} dataKey={s.key} name={s.name} stackId="mix" fill={s.colour} stroke="#ffffff" strokeWidth={1} isAnimationActive={false} />
        ))}
      </BarChart>
    </div>
  );
}
