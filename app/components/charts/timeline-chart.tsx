"use client";

import { useRouter } from "next/navigation";
import { useCallback } from "react";
import {
  CartesianGrid,
  ComposedChart,
  Line,
  ReferenceArea,
  ReferenceLine,
  Tooltip,
  XAxis,
  YAxis,
  type DotItemDotProps,
  type MouseHandlerDataParam,
  type TooltipContentProps,
} from "recharts";
import { formatP, formatRange, formatV } from "@/lib/review/format";
import type { TimelineData, TimelinePoint } from "@/lib/review/timeline";
import { CHART } from "./palette";

/**
 * The rolling-window timeline: evidence (−log10 adjusted p) against the α line on top,
 * bias-corrected Cramér's V below, episodes as shaded bands across both. Flagged
 * windows are drawn as filled diamonds (shape as well as colour). Clicking a point opens
 * that window; the table beside the chart offers the same links by keyboard.
 */
export function TimelineChart({ code, data }: { code: string; data: TimelineData }) {
  const router = useRouter();
  const open = useCallback(
    (state: MouseHandlerDataParam) => {
      const i = typeof state.activeTooltipIndex === "number" ? state.activeTooltipIndex : Number(state.activeTooltipIndex);
      const p = Number.isInteger(i) ? data.points[i] : undefined;
      if (p) router.push(`/comparisons/${encodeURIComponent(code)}/windows/${p.start}`);
    },
    [code, data.points, router],
  );
  const ticks = data.ticks.map((t) => t.x);
  const tickLabel = (x: number) => data.ticks.find((t) => t.x === x)?.label ?? "";
  const domain: [number, number] = [data.xMin, data.xMax];
  const syncId = `timeline-${code}`;

  return (
    <div className="chart-stack" data-chart="timeline">
      <ComposedChart
        data={data.points}
        syncId={syncId}
        responsive
        style={{ width: "100%", height: 230 }}
        margin={{ top: 12, right: 16, bottom: 0, left: 4 }}
        onClick={open}
        className="chart-clickable"
        title="Evidence per window: minus log10 of the adjusted p-value"
      >
        <CartesianGrid stroke={CHART.grid} vertical={false} />
        <XAxis dataKey="x" type="number" domain={domain} ticks={ticks} tickFormatter={tickLabel} tick={{ fill: CHART.axis, fontSize: 12 }} allowDataOverflow />
        <YAxis
          width={58}
          tick={{ fill: CHART.axis, fontSize: 12 }}
          label={{ value: "−log₁₀ adj. p", angle: -90, position: "insideLeft", offset: 10, fill: CHART.axis, fontSize: 12, dy: 40 }}
        />
        {data.bands.map((b) => (
          <ReferenceArea key={b.start} x1={b.x1} x2={b.x2} fill={CHART.bandFill} fillOpacity={0.9} stroke={CHART.signal} strokeOpacity={0.5} ifOverflow="hidden" />
        ))}
        <ReferenceLine
          y={data.alphaLine}
          stroke={CHART.signal}
          strokeDasharray="6 4"
          strokeWidth={1.5}
          label={{ value: "α", position: "right", fill: CHART.signal, fontSize: 13 }}
        />
        <Tooltip content={TimelineTooltip} />
        <Line
          dataKey="evidence"
          stroke={CHART.structure}
          strokeWidth={1.5}
          dot={FlaggedDot}
          activeDot={{ r: 5, fill: CHART.structure }}
          isAnimationActive={false}
          connectNulls={false}
          name="Evidence"
        />
      </ComposedChart>
      <ComposedChart
        data={data.points}
        syncId={syncId}
        responsive
        style={{ width: "100%", height: 150 }}
        margin={{ top: 8, right: 16, bottom: 4, left: 4 }}
        onClick={open}
        className="chart-clickable"
        title="Bias-corrected Cramér's V per window"
      >
        <CartesianGrid stroke={CHART.grid} vertical={false} />
        <XAxis dataKey="x" type="number" domain={domain} ticks={ticks} tickFormatter={tickLabel} tick={{ fill: CHART.axis, fontSize: 12 }} allowDataOverflow />
        <YAxis
          width={58}
          tick={{ fill: CHART.axis, fontSize: 12 }}
          label={{ value: "V", angle: -90, position: "insideLeft", offset: 14, fill: CHART.axis, fontSize: 12 }}
        />
        {data.bands.map((b) => (
          <ReferenceArea key={b.start} x1={b.x1} x2={b.x2} fill={CHART.bandFill} fillOpacity={0.9} ifOverflow="hidden" />
        ))}
        {data.minEffect > 0 ? (
          <ReferenceLine y={data.minEffect} stroke={CHART.signal} strokeDasharray="2 3" label={{ value: "min. effect", position: "insideTopRight", fill: CHART.signal, fontSize: 11 }} />
        ) : null}
        <Tooltip content={TimelineTooltip} />
        <Line dataKey="v" stroke={CHART.second} strokeWidth={1.5} dot={false} activeDot={{ r: 4 }} isAnimationActive={false} connectNulls={false} name="V" />
      </ComposedChart>
    </div>
  );
}

function FlaggedDot(props: DotItemDotProps) {
  const p = props.payload as TimelinePoint | undefined;
  const { cx, cy } = props as unknown as { cx?: number; cy?: number };
  if (!p || !p.flagged || cx === undefined || cy === undefined) return null;
  const s = 4.5;
  return (
    <path
      key={props.index}
      d={`M${cx},${cy - s} L${cx + s},${cy} L${cx},${cy + s} L${cx - s},${cy} Z`}
      fill={CHART.signal}
      stroke="#fff"
      strokeWidth={0.8}
      data-flagged="true"
    />
  );
}

function TimelineTooltip(props: TooltipContentProps) {
  if (!props.active || !props.payload?.length) return null;
  const p = props.payload[0]?.payload as TimelinePoint | undefined;
  if (!p) return null;
  const detail =
    p.state === "untestable"
      ? "Not testable"
      : `adjusted p ${formatP(p.adjustedP)} · V ${formatV(p.v)} · ${p.n.toLocaleString("en-GB")} defects${p.flagged ? " · flagged" : ""}`;
  return (
    <div className="chart-tooltip">
      <strong>{formatRange(p.start, p.end)}</strong>
      <div>{detail}</div>
      {p.capped ? <div>p below 10⁻⁵⁰: drawn at the top</div> : null}
      <div className="muted">Click to open this window</div>
    </div>
  );
}
