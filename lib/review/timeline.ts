import type { ComparisonRecord } from "@/lib/db/comparisons";
import type { Episode, ScanWindow } from "@/lib/monitor/types";
import { formatDay, formatP, formatRange, formatV, minusLog10 } from "./format";
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
  /** Tooltip lines, prepared here so the chart only prints. */
  label: string;
  detail: string;
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

export interface RatePanelGroup {
  code: string;
  name: string;
  points: { x: number; end: string; u: number | null; centre: number | null; upper: number | null; lower: number | null; outside: "above" | "below" | null; windowFlagged: boolean }[];
  /** Windows where the rate test flagged and this group sat outside its limits. */
  signals: number;
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
  rate: RatePanelGroup[] | null;
  /** Summary for the text alternative. */
  summary: string;
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
): TimelineData {
  const points: TimelinePoint[] = windows.map((w, i) => {
    const raw = minusLog10(w.adjustedPValue, 400);
    const capped = raw !== null && raw > MINUS_LOG10_CAP;
    const state = stateOf(w);
    const detail = !w.testable
      ? `Not testable: ${w.reason ?? "too few counts"}`
      : `adjusted p ${formatP(w.adjustedPValue)} · V ${formatV(w.cramersVCorrected)} · ${w.n.toLocaleString("en-GB")} defects${w.flagged ? " · flagged" : ""}`;
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
      label: formatRange(w.start, w.end),
      detail,
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
  const rate = rates
    ? rates.groups.map((g) => {
        const series = rates.byGroup[g] ?? [];
        const pts = series
          .filter((p) => p !== null)
          .map((p) => ({ x: dayNumberOf(p.end), end: p.end, u: p.u, centre: p.centre, upper: p.upper, lower: p.lower, outside: p.outside, windowFlagged: p.windowFlagged }));
        return {
          code: g,
          name: names.row(c.compare, g, c.historyWeeks),
          points: pts,
          signals: pts.filter((p) => p.outside !== null && p.windowFlagged).length,
        };
      })
    : null;
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
