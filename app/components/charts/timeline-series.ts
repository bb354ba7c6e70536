import type { TimelineData } from "@/lib/review/timeline";
import { niceTicks } from "./scale";

/**
 * What the timeline chart draws, in columns of plain numbers: the browser gets only
 * these (about 40 bytes a window), not the scan's window objects, and the server-drawn
 * first paint and the interactive chart are drawn from the same numbers and ticks.
 */
export interface TimelineSeries {
  /** Day number (days since 1970-01-01) of each window's last and first day. */
  x: number[];
  s: number[];
  /** −log10 adjusted p (capped), null when not testable. */
  e: (number | null)[];
  /** Bias-corrected Cramér's V. */
  v: (number | null)[];
  /** Defects in the window. */
  n: number[];
  /** Adjusted p (3 significant digits). */
  p: (number | null)[];
  /** Indices of flagged windows, and of windows whose p is beyond the drawing cap. */
  flagged: number[];
  capped: number[];
  bands: { x1: number; x2: number; key: string }[];
  xDomain: [number, number];
  xTicks: { x: number; label: string }[];
  alphaLine: number;
  minEffect: number;
  evidence: { domain: [number, number]; ticks: number[] };
  effect: { domain: [number, number]; ticks: number[] };
}

/** Frames of the two panels: the recharts charts use the same heights and margins. */
export const EVIDENCE_PANEL = { height: 230, top: 12, bottom: 0, left: 62, right: 16 } as const;
export const EFFECT_PANEL = { height: 150, top: 8, bottom: 4, left: 62, right: 16 } as const;

function round(x: number | null, digits: number): number | null {
  return x === null ? null : Number(x.toFixed(digits));
}

/**
 * The timeline's columns and shared axis ticks from the shaped timeline.
 *
 * @example
 * // two windows, the second flagged
 * timelineSeries(data).flagged; // [1]
 */
export function timelineSeries(t: TimelineData): TimelineSeries {
  const e = t.points.map((p) => round(p.evidence, 3));
  const v = t.points.map((p) => round(p.v, 4));
  const maxE = Math.max(t.alphaLine, ...e.map((x) => x ?? 0));
  const maxV = Math.max(t.minEffect, 0.01, ...v.map((x) => x ?? 0));
  return {
    x: t.points.map((p) => p.x),
    s: t.points.map((p) => Math.round(Date.parse(`${p.start}T00:00:00Z`) / 86_400_000)),
    e,
    v,
    n: t.points.map((p) => p.n),
    p: t.points.map((p) => (p.adjustedP === null ? null : Number(p.adjustedP.toPrecision(3)))),
    flagged: t.points.flatMap((p, i) => (p.flagged ? [i] : [])),
    capped: t.points.flatMap((p, i) => (p.capped ? [i] : [])),
    bands: t.bands.map((b) => ({ x1: b.x1, x2: b.x2, key: b.start })),
    xDomain: [t.xMin, t.xMax],
    xTicks: t.ticks,
    alphaLine: Number(t.alphaLine.toFixed(4)),
    minEffect: t.minEffect,
    evidence: niceTicks(0, maxE, 4),
    effect: niceTicks(0, maxV, 3),
  };
}

/**
 * The rate panel of one group in columns: defects per unit, the u-chart centre line
 * and limits (5 significant digits), and which windows are outside the limits.
 */
export interface RateSeries {
  /** Day number of each window's last day. */
  x: number[];
  u: (number | null)[];
  centre: (number | null)[];
  upper: (number | null)[];
  lower: (number | null)[];
  /** Indices of windows outside the limits (above, below), and of windows whose rate test flagged. */
  above: number[];
  below: number[];
  rateFlagged: number[];
  xDomain: [number, number];
  xTicks: { x: number; label: string }[];
  y: { domain: [number, number]; ticks: number[] };
}

export const RATE_PANEL = { height: 220, top: 10, bottom: 4, left: 74, right: 16 } as const;

/**
 * The rate panel's columns and ticks from the shaped timeline's rate points.
 *
 * @example
 * rateSeriesOf(points, ticks, [xMin, xMax]).above; // indices of windows above the upper limit
 */
export function rateSeriesOf(
  points: readonly { x: number; u: number | null; centre: number | null; upper: number | null; lower: number | null; outside: "above" | "below" | null; windowFlagged: boolean }[],
  xTicks: { x: number; label: string }[],
  xDomain: [number, number],
): RateSeries {
  const values = points.flatMap((p) => [p.u, p.upper, p.lower].filter((v): v is number => v !== null && Number.isFinite(v)));
  const lo = values.length ? Math.min(...values) : 0;
  const hi = values.length ? Math.max(...values) : 1;
  return {
    x: points.map((p) => p.x),
    u: points.map((p) => p.u),
    centre: points.map((p) => p.centre),
    upper: points.map((p) => p.upper),
    lower: points.map((p) => p.lower),
    above: points.flatMap((p, i) => (p.outside === "above" ? [i] : [])),
    below: points.flatMap((p, i) => (p.outside === "below" ? [i] : [])),
    rateFlagged: points.flatMap((p, i) => (p.windowFlagged ? [i] : [])),
    xDomain,
    xTicks,
    y: niceTicks(Math.max(0, lo), hi, 4),
  };
}
