import { getComparison, listComparisons, type ComparisonRecord } from "@/lib/db/comparisons";
import { listEpisodes } from "@/lib/db/episodes";
import { loadMasterData } from "@/lib/db/plant";
import type { Episode } from "@/lib/monitor/types";
import { localToday } from "@/lib/dates";
import { formatDay } from "./format";
import { namesFrom, type Names } from "./names";
import { shapeOverview } from "./overview";
import type { ReadingRateSignal } from "./reading";
import type { RateWindow } from "@/lib/monitor/types";
import { countsBetween, lastDataDate, rateSeries, runComparison, windowTable } from "./source";
import { shapeTimeline } from "./timeline";
import { lastCompleteWeek, parseIsoWeek, shapeWeek, shiftWeek, type IsoWeekRef, type WeekCounts } from "./week";
import { shapeWindow } from "./window";

/** Server-side loaders of the review pages: read, scan (cached), shape. */

async function names(): Promise<Names> {
  return namesFrom(await loadMasterData());
}

/** The rate signals of one window: its rate test flagged, and these groups sat outside their u-chart limits. */
function rateSignalsOf(w: RateWindow | null, comparison: ComparisonRecord, n: Names): ReadingRateSignal[] {
  if (!w || !w.rateFlagged) return [];
  const out: ReadingRateSignal[] = [];
  for (const g of w.groups) {
    if (!g.outside || g.defectsPerUnit === null || g.upper === null || g.lower === null) continue;
    out.push({
      groupName: n.row(comparison.compare, g.group, comparison.historyWeeks),
      rate: g.defectsPerUnit,
      upperLimit: g.upper,
      lowerLimit: g.lower,
      direction: g.outside,
    });
  }
  return out;
}

/**
 * Where each scanned episode's record lives: /episodes/<id> when the flagged-period
 * records already hold one overlapping it, else the comparison's list (which syncs).
 */
export async function episodeHrefs(code: string, episodes: readonly Episode[]): Promise<Map<string, string>> {
  const records = episodes.length ? await listEpisodes({ comparison: code }) : [];
  const out = new Map<string, string>();
  for (const e of episodes) {
    const record = records.find((r) => r.start <= e.end && r.end >= e.start);
    out.set(e.start, record ? `/episodes/${record.id}` : `/episodes?comparison=${encodeURIComponent(code)}`);
  }
  return out;
}

export async function overviewData() {
  const [comparisons, n] = await Promise.all([listComparisons(), names()]);
  const inputs = [];
  for (const c of comparisons) {
    const run = await runComparison(c);
    const signals = rateSignalsOf(run.rateWindows.at(-1) ?? null, c, n).map((s) => s.groupName);
    inputs.push({ comparison: c, windows: run.windows, episodes: run.episodes, rateSignals: signals });
  }
  const last = lastDataDate();
  return { ...shapeOverview(inputs, n), lastDate: last, lastDateText: last ? formatDay(last) : null };
}

export async function timelineData(code: string, rateGroup: string | null = null) {
  const c = await getComparison(code);
  if (!c) return null;
  const n = await names();
  const run = await runComparison(c);
  const rates = rateSeries(run);
  const timeline = shapeTimeline(c, run.windows, run.episodes, n, rates, rateGroup);
  const flagged = run.windows.filter((w) => w.flagged);
  const recent = run.windows.slice(-14).reverse();
  const hrefs = await episodeHrefs(c.code, run.episodes);
  return { comparison: c, timeline, episodes: run.episodes, episodeHrefs: hrefs, flagged, recent, windows: run.windows, names: n };
}

export async function windowData(code: string, start: string) {
  const c = await getComparison(code);
  if (!c) return null;
  const n = await names();
  const run = await runComparison(c);
  const index = run.windows.findIndex((w) => w.start === start);
  if (index < 0) return { comparison: c, view: null, window: null, neighbours: null };
  const w = run.windows[index];
  const neighbours = {
    previous: index > 0 ? run.windows[index - 1].start : null,
    next: index < run.windows.length - 1 ? run.windows[index + 1].start : null,
  };
  const found = run.episodes.find((e) => e.start <= w.start && e.end >= w.end) ?? null;
  const episode = found ? { start: found.start, end: found.end, href: (await episodeHrefs(c.code, [found])).get(found.start)! } : null;
  const detail = await windowTable(c, start);
  if (!detail?.table) return { comparison: c, view: null, window: w, neighbours, episode };
  const signals = rateSignalsOf(detail.rateWindow, c, n);
  return { comparison: c, view: shapeWindow(detail.table, n, signals), window: w, neighbours, episode };
}

function weekCounts(groupBy: "line" | "shift", week: IsoWeekRef, lines?: string[]): WeekCounts {
  const raw = countsBetween(groupBy, week.start, week.end, { lines: lines ?? null });
  return {
    rows: raw.rows,
    categories: raw.categories,
    counts: raw.rows.map((r) => raw.categories.map((k) => raw.counts.get(r)?.get(k) ?? 0)),
    units: raw.rows.map((r) => raw.units.get(r) ?? null),
  };
}

export async function weekData(label: string | undefined) {
  const today = localToday();
  const fallback = lastCompleteWeek(today);
  const parsed = label ? parseIsoWeek(label) : null;
  const week = parsed ?? fallback;
  const [n, plant, comparisons] = await Promise.all([names(), loadMasterData(), listComparisons()]);
  const previous = shiftWeek(week, -1);
  const lineCodes = plant.lines.filter((l) => l.active).map((l) => l.code);
  const alpha = comparisons.find((c) => c.code === "lines")?.alpha ?? 0.05;
  const review = shapeWeek(
    {
      week,
      alpha,
      current: weekCounts("line", week),
      previous: weekCounts("line", previous),
      shifts: lineCodes.map((line) => ({
        line,
        current: weekCounts("shift", week, [line]),
        previous: weekCounts("shift", previous, [line]),
      })),
    },
    n,
  );
  return {
    review,
    invalidLabel: label !== undefined && parsed === null ? label : null,
    defaultWeek: fallback.label,
    next: shiftWeek(week, 1),
    isFuture: week.start > today,
    lastDate: lastDataDate(),
  };
}
