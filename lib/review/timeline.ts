import type { ComparisonRecord } from "@/lib/db/comparisons";
import type { Episode, ScanWindow } from "@/lib/monitor/types";
import { formatDay, formatRange, minusLog10 } from "./format";
import type { Names } from "./names";
import { stateOf, type ComparisonState } from "./overview";

/**
 * The rolling-window timeline of one comparison, shaped for the chart components: plain
 * numbers keyed by window, episode bands, and the rate panel's series (pure).
 */

/** Largest −log10 p drawn; a p that underflowed to 0 sits on this ceiling. */
export const MINUS_LOG10_CAP = 50;

export interface TimelinePoint {
  /** Index of the window in the scan. */
  i: number;
  start: string;
  end: string;
  /** Day number of the window's last day (x position). */
  x: number;
  /** −log10 adjusted p, capped; null when not testable. */
  evidence: number | null;
  /** True when the p-value was beyond the cap. */
  capped: boolean;
  v: number | null;
  flagged: boolean;
  state: ComparisonState;
  /** Defects in the window and its adjusted p, for the tooltip. */
  n: number;
  adjustedP: number | null;
}

export interface TimelineBand {
  x1: number;
  x2: number;
  start: string;
  end: string;
  windows: number;
  label: string;
  peakStart: string;
}

export interface RatePanelPoint {
  x: number;
  end: string;
  u: number | null;
  centre: number | null;
  upper: number | null;
  lower: number | null;
  outside: "above" | "below" | null;
  windowFlagged: boolean;
}

export interface RatePanel {
  /** Every group, with how many windows carry a rate signal for it (rate test flagged, group outside its limits). */
  groups: { code: string; name: string; signals: number }[];
  /** The group drawn (only its series is sent to the browser). */
  selected: string;
  points: RatePanelPoint[];
}

export interface TimelineData {
  points: TimelinePoint[];
  bands: TimelineBand[];
  /** −log10 α, the line a window must cross to flag. */
  alphaLine: number;
  minEffect: number;
  xMin: number;
  xMax: number;
  /** x positions of month starts (≤ 13 of them), with their labels. */
  ticks: { x: number; label: string }[];
  rate: RatePanel | null;
  /** Summary for the text alternative. */
  summary: string;
}

/** Five significant digits: enough for a chart, a fraction of the bytes. */
function sig(x: number | null): number | null {
  return x === null ? null : Number(x.toPrecision(5));
}

export function dayNumberOf(iso: string): number {
  return Math.round(Date.parse(`${iso}T00:00:00Z`) / 86_400_000);
}

export function shapeTimeline(
  c: ComparisonRecord,
  windows: readonly ScanWindow[],
  episodes: readonly Episode[],
  names: Names,
  rates: {
    groups: string[];
    byGroup: Record<string, ({ end: string; u: number | null; centre: number | null; upper: number | null; lower: number | null; outside: "above" | "below" | null; windowFlagged: boolean } | null)[]>;
  } | null,
  rateGroup?: string | null,
): TimelineData {
  const points: TimelinePoint[] = windows.map((w, i) => {
    const raw = minusLog10(w.adjustedPValue, 400);
    const capped = raw !== null && raw > MINUS_LOG10_CAP;
    const state = stateOf(w);
    return {
      i,
      start: w.start,
      end: w.end,
      x: dayNumberOf(w.end),
      evidence: raw === null ? null : Math.min(raw, MINUS_LOG10_CAP),
      capped,
      v: w.cramersVCorrected,
      flagged: w.flagged,
      state,
      n: w.n,
      adjustedP: w.adjustedPValue,
    };
  });
  const bands: TimelineBand[] = episodes.map((e, k) => {
    const inside = points.filter((p) => p.flagged && p.start >= e.start && p.end <= e.end);
    const x1 = inside.length ? inside[0].x : dayNumberOf(e.end);
    const x2 = inside.length ? inside[inside.length - 1].x : dayNumberOf(e.end);
    // A one-window episode still gets a visible band, one day wide.
    return {
      x1: x2 === x1 ? x1 - 0.5 : x1,
      x2: x2 === x1 ? x1 + 0.5 : x2,
      start: e.start,
      end: e.end,
      windows: e.windows,
      label: `Episode ${k + 1}: ${formatRange(e.start, e.end)}`,
      peakStart: e.peak.start,
    };
  });
  let rate: RatePanel | null = null;
  if (rates && rates.groups.length) {
    const signals = (g: string) => (rates.byGroup[g] ?? []).filter((p) => p !== null && p.outside !== null && p.windowFlagged).length;
    const groups = rates.groups.map((g) => ({ code: g, name: names.row(c.compare, g, c.historyWeeks), signals: signals(g) }));
    const byDefault = [...groups].sort((a, b) => b.signals - a.signals)[0].code;
    const selected = rateGroup && rates.groups.includes(rateGroup) ? rateGroup : byDefault;
    const points = (rates.byGroup[selected] ?? [])
      .filter((p) => p !== null)
      .map((p) => ({
        x: dayNumberOf(p.end),
        end: p.end,
        u: sig(p.u),
        centre: sig(p.centre),
        upper: sig(p.upper),
        lower: sig(p.lower),
        outside: p.outside,
        windowFlagged: p.windowFlagged,
      }));
    rate = { groups, selected, points };
  }
  const flagged = points.filter((p) => p.flagged).length;
  const testable = points.filter((p) => p.state !== "untestable").length;
  const summary =
    points.length === 0
      ? "No windows yet: the history is shorter than one window."
      : `${points.length} windows from ${formatDay(points[0].start)} to ${formatDay(points[points.length - 1].end)}; ` +
        `${testable} testable, ${flagged} flagged, in ${episodes.length} ${episodes.length === 1 ? "episode" : "episodes"}.`;
  return {
    points,
    bands,
    alphaLine: -Math.log10(c.alpha),
    minEffect: c.minEffect,
    xMin: points.length ? points[0].x : 0,
    xMax: points.length ? points[points.length - 1].x : 1,
    ticks: monthTicks(points.length ? points[0].end : null, points.length ? points[points.length - 1].end : null),
    rate,
    summary,
  };
}

const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];

/** Month starts between two dates; every second or third month on long spans, so at most 13 ticks. */
export function monthTicks(first: string | null, last: string | null): { x: number; label: string }[] {
  if (!first || !last) return [];
  const out: { x: number; label: string }[] = [];
  let y = Number(first.slice(0, 4));
  let m = Number(first.slice(5, 7));
  // The first tick is the first month start on or after `first`.
  if (first.slice(8, 10) !== "01") m++;
  for (;;) {
    if (m > 12) {
      m = 1;
      y++;
    }
    const iso = `${y}-${String(m).padStart(2, "0")}-01`;
    if (iso > last) break;
    out.push({ x: dayNumberOf(iso), label: m === 1 ? `${MONTHS[0]} ${y}` : MONTHS[m - 1] });
    m++;
  }
  const every = Math.ceil(out.length / 13);
  return every > 1 ? out.filter((_, k) => k % every === 0) : out;
}
