import type Database from "better-sqlite3";
import { rawDb } from "@/lib/db/client";
import { connectionStamp, sameStamp, type ConnectionStamp } from "@/lib/monitor/service-version";

/**
 * Page data kept between requests, and what drops it:
 *  - keptUntilWrite: any commit to the file — the scan service's connection stamp
 *    (PRAGMA data_version, which moves when any other connection commits, and
 *    total_changes(), which moves when this one writes), so a kept value is never older
 *    than the last commit a request could have seen (the weekly review, read from entries);
 *  - keptUntilRecordsChange: a change to the records pages show besides entries and scans
 *    (master data, comparisons, flagged-period records: recordsStamp);
 *  - keptWhileSame: any of the inputs a page was shaped from not being the very same value
 *    (the kept scan arrays the service hands out, the records stamp, the data date).
 * Reading master data and comparisons through Prisma and shaping a page cost several
 * milliseconds of the server's one thread per page; under a steady stream of floor sheets
 * "until any write" meant every page.
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
 * for which `keep` says no.
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
  return keptWhileStamp(writeStamp, load, size, keep);
}

/**
 * Like {@link keptUntilWrite}, but dropped only when the records the review pages read
 * besides entries and scans change ({@link recordsStamp}): master data, saved
 * comparisons, flagged-period records. A floor sheet, a sign-in or a token's last-seen
 * time does not drop it — under a steady stream of floor sheets every page would
 * otherwise reload master data and comparisons through Prisma.
 *
 * Cost: as keptUntilWrite's, plus one small aggregate statement per commit.
 *
 * @example
 * const comparisons = keptUntilRecordsChange(() => listComparisons(), 1);
 * await comparisons("all"); // the same array after any number of floor sheets
 */
export function keptUntilRecordsChange<V>(load: (key: string) => Promise<V>, size = 16): (key: string) => Promise<V> {
  return keptWhileStamp(recordsStamp, load, size, () => true);
}

function writeStamp(connection: ReturnType<typeof rawDb>): string {
  const { dataVersion, totalChanges } = connectionStamp(connection);
  return `${dataVersion}:${totalChanges}`;
}

// Per connection: the stamp read after its last commit, and the statement, prepared once.
const recordsStamps = new WeakMap<ReturnType<typeof rawDb>, { write: ConnectionStamp; records: string; statement: Database.Statement }>();

/**
 * A stamp of the records besides entries that the review pages show: counts and last ids
 * or change times of master data, saved comparisons, flagged-period records, their notes
 * and snapshots, and the last audit event (every setup change and every workflow step of
 * a record writes one in its transaction: lib/db/master-data.ts, lib/db/episodes.ts). Moves
 * on any change to them; not on new entries, sessions or tokens. Read again only when
 * something was committed (the connection stamp moved).
 *
 * Cost: two pragma reads; after a commit, one statement over small tables (≈ 0.1 ms for
 * a plant with a few hundred flagged periods).
 *
 * @example
 * recordsStamp(rawDb()); // "12|3|2026-12-01T06:00:00.000Z|…"
 */
export function recordsStamp(connection: ReturnType<typeof rawDb> = rawDb()): string {
  const write = connectionStamp(connection);
  const last = recordsStamps.get(connection);
  if (last && sameStamp(last.write, write)) return last.records;
  let statement = last?.statement;
  statement ??= connection
    .prepare(
      `SELECT (SELECT MAX(id) FROM AuditEvent), (SELECT COUNT(*) FROM Line), (SELECT COUNT(*) FROM Shift),
              (SELECT COUNT(*) FROM DefectCategory), (SELECT COUNT(*) FROM Product),
              (SELECT COUNT(*) || '/' || MAX(updatedAt) FROM Comparison),
              (SELECT COUNT(*) || '/' || MAX(updatedAt) FROM Episode),
              (SELECT MAX(id) FROM EpisodeNote), (SELECT MAX(id) FROM EpisodeSnapshot)`,
    )
    .raw();
  const records = (statement.get() as unknown[]).map((v) => String(v ?? "")).join("|");
  recordsStamps.set(connection, { write, records, statement });
  return records;
}

function keptWhileStamp<V>(
  stampOf: (connection: ReturnType<typeof rawDb>) => string,
  load: (key: string) => Promise<V>,
  size: number,
  keep: (value: V) => boolean,
): (key: string) => Promise<V> {
  if (!(size >= 1) || !Number.isInteger(size)) throw new RangeError(`size must be a positive whole number, got ${size}`);
  let db: ReturnType<typeof rawDb> | null = null;
  let stamp: string | null = null;
  let entries = new Map<string, Entry<V>>();
  let clock = 0;
  return (key: string) => {
    // A new connection (another file, a reopened one) has stamps of its own: start over.
    const connection = rawDb();
    const now = stampOf(connection);
    if (connection !== db || stamp !== now) {
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
    dropOldest(kept, size);
    return value;
  };
}

function dropOldest<V>(kept: Map<string, Entry<V>>, size: number): void {
  if (kept.size <= size) return;
  let oldest: string | null = null;
  let least = Infinity;
  for (const [k, e] of kept) if (e.used < least) [oldest, least] = [k, e.used];
  if (oldest !== null) kept.delete(oldest);
}

/**
 * Per key, the value built from a list of inputs, reused while every input is the very
 * same (===) as last time: the review pages pass the kept scan results they read (the
 * scan service hands out the same arrays until it patches them), the records stamp and
 * the plain values they show, so a page is shaped again only when one of them changed —
 * not on every floor sheet. At most `size` keys (least recently used dropped first); a
 * rejected build is not kept.
 *
 * Cost: one comparison per input per call.
 *
 * @example
 * const shaped = keptWhileSame<Overview>(1);
 * await shaped("overview", [runs[0].windows, stamp], () => build()); // builds
 * await shaped("overview", [runs[0].windows, stamp], () => build()); // the same object
 */
export function keptWhileSame<V>(size = 16): (key: string, inputs: readonly unknown[], build: () => Promise<V>) => Promise<V> {
  if (!(size >= 1) || !Number.isInteger(size)) throw new RangeError(`size must be a positive whole number, got ${size}`);
  const entries = new Map<string, Entry<V> & { inputs: readonly unknown[] }>();
  let clock = 0;
  return (key, inputs, build) => {
    const hit = entries.get(key);
    if (hit && hit.inputs.length === inputs.length && hit.inputs.every((v, i) => v === inputs[i])) {
      hit.used = ++clock;
      return hit.value;
    }
    const value = build();
    entries.set(key, { value, used: ++clock, inputs: [...inputs] });
    value.catch(() => {
      if (entries.get(key)?.value === value) entries.delete(key);
    });
    dropOldest(entries, size);
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
