import type { ComparisonRecord } from "@/lib/db/comparisons";
import { daysBetween } from "@/lib/dates";
import type { Episode, ScanWindow } from "@/lib/monitor/types";
import { formatRange } from "./format";
import { kindLabel, type Names } from "./names";

/** The overview: each saved comparison's state now (pure shaping of scan results). */

export type ComparisonState = "flagged" | "quiet" | "untestable";

export interface OverviewInput {
  comparison: ComparisonRecord;
  windows: readonly ScanWindow[];
  episodes: readonly Episode[];
  /** Groups whose defect rate is outside its u-chart limits in the latest window. */
  rateSignals?: string[];
  /** Why the comparison cannot be scanned at all (it names a line, shift or category that no longer exists), else null. */
  problem?: string | null;
}

export interface OverviewRow {
  code: string;
  name: string;
  kind: string;
  state: ComparisonState;
  stateLabel: string;
  /** The latest window, or null when the scan has none (too little history). */
  latest: {
    start: string;
    end: string;
    range: string;
    n: number;
    pValue: number | null;
    adjustedPValue: number | null;
    cramersV: number | null;
    reason: string | null;
  } | null;
  /** When the latest window is flagged: the day the open episode's first flag showed, and for how many days. */
  flaggedSince: string | null;
  flaggedDays: number | null;
  /** Start of the open episode (for its window link). */
  openEpisode: { start: string; end: string; peakStart: string } | null;
  /** Largest driver of the latest flagged window: "Press line 3 × Seal leak (+7.9)". */
  topDriver: { row: string; category: string; rowName: string; categoryName: string; adjustedResidual: number; ratio: number } | null;
  episodes: number;
  lastEpisode: { start: string; end: string; range: string } | null;
  rateSignals: string[];
  /** Why the comparison cannot be scanned at all, in plain words; null when it can. */
  problem: string | null;
  displayOrder: number;
}

const STATE_LABEL: Record<ComparisonState, string> = {
  flagged: "Flagged",
  quiet: "Quiet",
  untestable: "Not testable",
};

export function stateOf(w: ScanWindow | undefined): ComparisonState {
  if (!w || !w.testable) return "untestable";
  return w.flagged ? "flagged" : "quiet";
}

export function overviewRow(input: OverviewInput, names: Names): OverviewRow {
  const c = input.comparison;
  const latestWindow = input.windows.length ? input.windows[input.windows.length - 1] : undefined;
  const state = stateOf(latestWindow);
  let openEpisode: Episode | null = null;
  let flaggedSince: string | null = null;
  let flaggedDays: number | null = null;
  if (latestWindow && state === "flagged") {
    openEpisode = input.episodes.find((e) => e.start <= latestWindow.start && e.end >= latestWindow.end) ?? null;
    const firstFlag = openEpisode
      ? input.windows.find((w) => w.flagged && w.start >= openEpisode!.start)
      : latestWindow;
    flaggedSince = (firstFlag ?? latestWindow).end;
    flaggedDays = daysBetween(flaggedSince, latestWindow.end) + 1;
  }
  const d = latestWindow?.flagged ? latestWindow.drivers[0] : undefined;
  const lastEpisode = input.episodes.length ? input.episodes[input.episodes.length - 1] : null;
  return {
    code: c.code,
    name: c.name,
    kind: kindLabel(c.compare, c.lines, names),
    state,
    stateLabel: STATE_LABEL[state],
    latest: latestWindow
      ? {
          start: latestWindow.start,
          end: latestWindow.end,
          range: formatRange(latestWindow.start, latestWindow.end),
          n: latestWindow.n,
          pValue: latestWindow.pValue,
          adjustedPValue: latestWindow.adjustedPValue,
          cramersV: latestWindow.cramersVCorrected,
          reason: latestWindow.reason,
        }
      : null,
    flaggedSince,
    flaggedDays,
    openEpisode: openEpisode ? { start: openEpisode.start, end: openEpisode.end, peakStart: openEpisode.peak.start } : null,
    topDriver: d
      ? {
          row: d.row,
          category: d.category,
          rowName: names.row(c.compare, d.row, c.historyWeeks),
          categoryName: names.category(d.category),
          adjustedResidual: d.adjustedResidual,
          ratio: d.ratio,
        }
      : null,
    episodes: input.episodes.length,
    lastEpisode: lastEpisode ? { start: lastEpisode.start, end: lastEpisode.end, range: formatRange(lastEpisode.start, lastEpisode.end) } : null,
    rateSignals: input.rateSignals ?? [],
    problem: input.problem ?? null,
    displayOrder: c.displayOrder,
  };
}

const STATE_RANK: Record<ComparisonState, number> = { flagged: 0, quiet: 1, untestable: 2 };

/** Open episodes first (longest-running first), then the rest in display order. */
export function shapeOverview(inputs: readonly OverviewInput[], names: Names): { rows: OverviewRow[]; counts: Record<ComparisonState, number> } {
  const rows = inputs.map((i) => overviewRow(i, names));
  rows.sort(
    (a, b) =>
      (a.state === "flagged" ? 0 : 1) - (b.state === "flagged" ? 0 : 1) ||
      (b.flaggedDays ?? 0) - (a.flaggedDays ?? 0) ||
      a.displayOrder - b.displayOrder ||
      STATE_RANK[a.state] - STATE_RANK[b.state] ||
      a.code.localeCompare(b.code),
  );
  const counts: Record<ComparisonState, number> = { flagged: 0, quiet: 0, untestable: 0 };
  for (const r of rows) counts[r.state]++;
  return { rows, counts };
}
