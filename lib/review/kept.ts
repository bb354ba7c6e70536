import { rawDb } from "@/lib/db/client";
import { connectionStamp, sameStamp, type ConnectionStamp } from "@/lib/monitor/service-version";

/**
 * Page data kept until the database file changes. The review pages read master data,
 * saved comparisons and kept scans that change only when someone writes; reading them
 * through Prisma on every request cost several milliseconds of the server's one thread
 * per page. The check is the scan service's connection stamp (PRAGMA data_version, which
 * moves when any other connection commits, and total_changes(), which moves when this one
 * writes), so a kept value is never older than the last commit a request could have seen.
 */

interface Entry<V> {
  value: Promise<V>;
  /** Last use, for dropping the least recently used entry. */
  used: number;
}

/**
 * Wraps an async loader so that, per key, its result is reused while nothing has been
 * written to the database; any write drops every kept entry. At most `size` keys are
 * kept (least recently used dropped first). A rejected load is not kept, nor a value
 * for which `keep` says no (a page built from a scan that had not yet taken in every
 * entry: the scan catches up in the background without writing anything, so that
 * value would otherwise outlive its staleness).
 *
 * The stamp is read before the load: a write that lands during the load changes the
 * stamp, so the next call loads again rather than keeping a value that may predate it.
 * Callers must treat kept values as read-only, since every later request shares them.
 *
 * Cost: two pragma reads per call (≈ 10 µs) when the entry is kept.
 *
 * @example
 * const names = keptUntilWrite(async () => namesFrom(await loadMasterData()));
 * await names("all"); // loads through Prisma
 * await names("all"); // the same object, until the next commit to the file
 */
export function keptUntilWrite<V>(load: (key: string) => Promise<V>, size = 16, keep: (value: V) => boolean = () => true): (key: string) => Promise<V> {
  if (!(size >= 1) || !Number.isInteger(size)) throw new RangeError(`size must be a positive whole number, got ${size}`);
  let db: ReturnType<typeof rawDb> | null = null;
  let stamp: ConnectionStamp | null = null;
  let entries = new Map<string, Entry<V>>();
  let clock = 0;
  return (key: string) => {
    // A new connection (another file, a reopened one) has stamps of its own: start over.
    const connection = rawDb();
    const now = connectionStamp(connection);
    if (connection !== db || !stamp || !sameStamp(stamp, now)) {
      db = connection;
      stamp = now;
      entries = new Map();
    }
    const hit = entries.get(key);
    if (hit) {
      hit.used = ++clock;
      return hit.value;
    }
    const kept = entries;
    const value = load(key);
    kept.set(key, { value, used: ++clock });
    const drop = () => {
      if (kept.get(key)?.value === value) kept.delete(key);
    };
    value.then((v) => {
      if (!keep(v)) drop();
    }, drop);
    if (kept.size > size) {
      let oldest: string | null = null;
      let least = Infinity;
      for (const [k, e] of kept) if (e.used < least) [oldest, least] = [k, e.used];
      if (oldest !== null) kept.delete(oldest);
    }
    return value;
  };
}

/**
 * Wraps a pure function of one object so that it runs once per object: page data kept
 * by keptUntilWrite is the same object from request to request, so what a page builds
 * from it (its tables and charts as markup) can be kept with it and dropped with it.
 *
 * Cost: one WeakMap lookup per call.
 *
 * @example
 * const heatmap = builtOncePer((view: WindowView) => heatmapMarkup(view));
 * heatmap(view) === heatmap(view); // true
 */
export function builtOncePer<K extends object, V>(build: (key: K) => V): (key: K) => V {
  const built = new WeakMap<K, V>();
  return (key: K) => {
    if (built.has(key)) return built.get(key)!;
    const value = build(key);
    built.set(key, value);
    return value;
  };
}
