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
import { countsBetween, lastDataDate, rateSeries, runComparison, runComparisonIfReady, windowTable, type ComparisonRun } from "./source";
import { warmUpStatus } from "@/lib/monitor/service";
import { combineFreshness, type WarmUpNote } from "./freshness";
import { shapeTimeline } from "./timeline";
import { lastCompleteWeek, parseIsoWeek, shapeWeek, shiftWeek, type IsoWeekRef, type WeekCounts } from "./week";
import { shapeWindow } from "./window";
import { keptUntilWrite } from "./kept";

/**
 * Server-side loaders of the review pages: read, scan (cached), shape. Each page's data
 * is kept until the next write to the database (lib/review/kept.ts), so a repeated view
 * costs no query and no shaping; the objects returned are shared: read them only.
 */

/**
 * Entries committed that the scan behind a page has not taken in yet: the service may
 * hand a page a kept scan a few seconds behind the floor, brought up to date in the
 * background. A page built from such a scan is shown but not kept.
 */
function pendingEntries(run: ComparisonRun): number {
  return run.computed?.pendingEntries ?? 0;
}

const current = (data: { current: boolean } | null) => data === null || data.current;

const keptPlant = keptUntilWrite(() => loadMasterData(), 1);
const keptNames = keptUntilWrite(async () => namesFrom(await keptPlant("plant")), 1);
const keptComparisons = keptUntilWrite(() => listComparisons(), 1);
const keptComparison = keptUntilWrite((code) => getComparison(code), 64);

function names(): Promise<Names> {
  return keptNames("names");
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

/** The overview's rows, counts and data date (kept until the next write). */
export function overviewData() {
  return keptOverview("overview");
}

const keptOverview = keptUntilWrite(loadOverview, 1, current);

async function loadOverview() {
  const [comparisons, n] = await Promise.all([keptComparisons("all"), names()]);
  // During the warm-up after a start, the overview shows the comparisons already built
  // and lists the others as being computed, instead of waiting for all of them.
  const warming = warmUpStatus().state === "warming";
  const inputs = [];
  const runs: ComparisonRun[] = [];
  const waiting: string[] = [];
  for (const c of comparisons) {
    const run = warming ? runComparisonIfReady(c) : await runComparison(c);
    if (!run) {
      waiting.push(c.name);
      continue;
    }
    runs.push(run);
    const signals = rateSignalsOf(run.rateWindows.at(-1) ?? null, c, n).map((s) => s.groupName);
    inputs.push({ comparison: c, windows: run.windows, episodes: run.episodes, rateSignals: signals, problem: run.problem });
  }
  const warmUp: WarmUpNote | null = waiting.length ? { ready: comparisons.length - waiting.length, total: comparisons.length, waiting } : null;
  const freshness = combineFreshness(runs.map((r) => r.computed));
  const last = lastDataDate();
  return {
    ...shapeOverview(inputs, n),
    lastDate: last,
    lastDateText: last ? formatDay(last) : null,
    freshness,
    warmUp,
    current: freshness.pendingEntries === 0 && warmUp === null,
  };
}

/** One comparison's timeline, episodes and window lists; null when no such comparison (kept until the next write). */
export function timelineData(code: string, rateGroup: string | null = null) {
  return keptTimeline(JSON.stringify([code, rateGroup]));
}

const keptTimeline = keptUntilWrite((key) => {
  const [code, rateGroup] = JSON.parse(key) as [string, string | null];
  return loadTimeline(code, rateGroup);
}, 16, current);

async function loadTimeline(code: string, rateGroup: string | null) {
  const c = await keptComparison(code);
  if (!c) return null;
  const n = await names();
  const run = await runComparison(c);
  const rates = rateSeries(run);
  const timeline = shapeTimeline(c, run.windows, run.episodes, n, rates, rateGroup);
  const flagged = run.windows.filter((w) => w.flagged);
  const recent = run.windows.slice(-14).reverse();
  const hrefs = await episodeHrefs(c.code, run.episodes);
  return {
    comparison: c,
    timeline,
    episodes: run.episodes,
    episodeHrefs: hrefs,
    flagged,
    recent,
    windows: run.windows,
    names: n,
    problem: run.problem,
    freshness: combineFreshness([run.computed]),
    current: pendingEntries(run) === 0,
  };
}

/** One window in full, its neighbours and episode; null when no such comparison (kept until the next write). */
export function windowData(code: string, start: string) {
  return keptWindow(JSON.stringify([code, start]));
}

const keptWindow = keptUntilWrite((key) => {
  const [code, start] = JSON.parse(key) as [string, string];
  return loadWindow(code, start);
}, 32, current);

async function loadWindow(code: string, start: string) {
  const c = await keptComparison(code);
  if (!c) return null;
  const n = await names();
  const run = await runComparison(c);
  const index = run.windows.findIndex((w) => w.start === start);
  const fresh = pendingEntries(run) === 0;
  const about = { problem: run.problem, freshness: combineFreshness([run.computed]), current: fresh };
  if (index < 0) return { comparison: c, view: null, window: null, neighbours: null, ...about };
  const w = run.windows[index];
  const neighbours = {
    previous: index > 0 ? run.windows[index - 1].start : null,
    next: index < run.windows.length - 1 ? run.windows[index + 1].start : null,
  };
  const found = run.episodes.find((e) => e.start <= w.start && e.end >= w.end) ?? null;
  const episode = found ? { start: found.start, end: found.end, href: (await episodeHrefs(c.code, [found])).get(found.start)! } : null;
  const detail = await windowTable(c, start);
  if (!detail?.table) return { comparison: c, view: null, window: w, neighbours, episode, ...about };
  const signals = rateSignalsOf(detail.rateWindow, c, n);
  return { comparison: c, view: shapeWindow(detail.table, n, signals), window: w, neighbours, episode, ...about };
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

/** The weekly review of an ISO week (the last complete one by default), kept until the next write. */
export function weekData(label: string | undefined) {
  // Today is part of the key: the default week and "is it in the future" move with it.
  return keptWeek(JSON.stringify([label ?? null, localToday()]));
}

const keptWeek = keptUntilWrite((key) => {
  const [label] = JSON.parse(key) as [string | null, string];
  return loadWeek(label ?? undefined);
}, 8);

async function loadWeek(label: string | undefined) {
  const today = localToday();
  const fallback = lastCompleteWeek(today);
  const parsed = label ? parseIsoWeek(label) : null;
  const week = parsed ?? fallback;
  const [n, plant, comparisons] = await Promise.all([names(), keptPlant("plant"), keptComparisons("all")]);
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
