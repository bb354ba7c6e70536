"use client";

import { useRouter } from "next/navigation";
import { useCallback, useMemo, useRef, type ReactNode } from "react";
import {
  CartesianGrid,
  ComposedChart,
  Line,
  ReferenceArea,
  ReferenceLine,
  Scatter,
  Tooltip,
  XAxis,
  YAxis,
  type MouseHandlerDataParam,
  type TooltipContentProps,
} from "recharts";
import { formatP, formatRange, formatV } from "@/lib/review/format";
import { CHART } from "./palette";
import { AXIS_TICK, dateAxisProps } from "./date-axis";
import { gridAt, tickFormat } from "./scale";
import { EFFECT_PANEL, EVIDENCE_PANEL, type TimelineSeries } from "./timeline-series";
import { useWidth } from "./use-width";

interface Row {
  i: number;
  x: number;
  e: number | null;
  v: number | null;
}

const isoOf = (day: number) => new Date(day * 86_400_000).toISOString().slice(0, 10);
/** recharts' YAxis width; the panels' `left` adds the chart's left margin to it. */
const Y_AXIS = 58;

/**
 * The rolling-window timeline: evidence (−log10 adjusted p) against the α line on top,
 * bias-corrected Cramér's V below, episodes as shaded bands across both. Flagged
 * windows are drawn as filled diamonds (shape as well as colour). Clicking a point opens
 * that window; the tables beside the chart offer the same links by keyboard, and the
 * chart's own keyboard layer (arrow keys) moves the tooltip from window to window.
 *
 * Each panel shows its server-drawn first paint (timeline-frame.ts) until it has
 * hydrated and measured its width, so the page never waits for the chart library to
 * show the chart; the V panel turns interactive a frame after the evidence panel, so
 * that the first is not held up by the second.
 */
export function TimelineChart({ code, series, firstPaint }: { code: string; series: TimelineSeries; firstPaint: { evidence: string; effect: string } }) {
  const router = useRouter();
  const rows = useMemo<Row[]>(() => series.x.map((x, i) => ({ i, x, e: series.e[i], v: series.v[i] })), [series]);
  const open = useCallback(
    (state: MouseHandlerDataParam) => {
      const i = Number(state.activeTooltipIndex);
      if (Number.isInteger(i) && i >= 0 && i < series.s.length) router.push(`/comparisons/${encodeURIComponent(code)}/windows/${isoOf(series.s[i])}`);
    },
    [code, series, router],
  );
  const tooltip = useCallback((props: TooltipContentProps) => <TimelineTooltip {...props} series={series} />, [series]);
  const shared = { code, series, rows, open, tooltip };
  return (
    <div className="chart-stack" data-chart="timeline">
      <EvidencePanel {...shared} firstPaint={firstPaint.evidence} />
      <EffectPanel {...shared} firstPaint={firstPaint.effect} />
    </div>
  );
}

interface PanelProps {
  code: string;
  series: TimelineSeries;
  rows: Row[];
  open: (state: MouseHandlerDataParam) => void;
  tooltip: (props: TooltipContentProps) => ReactNode;
  firstPaint: string;
}

function EvidencePanel({ code, series, rows, open, tooltip, firstPaint }: PanelProps) {
  const ref = useRef<HTMLDivElement>(null);
  const width = useWidth(ref);
  // Flagged windows are drawn by a Scatter of their own few points: a dot renderer on the
  // line would be called for every window (hundreds) to draw nothing for most of them.
  const flaggedRows = useMemo(() => series.flagged.map((i) => rows[i]).filter((r) => r.e !== null), [series, rows]);
  if (!width) return <div ref={ref} dangerouslySetInnerHTML={{ __html: firstPaint }} />;
  const p = EVIDENCE_PANEL;
  const grid = gridAt(series.evidence.ticks, series.evidence.domain);
  return (
    <div ref={ref}>
      <ComposedChart
        data={rows}
        syncId={`timeline-${code}`}
        width={width}
        height={p.height}
        margin={{ top: p.top, right: p.right, bottom: p.bottom, left: p.left - Y_AXIS }}
        onClick={open}
        className="chart-clickable"
        title="Evidence per window: minus log10 of the adjusted p-value"
      >
        <CartesianGrid stroke={CHART.grid} vertical={false} horizontalCoordinatesGenerator={grid.horizontal} verticalCoordinatesGenerator={grid.vertical} />
        <XAxis {...dateAxisProps(series)} />
        <YAxis
          width={Y_AXIS}
          domain={series.evidence.domain}
          ticks={series.evidence.ticks}
          interval={0}
          tickFormatter={tickFormat(series.evidence.ticks)}
          tick={AXIS_TICK}
          allowDataOverflow
          label={{ value: "−log₁₀ adj. p", angle: -90, position: "insideLeft", offset: 10, fill: CHART.axis, fontSize: 12, dy: 40 }}
        />
        {series.bands.map((b) => (
          <ReferenceArea key={b.key} x1={b.x1} x2={b.x2} fill={CHART.bandFill} fillOpacity={0.9} stroke={CHART.signal} strokeOpacity={0.5} ifOverflow="hidden" />
        ))}
        <ReferenceLine
          y={series.alphaLine}
          stroke={CHART.signal}
          strokeDasharray="6 4"
          strokeWidth={1.5}
          label={{ value: "α", position: "right", fill: CHART.signal, fontSize: 13 }}
        />
        <Tooltip content={tooltip} />
        <Line
          dataKey="e"
          stroke={CHART.structure}
          strokeWidth={1.5}
          dot={false}
          activeDot={{ r: 5, fill: CHART.structure }}
          isAnimationActive={false}
          connectNulls={false}
          name="Evidence"
        />
        <Scatter data={flaggedRows} dataKey="e" shape={FlaggedDot} isAnimationActive={false} tooltipType="none" legendType="none" name="Flagged" />
      </ComposedChart>
    </div>
  );
}

function EffectPanel({ code, series, rows, open, tooltip, firstPaint }: PanelProps) {
  const ref = useRef<HTMLDivElement>(null);
  const width = useWidth(ref, true);
  if (!width) return <div ref={ref} dangerouslySetInnerHTML={{ __html: firstPaint }} />;
  const p = EFFECT_PANEL;
  const grid = gridAt(series.effect.ticks, series.effect.domain);
  return (
    <div ref={ref}>
      <ComposedChart
        data={rows}
        syncId={`timeline-${code}`}
        width={width}
        height={p.height}
        margin={{ top: p.top, right: p.right, bottom: p.bottom, left: p.left - Y_AXIS }}
        onClick={open}
        className="chart-clickable"
        title="Bias-corrected Cramér's V per window"
      >
        <CartesianGrid stroke={CHART.grid} vertical={false} horizontalCoordinatesGenerator={grid.horizontal} verticalCoordinatesGenerator={grid.vertical} />
        <XAxis {...dateAxisProps(series)} />
        <YAxis
          width={Y_AXIS}
          domain={series.effect.domain}
          ticks={series.effect.ticks}
          interval={0}
          tickFormatter={tickFormat(series.effect.ticks)}
          tick={AXIS_TICK}
          allowDataOverflow
          label={{ value: "V", angle: -90, position: "insideLeft", offset: 14, fill: CHART.axis, fontSize: 12 }}
        />
        {series.bands.map((b) => (
          <ReferenceArea key={b.key} x1={b.x1} x2={b.x2} fill={CHART.bandFill} fillOpacity={0.9} ifOverflow="hidden" />
        ))}
        {series.minEffect > 0 ? (
          <ReferenceLine y={series.minEffect} stroke={CHART.signal} strokeDasharray="2 3" label={{ value: "min. effect", position: "insideTopRight", fill: CHART.signal, fontSize: 11 }} />
        ) : null}
        <Tooltip content={tooltip} />
        <Line dataKey="v" stroke={CHART.second} strokeWidth={1.5} dot={false} activeDot={{ r: 4 }} isAnimationActive={false} connectNulls={false} name="V" />
      </ComposedChart>
    </div>
  );
}

/** A filled diamond (shape as well as colour) on a flagged window. */
function FlaggedDot(props: unknown) {
  const { cx, cy } = props as { cx?: number; cy?: number };
  if (cx === undefined || cy === undefined) return <g />;
  const s = 4.5;
  return <path d={`M${cx},${cy - s} L${cx + s},${cy} L${cx},${cy + s} L${cx - s},${cy} Z`} fill={CHART.signal} stroke="#fff" strokeWidth={0.8} data-flagged="true" />;
}

function TimelineTooltip(props: TooltipContentProps & { series: TimelineSeries }) {
  if (!props.active || !props.payload?.length) return null;
  const row = props.payload[0]?.payload as Row | undefined;
  if (!row) return null;
  const s = props.series;
  const i = row.i;
  const flagged = s.flagged.includes(i);
  const detail =
    s.p[i] === null
      ? "Not testable"
      : `adjusted p ${formatP(s.p[i])} · V ${formatV(s.v[i])} · ${s.n[i].toLocaleString("en-GB")} defects${flagged ? " · flagged" : ""}`;
  return (
    <div className="chart-tooltip">
      <strong>{formatRange(isoOf(s.s[i]), isoOf(s.x[i]))}</strong>
      <div>{detail}</div>
      {s.capped.includes(i) ? <div>p below 10⁻⁵⁰: drawn at the top</div> : null}
      <div className="muted">Click to open this window</div>
    </div>
  );
}
