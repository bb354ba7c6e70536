"use client";

import { usePathname, useRouter, useSearchParams } from "next/navigation";
import { useCallback, useId, useMemo, useRef, useTransition } from "react";
import { CartesianGrid, ComposedChart, Line, Scatter, Tooltip, XAxis, YAxis, type TooltipContentProps } from "recharts";
import { CHART } from "./palette";
import { AXIS_TICK, dateAxisProps } from "./date-axis";
import { gridAt, tickFormat } from "./scale";
import { RATE_PANEL, type RateSeries } from "./timeline-series";
import { useWidth } from "./use-width";

interface Row {
  i: number;
  x: number;
  u: number | null;
  centre: number | null;
  upper: number | null;
  lower: number | null;
}

const isoOf = (day: number) => new Date(day * 86_400_000).toISOString().slice(0, 10);

/**
 * Defects per unit of one group per window, with the u-chart centre line (the window's
 * pooled rate over the compared groups) and the group's limits (step lines, since they
 * move with the units inspected). Outside the limits: a filled square where the window's
 * rate test flagged, a hollow one otherwise. The select picks the group through the URL
 * (?rate=CODE), so only one group's series travels to the browser; groups with signals
 * are listed first. Until hydrated and measured it shows `firstPaint`, the same chart
 * drawn on the server.
 */
export function RateChart({
  groups,
  selected,
  series,
  firstPaint,
}: {
  groups: { code: string; name: string; signals: number }[];
  selected: string;
  series: RateSeries;
  firstPaint: string;
}) {
  const ordered = useMemo(() => [...groups].sort((a, b) => b.signals - a.signals), [groups]);
  const router = useRouter();
  const pathname = usePathname();
  const search = useSearchParams();
  const [pending, startTransition] = useTransition();
  const id = useId();
  const ref = useRef<HTMLDivElement>(null);
  // Lower on the page: interactive a frame after the timeline, showing its first paint meanwhile.
  const width = useWidth(ref, true);
  const rows = useMemo<Row[]>(
    () => series.x.map((x, i) => ({ i, x, u: series.u[i], centre: series.centre[i], upper: series.upper[i], lower: series.lower[i] })),
    [series],
  );
  const tooltip = useCallback((props: TooltipContentProps) => <RateTooltip {...props} series={series} />, [series]);
  // Windows outside the limits as Scatters of their own few points (filled where the rate
  // test flagged too, hollow otherwise), not a dot renderer called for every window.
  const outside = useMemo(() => {
    const flagged = new Set(series.rateFlagged);
    const points = [...series.above, ...series.below].map((i) => rows[i]).filter((r) => r.u !== null);
    return { flagged: points.filter((r) => flagged.has(r.i)), only: points.filter((r) => !flagged.has(r.i)) };
  }, [series, rows]);
  const group = groups.find((g) => g.code === selected) ?? ordered[0];
  if (!group) return null;
  const choose = (code: string) => {
    const next = new URLSearchParams(search.toString());
    next.set("rate", code);
    startTransition(() => router.replace(`${pathname}?${next.toString()}`, { scroll: false }));
  };
  const grid = gridAt(series.y.ticks, series.y.domain);
  return (
    <div data-chart="rate">
      <div className="field inline-field no-print">
        <label htmlFor={id}>Group</label>
        <select id={id} value={group.code} onChange={(e) => choose(e.target.value)} aria-busy={pending}>
          {ordered.map((g) => (
            <option key={g.code} value={g.code}>
              {g.name}
              {g.signals ? ` — rate signal in ${g.signals} windows` : ""}
            </option>
          ))}
        </select>
      </div>
      {width === null || width === 0 ? (
        <div ref={ref} dangerouslySetInnerHTML={{ __html: firstPaint }} />
      ) : (
        <div ref={ref}>
          <ComposedChart
            data={rows}
            width={width}
            height={RATE_PANEL.height}
            margin={{ top: RATE_PANEL.top, right: RATE_PANEL.right, bottom: RATE_PANEL.bottom, left: RATE_PANEL.left - 70 }}
            title={`Defects per unit, ${group.name}, with u-chart limits`}
          >
            <CartesianGrid stroke={CHART.grid} vertical={false} horizontalCoordinatesGenerator={grid.horizontal} verticalCoordinatesGenerator={grid.vertical} />
            <XAxis {...dateAxisProps(series)} />
            <YAxis width={70} tick={AXIS_TICK} tickFormatter={tickFormat(series.y.ticks)} domain={series.y.domain} ticks={series.y.ticks} interval={0} allowDataOverflow />
            <Tooltip content={tooltip} />
            <Line dataKey="upper" type="stepAfter" stroke={CHART.limit} strokeDasharray="5 3" dot={false} isAnimationActive={false} name="Upper limit" />
            <Line dataKey="lower" type="stepAfter" stroke={CHART.limit} strokeDasharray="5 3" dot={false} isAnimationActive={false} name="Lower limit" />
            <Line dataKey="centre" stroke={CHART.limit} strokeWidth={1} dot={false} isAnimationActive={false} name="Centre" />
            <Line dataKey="u" stroke={CHART.structure} strokeWidth={1.5} dot={false} isAnimationActive={false} name="Defects per unit" />
            <Scatter data={outside.flagged} dataKey="u" shape={FilledSquare} isAnimationActive={false} tooltipType="none" legendType="none" />
            <Scatter data={outside.only} dataKey="u" shape={HollowSquare} isAnimationActive={false} tooltipType="none" legendType="none" />
          </ComposedChart>
        </div>
      )}
      <p className="chart-key">
        <span className="key-line" aria-hidden="true" /> defects per unit · <span className="key-dash" aria-hidden="true" /> u-chart limits (±3σ) ·{" "}
        <span className="key-square" aria-hidden="true" /> outside the limits, rate test flagged · <span className="key-hollow" aria-hidden="true" /> outside the limits only
      </p>
    </div>
  );
}

/** Outside the limits in a window whose rate test flagged. */
function FilledSquare(props: unknown) {
  const { cx, cy } = props as { cx?: number; cy?: number };
  if (cx === undefined || cy === undefined) return <g />;
  return <rect x={cx - 3.5} y={cy - 3.5} width={7} height={7} fill={CHART.signal} data-signal="true" />;
}

/** Outside the limits only. */
function HollowSquare(props: unknown) {
  const { cx, cy } = props as { cx?: number; cy?: number };
  if (cx === undefined || cy === undefined) return <g />;
  return <rect x={cx - 3} y={cy - 3} width={6} height={6} fill="#fff" stroke={CHART.signal} strokeWidth={1.2} />;
}

function RateTooltip(props: TooltipContentProps & { series: RateSeries }) {
  if (!props.active || !props.payload?.length) return null;
  const p = props.payload[0]?.payload as Row | undefined;
  if (!p) return null;
  const s = props.series;
  const f = (x: number | null) => (x === null ? "—" : x.toFixed(5));
  const outside = s.above.includes(p.i) ? "above" : s.below.includes(p.i) ? "below" : null;
  return (
    <div className="chart-tooltip">
      <strong>Window ending {isoOf(p.x)}</strong>
      <div>defects per unit {f(p.u)}</div>
      <div>
        limits {f(p.lower)} – {f(p.upper)} (centre {f(p.centre)})
      </div>
      {outside ? <div>{outside === "above" ? "Above the upper limit" : "Below the lower limit"}</div> : null}
      {s.rateFlagged.includes(p.i) ? <div>Rate test flagged this window</div> : null}
    </div>
  );
}
