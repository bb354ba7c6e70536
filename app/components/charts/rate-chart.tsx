"use client";

import { usePathname, useRouter, useSearchParams } from "next/navigation";
import { useId, useTransition } from "react";
import { CartesianGrid, ComposedChart, Line, Tooltip, XAxis, YAxis, type DotItemDotProps, type TooltipContentProps } from "recharts";
import type { RatePanel, RatePanelPoint } from "@/lib/review/timeline";
import { CHART } from "./palette";

type Point = RatePanelPoint;

/**
 * Defects per unit of one group per window, with the u-chart centre line (the window's
 * pooled rate over the compared groups) and the group's limits (step lines, since they
 * move with the units inspected). Outside the limits: a filled square where the window's
 * rate test flagged, a hollow one otherwise. The select picks the group through the URL
 * (?rate=CODE), so only one group's series travels to the browser; groups with signals
 * are listed first.
 */
export function RateChart({ panel, ticks, xMin, xMax }: { panel: RatePanel; ticks: { x: number; label: string }[]; xMin: number; xMax: number }) {
  const ordered = [...panel.groups].sort((a, b) => b.signals - a.signals);
  const router = useRouter();
  const pathname = usePathname();
  const search = useSearchParams();
  const [pending, startTransition] = useTransition();
  const id = useId();
  const group = panel.groups.find((g) => g.code === panel.selected) ?? ordered[0];
  if (!group) return null;
  const choose = (code: string) => {
    const next = new URLSearchParams(search.toString());
    next.set("rate", code);
    startTransition(() => router.replace(`${pathname}?${next.toString()}`, { scroll: false }));
  };
  const tickLabel = (x: number) => ticks.find((t) => t.x === x)?.label ?? "";
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
      <ComposedChart
        data={panel.points}
        responsive
        style={{ width: "100%", height: 220 }}
        margin={{ top: 10, right: 16, bottom: 4, left: 4 }}
        title={`Defects per unit, ${group.name}, with u-chart limits`}
      >
        <CartesianGrid stroke={CHART.grid} vertical={false} />
        <XAxis dataKey="x" type="number" domain={[xMin, xMax]} ticks={ticks.map((t) => t.x)} tickFormatter={tickLabel} tick={{ fill: CHART.axis, fontSize: 12 }} allowDataOverflow />
        <YAxis width={70} tick={{ fill: CHART.axis, fontSize: 12 }} tickFormatter={(v: number) => v.toFixed(4)} domain={["auto", "auto"]} />
        <Tooltip content={RateTooltip} />
        <Line dataKey="upper" type="stepAfter" stroke={CHART.limit} strokeDasharray="5 3" dot={false} isAnimationActive={false} name="Upper limit" />
        <Line dataKey="lower" type="stepAfter" stroke={CHART.limit} strokeDasharray="5 3" dot={false} isAnimationActive={false} name="Lower limit" />
        <Line dataKey="centre" stroke={CHART.limit} strokeWidth={1} dot={false} isAnimationActive={false} name="Centre" />
        <Line dataKey="u" stroke={CHART.structure} strokeWidth={1.5} dot={SignalDot} isAnimationActive={false} name="Defects per unit" />
      </ComposedChart>
      <p className="chart-key">
        <span className="key-line" aria-hidden="true" /> defects per unit · <span className="key-dash" aria-hidden="true" /> u-chart limits (±3σ) ·{" "}
        <span className="key-square" aria-hidden="true" /> outside the limits, rate test flagged · <span className="key-hollow" aria-hidden="true" /> outside the limits only
      </p>
    </div>
  );
}

function SignalDot(props: DotItemDotProps) {
  const p = props.payload as Point | undefined;
  const { cx, cy } = props as unknown as { cx?: number; cy?: number };
  if (!p || !p.outside || cx === undefined || cy === undefined) return null;
  // Filled square: outside the limits in a window whose rate test flagged; hollow: outside the limits only.
  return p.windowFlagged ? (
    <rect key={props.index} x={cx - 3.5} y={cy - 3.5} width={7} height={7} fill={CHART.signal} data-signal={p.outside} />
  ) : (
    <rect key={props.index} x={cx - 3} y={cy - 3} width={6} height={6} fill="#fff" stroke={CHART.signal} strokeWidth={1.2} />
  );
}

function RateTooltip(props: TooltipContentProps) {
  if (!props.active || !props.payload?.length) return null;
  const p = props.payload[0]?.payload as Point | undefined;
  if (!p) return null;
  const f = (x: number | null) => (x === null ? "—" : x.toFixed(5));
  return (
    <div className="chart-tooltip">
      <strong>Window ending {p.end}</strong>
      <div>defects per unit {f(p.u)}</div>
      <div>
        limits {f(p.lower)} – {f(p.upper)} (centre {f(p.centre)})
      </div>
      {p.outside ? <div>{p.outside === "above" ? "Above the upper limit" : "Below the lower limit"}</div> : null}
      {p.windowFlagged ? <div>Rate test flagged this window</div> : null}
    </div>
  );
}
