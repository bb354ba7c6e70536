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
import { keptUntilRecordsChange, keptUntilWrite, keptWhileSame, recordsStamp } from "./kept";

/**
 * Server-side loaders of the review pages: read, scan (cached), shape. A page's shaped
 * data is kept while its inputs are the same (lib/review/kept.ts): the kept scan results
 * the service hands out (the same arrays until it patches them, at most every few seconds
 * while floor sheets arrive), the records stamp (master data, comparisons, flagged-period
 * records) and the last data date. So a floor sheet does not make every page reload and
 * reshape; only the freshness note ("results as of …, N entries since") is worked out
 * per request. The objects returned are shared: read them only. `kept` is the part that
 * stays the same object while nothing it shows changed, for building markup once per it.
 */

const keptPlant = keptUntilRecordsChange(() => loadMasterData(), 1);
const keptNames = keptUntilRecordsChange(async () => namesFrom(await keptPlant("plant")), 1);
const keptComparisons = keptUntilRecordsChange(() => listComparisons(), 1);
const keptComparison = keptUntilRecordsChange((code) => getComparison(code), 64);

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

/** The overview's rows, counts and data date (shaped again only when a scan, a record or the data date changed). */
export async function overviewData() {
  const [comparisons, n] = await Promise.all([keptComparisons("all"), names()]);
  // During the warm-up after a start, the overview shows the comparisons already built
  // and lists the others as being computed, instead of waiting for all of them.
  const warming = warmUpStatus().state === "warming";
  const runs: (ComparisonRun | null)[] = [];
  for (const c of comparisons) runs.push(warming ? runComparisonIfReady(c) : await runComparison(c));
  const last = lastDataDate();
  const inputs = [comparisons, n, last, recordsStamp(), ...runs.map((r) => r?.windows ?? null), ...runs.map((r) => r?.rateWindows ?? null)];
  const kept = await keptOverview("overview", inputs, async () => shapeOverviewOf(comparisons, runs, n, last));
  const freshness = combineFreshness(runs.map((r) => r?.computed));
  return { ...kept, freshness, kept };
}

const keptOverview = keptWhileSame<ReturnType<typeof shapeOverviewOf>>(1);

function shapeOverviewOf(comparisons: readonly ComparisonRecord[], runs: readonly (ComparisonRun | null)[], n: Names, last: string | null) {
  const inputs = [];
  const waiting: string[] = [];
  for (const [i, c] of comparisons.entries()) {
    const run = runs[i];
    if (!run) {
      waiting.push(c.name);
      continue;
    }
    const signals = rateSignalsOf(run.rateWindows.at(-1) ?? null, c, n).map((s) => s.groupName);
    inputs.push({ comparison: c, windows: run.windows, episodes: run.episodes, rateSignals: signals, problem: run.problem });
  }
  const warmUp: WarmUpNote | null = waiting.length ? { ready: comparisons.length - waiting.length, total: comparisons.length, waiting } : null;
  return {
    ...shapeOverview(inputs, n),
    lastDate: last,
    lastDateText: last ? formatDay(last) : null,
    warmUp,
  };
}

// What a comparison's shaped page depends on besides the comparison and names.
function runInputs(run: ComparisonRun): unknown[] {
  return [run.comparison, run.windows, run.rateWindows, run.problem, recordsStamp()];
}

/** One comparison's timeline, episodes and window lists; null when no such comparison. */
export async function timelineData(code: string, rateGroup: string | null = null) {
  const c = await keptComparison(code);
  if (!c) return null;
  const n = await names();
  const run = await runComparison(c);
  const kept = await keptTimeline(JSON.stringify([code, rateGroup]), [n, ...runInputs(run)], () => shapeTimelineOf(c, run, n, rateGroup));
  return { ...kept, freshness: combineFreshness([run.computed]), kept };
}

const keptTimeline = keptWhileSame<Awaited<ReturnType<typeof shapeTimelineOf>>>(16);

async function shapeTimelineOf(c: ComparisonRecord, run: ComparisonRun, n: Names, rateGroup: string | null) {
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
  };
}

/** One window in full, its neighbours and episode; null when no such comparison. */
export async function windowData(code: string, start: string) {
  const c = await keptComparison(code);
  if (!c) return null;
  const n = await names();
  const run = await runComparison(c);
  const kept = await keptWindow(JSON.stringify([code, start]), [n, ...runInputs(run)], () => shapeWindowOf(c, run, n, start));
  return { ...kept, freshness: combineFreshness([run.computed]), kept };
}

const keptWindow = keptWhileSame<Awaited<ReturnType<typeof shapeWindowOf>>>(32);

async function shapeWindowOf(c: ComparisonRecord, run: ComparisonRun, n: Names, start: string) {
  const index = run.windows.findIndex((w) => w.start === start);
  const about = { problem: run.problem };
  if (index < 0) return { comparison: c, view: null, window: null, neighbours: null, episode: null, ...about };
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
