import type Database from "better-sqlite3";
import { openSqlite, rawDb, readonlyRequested } from "@/lib/db/client";
import { databaseUrl } from "@/lib/db/url";
import { dayNumber, isoDate } from "./dates";
import { lowerBound } from "./plan";
import { liveOutput, liveScanSteps, loadSpecOf, patchLiveScan, UnknownCodeError, type BuildStep, type LiveScan, type ScanOutput } from "./service-build";
import { readActiveComparisons, readComparison, readMasterData, type MasterData, type SavedComparison } from "./service-settings";
import { changesSince, connectionStamp, entryCounts, entryCountsFrom, maxIds, sameStamp, type Changes, type ConnectionStamp, type MaxIds } from "./service-version";
import type { ScanWindow } from "./types";
import { windowDetailOf, type WindowDetail } from "./window-detail";

export type { SavedComparison } from "./service-settings";
export type { BuildStep, ScanOutput } from "./service-build";
export type { WindowDetail } from "./window-detail";

/** Names for the codes a comparison's results use. */
export interface ComparisonLabels {
  /** Row code → label: line or shift names, or "Current window" / "Baseline" for history. */
  rows: Record<string, string>;
  lines: Record<string, string>;
  shifts: Record<string, string>;
  categories: Record<string, { name: string; family: string | null }>;
}

/** A saved comparison's scan: mix windows and episodes, rate windows, labels, state now. */
export interface ComparisonRun extends ScanOutput {
  comparison: SavedComparison;
  labels: ComparisonLabels;
  /** First and last production date with current entries (null when none). */
  firstDate: string | null;
  lastDate: string | null;
  /** The latest window, and what it says now. */
  latest: ScanWindow | null;
  status: "flagged" | "quiet" | "not-testable" | "no-data";
  /**
   * Why the comparison cannot be scanned at all (status "not-testable", no windows): it
   * names a line, shift or category that no longer exists. Null otherwise.
   */
  problem: string | null;
  /** How this answer was produced, and how current it is. */
  computed: Computed;
}

/** How a result was produced and how far it may be behind the database. */
export interface Computed {
  /** A full build, a patch of late data, or the kept result as it stood. */
  how: "built" | "patched" | "kept";
  retestedWindows: number;
  /** When this answer was handed out (ISO). */
  at: string;
  /** The result holds every entry committed up to this time (ISO). */
  asOf: string;
  /**
   * Entries committed since asOf that the result does not hold yet (new row ids, so a
   * correction counts as one): 0 for a fresh result. Brought in by the background
   * refresh within a few seconds, or by a read that asks for fresh results.
   */
  pendingEntries: number;
}

/** How current a read must be. */
export interface RunOptions {
  /**
   * How far behind the committed entries a kept result may be and still be served as it
   * stands, in ms (the background refresh brings it up to date soon after; between the
   * bound and HARD_LAG_FACTOR times it, that refresh starts at once). 0 (the
   * default): fresh — entries committed before the call are in the answer. Pages pass
   * {@link PAGE_MAX_LAG_MS}. Settings or master-data changes are never served stale.
   */
  maxLagMs?: number;
}

/**
 * The staleness bound the review pages read with: a kept result is served up to 15 s
 * behind the floor's entries, and says so (computed.asOf, computed.pendingEntries).
 * Past it the background refresh is started at once and the result still served, up to
 * HARD_LAG_FACTOR × the bound (a minute); beyond that a page read brings it up to date itself.
 *
 * @example
 * await runComparison("lines", { maxLagMs: PAGE_MAX_LAG_MS }); // kept result, maybe a few entries behind
 */
export const PAGE_MAX_LAG_MS = 15_000;

/**
 * How often, at most, the background refresh patches every kept result that entries
 * have left behind (it starts when a read notices them, so one pass serves a burst of
 * floor sheets instead of one patch per read).
 *
 * @example
 * REFRESH_EVERY_MS; // 3000
 */
export const REFRESH_EVERY_MS = 3_000;

/** A build hands the JavaScript thread back to waiting requests after about this much work. */
const SLICE_MS = 15;

/**
 * A bounded read past its bound but within this many times it is still served as it
 * stands (the refresh pass is started at once); beyond, the read patches for itself.
 *
 * @example
 * HARD_LAG_FACTOR * PAGE_MAX_LAG_MS; // 60000: no page shows a scan more than a minute behind
 */
export const HARD_LAG_FACTOR = 4;

/** A refresh pass hands the thread back to requests after about this much patching. */
const PASS_TURN_MS = 30;

/** How often a server looks for commits (two pragma reads) to refresh kept results with no read asking. */
const WATCH_MS = 1_000;

// Diagnosis (benchmarks): synchronous scan work longer than this is logged.
const SLOW_LOG_MS = Number(process.env.LINEMIX_STALL_LOG_MS ?? 0);

function timed<T>(what: () => string, run: () => T): T {
  if (!(SLOW_LOG_MS > 0)) return run();
  const t = performance.now();
  const out = run();
  const ms = performance.now() - t;
  if (ms >= SLOW_LOG_MS) console.warn(`[scan] ${new Date().toISOString()} ${what()} took ${ms.toFixed(0)} ms`);
  return out;
}

/** The full analysis of one window of a saved comparison, with its labels. */
export interface ComparisonWindowDetail extends WindowDetail {
  comparison: SavedComparison;
  labels: ComparisonLabels;
}

interface Kept {
  live: LiveScan;
  ids: MaxIds;
  counts: MaxIds;
  settingsKey: string;
  masterKey: string;
  run: ComparisonRun;
  /** ms epoch: the last time the result was known to hold every committed entry. */
  currentAt: number;
  /** Whether run (as built or patched) was handed out already: later answers say "kept". */
  handedOut: boolean;
}

/** What one connection stamp says about the database: read once per stamp, shared by all comparisons. */
interface Look {
  stamp: ConnectionStamp;
  /** ms epoch when the stamp was last seen unchanged. */
  at: number;
  ids: MaxIds;
  master: MasterData;
  masterKey: string;
  comparisons: Map<number | string, SavedComparison | null>;
}

interface Job {
  comparison: SavedComparison;
  master: MasterData;
  settingsKey: string;
  masterKey: string;
  promise: Promise<void>;
  resolve: () => void;
  reject: (error: unknown) => void;
  step: BuildStep | null;
  startedAt: number | null;
}

interface WarmUp {
  startedAt: number;
  finishedAt: number | null;
  ids: number[];
  codes: Map<number, string>;
}

interface ServiceState {
  db: Database.Database;
  /** Builds read on a connection of their own, in one read transaction across their slices. */
  buildDb: Database.Database | null;
  byId: Map<number, Kept>;
  look: Look | null;
  queue: Job[];
  running: Job | null;
  draining: boolean;
  warm: WarmUp | null;
  passTimer: ReturnType<typeof setTimeout> | null;
  lastPassAt: number;
  /** Looks for commits every WATCH_MS once a server started the warm-up (see watchWrites). */
  watcher: ReturnType<typeof setInterval> | null;
  /** A refresh pass is under way. */
  passing: boolean;
  /** Set when the state is replaced (another database, forgetKeptResults): running work stops. */
  dead: boolean;
}

// On globalThis so Next's module reloads in development keep the results, and so the
// instrumentation hook's warm-up and the pages (separate bundles) share one state.
const holder = globalThis as unknown as { linemixMonitor?: ServiceState };

function state(db: Database.Database): ServiceState {
  let s = holder.linemixMonitor;
  if (!s || s.db !== db) {
    if (s) retire(s);
    s = holder.linemixMonitor = {
      db,
      buildDb: null,
      byId: new Map(),
      look: null,
      queue: [],
      running: null,
      draining: false,
      warm: null,
      passTimer: null,
      lastPassAt: 0,
      watcher: null,
      passing: false,
      dead: false,
    };
  }
  return s;
}

function retire(s: ServiceState): void {
  s.dead = true;
  if (s.passTimer) clearTimeout(s.passTimer);
  if (s.watcher) clearInterval(s.watcher);
  for (const job of s.queue) job.resolve();
  s.queue = [];
  // A running build closes the connection when it notices (it holds a transaction on it).
  if (!s.running) closeBuildDb(s);
}

function closeBuildDb(s: ServiceState): void {
  try {
    s.buildDb?.close();
  } catch {
    // already closed
  }
  s.buildDb = null;
}

/**
 * Forgets every kept result (tests; after a restore), so the next request rebuilds.
 *
 * @example
 * forgetKeptResults(); (await runComparison("lines"))?.computed.how; // "built"
 */
export function forgetKeptResults(): void {
  if (holder.linemixMonitor) retire(holder.linemixMonitor);
  holder.linemixMonitor = undefined;
}

/**
 * Runs a saved comparison (by id or code) over the current entries and returns windows,
 * episodes, rate windows and labels; null when no such comparison exists.
 *
 * Method: the SQL aggregation of lib/monitor/service-load into a day × group × category
 * cube, then the same scan as scanWindows / scanHistory (plus scanRates) — see those for
 * the statistics. The result is kept in memory: a repeated request with no write to the
 * database in between is answered from it after two pragma reads; when entries arrived,
 * their counts are added (minus those of the entries they supersede) and only the
 * windows covering the days they touch retested, then the cheap across-window
 * adjustment is redone. Settings or master-data changes rebuild.
 *
 * Builds never hold the JavaScript thread for long: they run one comparison at a time in
 * slices of about 15 ms with the event loop served in between (see
 * {@link startWarmUp}), and a request for a comparison not yet built moves it to the
 * front of that queue and waits for it alone. With `maxLagMs`, entries that arrived
 * since the kept result are left to the background refresh (at most one pass every
 * {@link REFRESH_EVERY_MS}) when the result is no more than that far behind;
 * computed.asOf and computed.pendingEntries say how far.
 *
 * Cost: cold ≈ 1.5–2.5 s for two million entries (aggregation dominates); kept < 1 ms;
 * a late correction ≈ the SQL for its days plus windowDays windows.
 *
 * The returned objects are shared with the kept state: read them, do not change them.
 *
 * @example
 * // test/monitor/service.test.ts data: 5 lines, 80 days, L03 makes 3× its C07 from 2026-02-20 to 03-05
 * (await runComparison("lines"))?.episodes[0];
 * // { start: "2026-02-17", end: "2026-03-08", windows: 14, peak: { start: "2026-02-27", … },
 * //   drivers: [{ row: "L03", category: "C07", windows: 14, adjustedResidual: 7.26… }, …] }
 */
export async function runComparison(idOrCode: number | string, options: RunOptions = {}): Promise<ComparisonRun | null> {
  const kept = await keptFor(rawDb(), idOrCode, options);
  return kept ? serve(kept) : null;
}

/**
 * {@link runComparison} without waiting: the kept result (brought up to date as `options`
 * ask, like runComparison) when the comparison's scan is built for its current settings,
 * else null — and then its build is queued behind the others if nothing is building it
 * yet. For a page shown during the warm-up after a start: it draws what is ready and
 * says the rest is being computed instead of holding the request for every build.
 * Undefined when no such comparison exists.
 *
 * Cost: as a kept runComparison (two pragma reads; a patch only past HARD_LAG_FACTOR × the bound).
 *
 * @example
 * void startWarmUp(); runComparisonIfReady("lines"); // null while its build is under way
 * await startWarmUp(); runComparisonIfReady("lines")?.computed.how; // "built"
 */
export function runComparisonIfReady(idOrCode: number | string, options: RunOptions = {}): ComparisonRun | null | undefined {
  const s = state(rawDb());
  const look = currentLook(s);
  const comparison = comparisonOf(s, look, idOrCode);
  if (!comparison) return undefined;
  const settingsKey = JSON.stringify(comparison);
  const kept = s.byId.get(comparison.id);
  if (kept && kept.settingsKey === settingsKey && kept.masterKey === look.masterKey) {
    const current = bringUp(s, kept, look, options.maxLagMs ?? 0);
    if (current) return serve(current);
  }
  // Queued or running already: requestBuild hands back that build; a failure is left for runComparison to report.
  void requestBuild(s, comparison, look, settingsKey, false).catch(() => undefined);
  return null;
}

/**
 * {@link runComparison} for every active comparison, in display order (the overview);
 * each one served from its kept result when nothing changed. A comparison that names a
 * line, shift or category that no longer exists comes back not testable, with the reason
 * in `problem`, instead of failing the whole list.
 *
 * @example
 * (await runAllComparisons()).map((r) => [r.comparison.code, r.status]); // [["l1-shifts", "quiet"], ["l3-history", "quiet"], ["lines", "quiet"]]
 */
export async function runAllComparisons(options: RunOptions = {}): Promise<ComparisonRun[]> {
  const out: ComparisonRun[] = [];
  for (const c of readActiveComparisons(rawDb())) {
    const run = await runComparison(c.id, options);
    if (run) out.push(run);
  }
  return out;
}

/**
 * The full analysis of the window of a saved comparison that starts on `start`: observed
 * table, analyzeTable (expected, residuals, contributions, G², p, V, expected-count check),
 * method, pooling, drivers at the comparison's α (flagged or not) and defects per unit per
 * group. Null when the comparison or the window does not exist.
 *
 * Cost: a kept-result check, then one window's sum and one analyzeTable.
 *
 * @example
 * // service test data, the episode's peak window
 * const d = await windowDetail("lines", "2026-02-27");
 * [d?.analysis?.chiSquare, d?.analysis?.gSquare, d?.critical]; // [86.49…, 80.53…, 3.227…]
 * d?.drivers[0]; // { row: "L03", category: "C07", observed: 66, expected: 33.13…, ratio: 1.99…, adjustedResidual: 6.80…, contribution: 0.377… }
 */
export async function windowDetail(comparison: number | string, start: string, options: RunOptions = {}): Promise<ComparisonWindowDetail | null> {
  const kept = await keptFor(rawDb(), comparison, options);
  if (!kept) return null;
  const run = serve(kept);
  const mix = kept.live.mix;
  if (!mix) return null;
  const day = dayNumber(start);
  const k = lowerBound(mix.starts, day);
  if (k >= mix.starts.length || mix.starts[k] !== day) return null;
  return { comparison: run.comparison, labels: run.labels, ...windowDetailOf(mix, run.windows, kept.live.rates, k) };
}

/** What the warm-up after a start has done: for a page that says how far along it is. */
export interface WarmUpStatus {
  /** "idle": no warm-up was started in this process; "warming": builds under way; "ready": all built. */
  state: "idle" | "warming" | "ready";
  total: number;
  ready: number;
  /** The comparison being built now and how far through it, when warming. */
  current: { code: string; step: BuildStep | null } | null;
  startedAt: string | null;
  finishedAt: string | null;
}

/**
 * Starts building every active comparison's scan in the background (after a server
 * start), one at a time in slices, so requests are answered meanwhile; resolves when all
 * are built. Safe to call again (kept or queued comparisons are not rebuilt). A failing
 * build is logged and left for the first request to report. From then on the service
 * also looks for commits every second and refreshes the kept results in the background
 * (at most every REFRESH_EVERY_MS) even when no page is being read, so the first page
 * after a quiet spell does not find them all far behind.
 *
 * Cost: the sum of the cold builds, spread over time; between slices the event loop
 * serves requests, which add their own time.
 *
 * @example
 * void startWarmUp(); warmUpStatus(); // { state: "warming", total: 26, ready: 0, current: { code: "lines", step: { phase: "entries", … } }, … }
 */
export async function startWarmUp(): Promise<WarmUpStatus> {
  const db = rawDb();
  const s = state(db);
  const look = currentLook(s);
  watchWrites(s);
  const comparisons = readActiveComparisons(db);
  s.warm = { startedAt: Date.now(), finishedAt: null, ids: comparisons.map((c) => c.id), codes: new Map(comparisons.map((c) => [c.id, c.code])) };
  const builds = comparisons.map((c) => {
    const kept = s.byId.get(c.id);
    const settingsKey = JSON.stringify(c);
    if (kept && kept.settingsKey === settingsKey && kept.masterKey === look.masterKey) return Promise.resolve();
    return requestBuild(s, c, look, settingsKey, false);
  });
  await Promise.allSettled(builds);
  if (s.warm) s.warm.finishedAt = Date.now();
  return warmUpStatus();
}

/**
 * How far the warm-up has come (see {@link startWarmUp}).
 *
 * @example
 * warmUpStatus(); // { state: "ready", total: 26, ready: 26, current: null, startedAt: "…", finishedAt: "…" }
 */
export function warmUpStatus(): WarmUpStatus {
  const s = holder.linemixMonitor;
  const warm = s?.warm;
  if (!s || !warm) return { state: "idle", total: 0, ready: 0, current: null, startedAt: null, finishedAt: null };
  const ready = warm.ids.filter((id) => s.byId.has(id)).length;
  const running = s.running;
  return {
    state: warm.finishedAt !== null || ready === warm.ids.length ? "ready" : "warming",
    total: warm.ids.length,
    ready,
    current: running ? { code: running.comparison.code, step: running.step } : null,
    startedAt: new Date(warm.startedAt).toISOString(),
    finishedAt: warm.finishedAt === null ? null : new Date(warm.finishedAt).toISOString(),
  };
}

// The kept result for a comparison, brought as far up to date as `options` ask; builds
// (queued, sliced) when there is none or it no longer fits the settings or master data.
async function keptFor(db: Database.Database, idOrCode: number | string, options: RunOptions): Promise<Kept | null> {
  const maxLagMs = options.maxLagMs ?? 0;
  let yielded = false;
  for (;;) {
    const s = state(db);
    const look = currentLook(s);
    const comparison = comparisonOf(s, look, idOrCode);
    if (!comparison) return null;
    const settingsKey = JSON.stringify(comparison);
    const kept = s.byId.get(comparison.id);
    if (kept && kept.settingsKey === settingsKey && kept.masterKey === look.masterKey) {
      // A bounded reader about to patch lets waiting requests go first: an overview that
      // finds many results past the bound then patches them one by one between requests,
      // not all in one stretch of the thread.
      if (maxLagMs > 0 && !yielded && !servable(kept, look, maxLagMs)) {
        yielded = true;
        await yieldToRequests();
        continue;
      }
      const current = bringUp(s, kept, look, maxLagMs);
      if (current) return current;
    }
    await requestBuild(s, comparison, look, settingsKey, true);
  }
}

function comparisonOf(s: ServiceState, look: Look, idOrCode: number | string): SavedComparison | null {
  if (!look.comparisons.has(idOrCode)) look.comparisons.set(idOrCode, readComparison(s.db, idOrCode));
  return look.comparisons.get(idOrCode) ?? null;
}

// The database as of now: reread only when the connection's stamp moved.
function currentLook(s: ServiceState): Look {
  // Taken before any read: a write during this request moves it, so the next request looks again.
  const stamp = connectionStamp(s.db);
  const now = Date.now();
  if (s.look && sameStamp(s.look.stamp, stamp)) {
    s.look.at = now;
    return s.look;
  }
  const master = readMasterData(s.db);
  s.look = { stamp, at: now, ids: maxIds(s.db), master, masterKey: JSON.stringify(master), comparisons: new Map() };
  return s.look;
}

const sameIds = (a: MaxIds, b: MaxIds) => a.tally === b.tally && a.units === b.units;

// Whether the kept result may be served without a patch.
function servable(kept: Kept, look: Look, maxLagMs: number): boolean {
  return sameIds(kept.ids, look.ids) || Date.now() - kept.currentAt <= HARD_LAG_FACTOR * maxLagMs;
}

// Every WATCH_MS: when something was committed, look again and refresh what fell behind.
function watchWrites(s: ServiceState): void {
  if (s.watcher || s.dead) return;
  s.watcher = setInterval(() => {
    try {
      if (s.dead || !s.db.open || holder.linemixMonitor !== s) {
        if (s.watcher) clearInterval(s.watcher);
        return;
      }
      const before = s.look;
      const look = currentLook(s);
      if (look === before) {
        // Nothing committed since the last look: every result that held all entries still does.
        for (const kept of s.byId.values()) if (sameIds(kept.ids, look.ids)) kept.currentAt = look.at;
        return;
      }
      for (const kept of s.byId.values()) {
        if (!sameIds(kept.ids, look.ids)) return schedulePass(s);
        kept.currentAt = look.at;
      }
    } catch {
      // A closed or unreadable database: the next read reports it.
    }
  }, WATCH_MS);
  s.watcher.unref?.();
}

// The kept result if it may be served now (patched first when it is too far behind);
// null when it must be rebuilt.
function bringUp(s: ServiceState, kept: Kept, look: Look, maxLagMs: number): Kept | null {
  if (sameIds(kept.ids, look.ids)) {
    kept.currentAt = look.at;
    return kept;
  }
  const lag = Date.now() - kept.currentAt;
  if (lag <= maxLagMs) {
    schedulePass(s);
    return kept;
  }
  // Past the bound but within HARD_LAG_FACTOR times it: the pass starts now and the page
  // shows how far behind it is. A saturated server runs its passes slowly, and every
  // overview patching 26 scans itself would make it slower still.
  if (lag <= HARD_LAG_FACTOR * maxLagMs) {
    schedulePass(s, true);
    return kept;
  }
  return patchNow(s, kept);
}

/**
 * Taken once at the start of a refresh pass: entry counts (see entryCountsFrom), and the
 * changes read so far, by the ids they run from and to — the comparisons of a pass mostly
 * stand at the same ids, and the entries between two ids never change (append-only).
 */
interface CountBase {
  ids: MaxIds;
  counts: MaxIds;
  changes: Map<string, Changes>;
}

function changesBetween(db: Database.Database, from: MaxIds, to: MaxIds, base: CountBase | null): Changes {
  if (!base) return changesSince(db, from);
  const key = `${from.tally}:${from.units}>${to.tally}:${to.units}`;
  let changes = base.changes.get(key);
  if (!changes) base.changes.set(key, (changes = changesSince(db, from)));
  return changes;
}

// Brings a kept result up to the committed entries, in one read transaction (one
// snapshot for the check and the changes added); null when only a rebuild will do.
function patchNow(s: ServiceState, kept: Kept, base: CountBase | null = null): Kept | null {
  if (kept.run.problem) {
    const ids = maxIds(s.db);
    Object.assign(kept, { ids, counts: ids, currentAt: Date.now() });
    return kept;
  }
  const db = s.db;
  const patched = timed(() => `patch of ${kept.live.comparison.code}${base ? " (background)" : ""}`, () => db.transaction((): Kept | null => {
    const at = Date.now();
    const ids = maxIds(db);
    if (sameIds(ids, kept.ids)) return { ...kept, currentAt: at };
    const counts = base ? entryCountsFrom(db, base) : entryCounts(db);
    const changes = changesBetween(db, kept.ids, ids, base);
    const appendOnly =
      counts.tally - kept.counts.tally === changes.added.tally && counts.units - kept.counts.units === changes.added.units;
    if (!appendOnly) return null;
    const outcome = patchLiveScan(db, kept.live, changes.touched);
    if (outcome.rebuilt) return null;
    const run = runOf(kept.live, "patched", outcome.retested.length);
    return { ...kept, ids, counts, run, currentAt: at, handedOut: false };
  })());
  if (patched) s.byId.set(kept.live.comparison.id, patched);
  else {
    if (SLOW_LOG_MS > 0) console.warn(`[scan] ${new Date().toISOString()} ${kept.live.comparison.code} must be rebuilt (not an append-only change, or a new group, category or first day)`);
    s.byId.delete(kept.live.comparison.id);
  }
  return patched;
}

// One background pass over the kept results that entries have left behind, at most one
// per REFRESH_EVERY_MS, yielding to requests between comparisons.
function schedulePass(s: ServiceState, now = false): void {
  if (s.dead || s.passing) return;
  if (s.passTimer) {
    if (!now) return;
    clearTimeout(s.passTimer);
  }
  const wait = now ? 0 : Math.max(0, s.lastPassAt + REFRESH_EVERY_MS - Date.now());
  // A failing pass (a closed or unreadable database) leaves the results to the next read.
  s.passTimer = setTimeout(() => void refreshPass(s).catch(() => undefined), wait);
  s.passTimer.unref?.();
}

async function refreshPass(s: ServiceState): Promise<void> {
  const started = performance.now();
  let patched = 0;
  let longest = 0;
  s.passing = true;
  let turn = performance.now();
  try {
    // The connection may have been closed (tests, a restore) without the state being replaced.
    if (s.dead || !s.db.open || holder.linemixMonitor !== s) return;
    // One full count for the pass; each comparison adds the rows above it (cheap).
    const base = s.db.transaction((): CountBase => ({ ids: maxIds(s.db), counts: entryCounts(s.db), changes: new Map() }))();
    for (const [id, kept] of [...s.byId]) {
      if (s.dead || !s.db.open) return;
      const look = currentLook(s);
      if (s.byId.get(id) !== kept || sameIds(kept.ids, look.ids)) continue;
      try {
        const t = performance.now();
        const ok = patchNow(s, kept, base);
        patched++;
        longest = Math.max(longest, performance.now() - t);
        if (!ok) {
          const comparison = comparisonOf(s, look, id);
          if (comparison) void requestBuild(s, comparison, look, JSON.stringify(comparison), false).catch(() => undefined);
        }
      } catch {
        // Left for the next read to report (a busy or unreadable database).
        s.byId.delete(id);
      }
      // Several patches per turn of the event loop (each is a few ms): on a saturated
      // server every turn is long, and one patch per turn would stretch a pass to many seconds.
      if (performance.now() - turn >= PASS_TURN_MS) {
        await yieldToRequests();
        turn = performance.now();
      }
    }
  } finally {
    s.passing = false;
    s.lastPassAt = Date.now();
    s.passTimer = null;
    if (SLOW_LOG_MS > 0 && patched > 0) {
      console.warn(`[scan] ${new Date().toISOString()} refresh pass: ${patched} patched in ${(performance.now() - started).toFixed(0)} ms, longest ${longest.toFixed(0)} ms`);
    }
  }
}

const yieldToRequests = () => new Promise<void>((resolve) => setImmediate(resolve));

// Queues a build (at the front when a request waits for it); one build for a comparison
// at a time, a queued one taking the newest settings.
function requestBuild(s: ServiceState, comparison: SavedComparison, look: Look, settingsKey: string, front: boolean): Promise<void> {
  const queued = s.queue.findIndex((j) => j.comparison.id === comparison.id);
  if (queued >= 0) {
    const job = s.queue[queued];
    Object.assign(job, { comparison, master: look.master, settingsKey, masterKey: look.masterKey });
    if (front && queued > 0) {
      s.queue.splice(queued, 1);
      s.queue.unshift(job);
    }
    return job.promise;
  }
  const running = s.running;
  if (running && running.comparison.id === comparison.id && running.settingsKey === settingsKey && running.masterKey === look.masterKey) {
    return running.promise;
  }
  let resolve!: () => void;
  let reject!: (error: unknown) => void;
  const promise = new Promise<void>((res, rej) => {
    resolve = res;
    reject = rej;
  });
  const job: Job = { comparison, master: look.master, settingsKey, masterKey: look.masterKey, promise, resolve, reject, step: null, startedAt: null };
  if (front) s.queue.unshift(job);
  else s.queue.push(job);
  void drain(s);
  return promise;
}

async function drain(s: ServiceState): Promise<void> {
  if (s.draining) return;
  s.draining = true;
  try {
    // Let the request that queued the first build finish its own synchronous work first.
    await yieldToRequests();
    while (s.queue.length && !s.dead) {
      const job = s.queue.shift()!;
      s.running = job;
      try {
        await runJob(s, job);
        job.resolve();
      } catch (error) {
        job.reject(error);
      } finally {
        s.running = null;
      }
    }
  } finally {
    s.draining = false;
    if (s.dead) closeBuildDb(s);
  }
}

function buildConnection(s: ServiceState): Database.Database {
  if (!s.buildDb) {
    const readonly = readonlyRequested();
    s.buildDb = openSqlite(databaseUrl(), readonly ? { readonly: true, fileMustExist: true } : {});
  }
  return s.buildDb;
}

async function runJob(s: ServiceState, job: Job): Promise<void> {
  job.startedAt = Date.now();
  const db = buildConnection(s);
  const { comparison, master } = job;
  let kept: Kept;
  // One read transaction across the slices: every slice sees the snapshot the ids and counts came from.
  db.exec("BEGIN");
  try {
    const at = Date.now();
    const ids = maxIds(db);
    const counts = entryCounts(db);
    let live: LiveScan;
    try {
      const steps = liveScanSteps(db, comparison, master, SLICE_MS);
      for (;;) {
        const next = timed(() => `build slice of ${comparison.code} (${job.step?.phase ?? "start"})`, () => steps.next());
        if (next.done) {
          live = next.value;
          break;
        }
        job.step = next.value;
        await yieldToRequests();
        if (s.dead) return;
      }
      kept = { live, ids, counts, settingsKey: job.settingsKey, masterKey: job.masterKey, run: runOf(live, "built", live.mix?.states.length ?? 0), currentAt: at, handedOut: false };
    } catch (error) {
      if (!(error instanceof UnknownCodeError)) throw error;
      live = { comparison, master, spec: emptySpec(comparison), mix: null, rates: null };
      kept = { live, ids, counts, settingsKey: job.settingsKey, masterKey: job.masterKey, run: problemRun(live, error.message), currentAt: at, handedOut: false };
    }
  } finally {
    if (db.open && db.inTransaction) db.exec("COMMIT");
  }
  if (!s.dead) s.byId.set(comparison.id, kept);
}

function emptySpec(c: SavedComparison): LiveScan["spec"] {
  return { groupBy: c.compare === "shift" ? "shift" : "line", groupIds: [], categoryIds: [], categoryFilter: null, lineIds: null, shiftIds: null };
}

function serve(kept: Kept): ComparisonRun {
  const look = holder.linemixMonitor?.look;
  const ids = look?.ids ?? kept.ids;
  const pendingEntries = Math.max(0, ids.tally - kept.ids.tally) + Math.max(0, ids.units - kept.ids.units);
  const first = !kept.handedOut;
  kept.handedOut = true;
  const base = kept.run.computed;
  return {
    ...kept.run,
    computed: {
      how: first ? base.how : "kept",
      retestedWindows: first ? base.retestedWindows : 0,
      at: new Date().toISOString(),
      asOf: new Date(pendingEntries ? kept.currentAt : Math.max(kept.currentAt, look?.at ?? 0)).toISOString(),
      pendingEntries,
    },
  };
}

function runOf(live: LiveScan, how: "built" | "patched", retestedWindows: number): ComparisonRun {
  const output = liveOutput(live);
  const cube = live.mix?.cube;
  const latest = output.windows.length ? output.windows[output.windows.length - 1] : null;
  const now = new Date().toISOString();
  return {
    comparison: live.comparison,
    labels: labelsOf(live),
    firstDate: cube ? isoDate(cube.firstDay) : null,
    lastDate: cube ? isoDate(cube.firstDay + cube.days - 1) : null,
    ...output,
    latest,
    status: !latest ? "no-data" : latest.flagged ? "flagged" : latest.testable ? "quiet" : "not-testable",
    problem: null,
    computed: { how, retestedWindows, at: now, asOf: now, pendingEntries: 0 },
  };
}

function problemRun(live: LiveScan, problem: string): ComparisonRun {
  return { ...runOf(live, "built", 0), status: "not-testable", problem };
}

/**
 * Why a saved comparison cannot be scanned with the current master data (it names a
 * line, shift or category that no longer exists), or null when it can. Two small reads.
 *
 * @example
 * scanProblem("history-L13"); // 'Comparison history-L13 names a line "L13" that does not exist (any more); …'
 */
export function scanProblem(idOrCode: number | string): string | null {
  const s = state(rawDb());
  const look = currentLook(s);
  const comparison = comparisonOf(s, look, idOrCode);
  if (!comparison) return null;
  try {
    loadSpecOf(comparison, look.master);
    return null;
  } catch (error) {
    if (error instanceof UnknownCodeError) return error.message;
    throw error;
  }
}

function labelsOf(live: LiveScan): ComparisonLabels {
  const { master, comparison } = live;
  const lines = Object.fromEntries(master.lines.map((r) => [r.code, r.name]));
  const shifts = Object.fromEntries(master.shifts.map((r) => [r.code, r.name]));
  const categories = Object.fromEntries(master.categories.map((r) => [r.code, { name: r.name, family: r.family }]));
  const rows =
    comparison.compare === "history"
      ? { current: "Current window", baseline: `Baseline (${comparison.historyWeeks} weeks before)` }
      : comparison.compare === "shift"
        ? shifts
        : lines;
  return { rows, lines, shifts, categories };
}
