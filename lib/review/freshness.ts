import { formatNumber } from "./format";

/**
 * What the review pages say about how current their results are (pure). The scan
 * service serves pages a kept scan up to a few seconds behind the floor's entries
 * (lib/monitor/service PAGE_MAX_LAG_MS) and says so in computed.asOf / pendingEntries;
 * a plant user must never be shown a stale result without being told.
 */

/** How current a page's scans are: the oldest of them, and entries committed since not yet in them. */
export interface PageFreshness {
  /** ISO instant every result on the page holds all entries up to; null when nothing was scanned. */
  asOf: string | null;
  /** Entries committed since asOf that the results do not hold yet (the most of any of the page's scans). */
  pendingEntries: number;
}

/**
 * "10:42:05": the plant-local clock time (the server's time zone, as localToday and the
 * shift clock use) of an ISO instant, 24-hour with seconds.
 *
 * @example
 * formatClock(new Date(2026, 11, 2, 9, 5, 7).toISOString()); // "09:05:07"
 */
export function formatClock(iso: string): string {
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) throw new RangeError(`Not an instant: "${iso}"`);
  const two = (n: number) => String(n).padStart(2, "0");
  return `${two(d.getHours())}:${two(d.getMinutes())}:${two(d.getSeconds())}`;
}

/**
 * One freshness for several scans (the overview's): the oldest asOf (every result holds
 * at least the entries up to it) and the most pending entries of any of them. Not the
 * sum: each scan counts the same entries committed to the one database since its own
 * asOf, so ten new entries behind three scans are ten entries, not thirty; the oldest
 * scan counts the most. Scans with no `computed` (none was made) are left out.
 *
 * @example
 * combineFreshness([{ asOf: "2026-12-02T10:42:05Z", pendingEntries: 3 }, { asOf: "2026-12-02T10:42:09Z", pendingEntries: 1 }]);
 * // { asOf: "2026-12-02T10:42:05.000Z", pendingEntries: 3 }
 */
export function combineFreshness(computed: readonly ({ asOf: string; pendingEntries: number } | null | undefined)[]): PageFreshness {
  let oldest: number | null = null;
  let pendingEntries = 0;
  for (const c of computed) {
    if (!c) continue;
    const t = Date.parse(c.asOf);
    if (Number.isNaN(t)) throw new RangeError(`Not an instant: "${c.asOf}"`);
    if (oldest === null || t < oldest) oldest = t;
    pendingEntries = Math.max(pendingEntries, c.pendingEntries);
  }
  return { asOf: oldest === null ? null : new Date(oldest).toISOString(), pendingEntries };
}

/**
 * The freshness a page shows now. Page data is kept only while nothing is written
 * (lib/review/kept.ts) and only when its scans held every entry: such data, served
 * again, still holds every entry up to `now`. Data with pending entries is never kept,
 * so its own asOf stands.
 *
 * @example
 * shownFreshness({ asOf: "2026-12-02T10:00:00Z", pendingEntries: 0 }, new Date("2026-12-02T10:30:00Z")).asOf; // "2026-12-02T10:30:00.000Z"
 */
export function shownFreshness(f: PageFreshness, now = new Date()): PageFreshness {
  if (f.asOf === null || f.pendingEntries > 0) return f;
  return { asOf: now.toISOString(), pendingEntries: 0 };
}

/**
 * The plain words: "Results as of 10:42:05" and, when entries wait, "12 entries since,
 * being added". Null text when nothing was scanned.
 *
 * @example
 * freshnessText({ asOf: new Date(2026, 11, 2, 10, 42, 5).toISOString(), pendingEntries: 12 });
 * // { asOf: "Results as of 10:42:05", pending: "12 entries since, being added" }
 */
export function freshnessText(f: PageFreshness): { asOf: string | null; pending: string | null } {
  if (!(f.pendingEntries >= 0) || !Number.isInteger(f.pendingEntries)) throw new RangeError(`pendingEntries must be a whole number ≥ 0, got ${f.pendingEntries}`);
  return {
    asOf: f.asOf === null ? null : `Results as of ${formatClock(f.asOf)}`,
    pending: f.pendingEntries > 0 ? `${formatNumber(f.pendingEntries)} ${f.pendingEntries === 1 ? "entry" : "entries"} since, being added` : null,
  };
}

/** What a page shows while the warm-up after a server start is still building scans. */
export interface WarmUpNote {
  ready: number;
  total: number;
  /** Names of the comparisons not ready yet. */
  waiting: string[];
}

/**
 * "being computed since server start (3 of 26 ready)".
 *
 * @example
 * warmUpText({ ready: 3, total: 26, waiting: [] }); // "being computed since server start (3 of 26 ready)"
 */
export function warmUpText(w: Pick<WarmUpNote, "ready" | "total">): string {
  if (!(w.total >= 0 && w.ready >= 0 && w.ready <= w.total)) throw new RangeError(`ready must lie in 0..total, got ${w.ready} of ${w.total}`);
  return `being computed since server start (${w.ready} of ${w.total} ready)`;
}
