import type Database from "better-sqlite3";
import { dayNumberCache } from "./dates";

/**
 * How the service knows whether kept results are still true, from cheapest to dearest:
 * 1. the connection's stamp — PRAGMA data_version (moves when another connection
 *    commits) and total_changes() (moves when this one writes): unchanged means nothing
 *    in the file changed, so a repeated request costs two pragma reads;
 * 2. MAX(id) of the entry tables, O(log n): unchanged means no entry arrived;
 * 3. only when entries arrived, COUNT(*) (a full index pass) to confirm that exactly the
 *    new ids were added — entries are never deleted or edited in place, so anything else
 *    means the kept state cannot be patched and the scan is rebuilt.
 */

export interface ConnectionStamp {
  dataVersion: number;
  totalChanges: number;
}

/**
 * The connection's change stamp (two pragma-cheap reads).
 *
 * @example
 * connectionStamp(rawDb()); // { dataVersion: 3, totalChanges: 0 }
 */
export function connectionStamp(db: Database.Database): ConnectionStamp {
  const [dataVersion, totalChanges] = stampStatement(db).get() as [number, number];
  return { dataVersion: Number(dataVersion), totalChanges: Number(totalChanges) };
}

// Prepared once per connection: a page asks for the stamp several times, and
// db.pragma() would prepare a statement on every call.
const stampStatements = new WeakMap<Database.Database, Database.Statement>();

function stampStatement(db: Database.Database): Database.Statement {
  let st = stampStatements.get(db);
  if (!st) stampStatements.set(db, (st = db.prepare("SELECT data_version, total_changes() FROM pragma_data_version").raw()));
  return st;
}

/**
 * Whether nothing was written between two stamps of one connection.
 *
 * @example
 * sameStamp({ dataVersion: 3, totalChanges: 0 }, { dataVersion: 3, totalChanges: 1 }); // false
 */
export function sameStamp(a: ConnectionStamp, b: ConnectionStamp): boolean {
  return a.dataVersion === b.dataVersion && a.totalChanges === b.totalChanges;
}

export interface MaxIds {
  tally: number;
  units: number;
}

/**
 * MAX(id) of TallyEntry and InspectionCount (0 when empty); O(log n) each.
 *
 * @example
 * maxIds(rawDb()); // { tally: 1917012, units: 109560 } for the benchmark file
 */
export function maxIds(db: Database.Database): MaxIds {
  const row = db
    .prepare("SELECT (SELECT IFNULL(MAX(id), 0) FROM TallyEntry), (SELECT IFNULL(MAX(id), 0) FROM InspectionCount)")
    .raw()
    .get() as [number, number];
  return { tally: row[0], units: row[1] };
}

/**
 * COUNT(*) of both entry tables: a full pass over the smallest index (≈ 50 ms for two
 * million entries), so only run when MAX(id) moved.
 *
 * @example
 * entryCounts(rawDb()); // { tally: 1917012, units: 109560 } for the benchmark file
 */
export function entryCounts(db: Database.Database): MaxIds {
  const row = db
    .prepare("SELECT (SELECT COUNT(*) FROM TallyEntry), (SELECT COUNT(*) FROM InspectionCount)")
    .raw()
    .get() as [number, number];
  return { tally: row[0], units: row[1] };
}

/**
 * {@link entryCounts} now, from counts taken earlier at `base` ids: base.counts plus the
 * rows above base.ids (two rowid ranges, cheap). Exact unless rows at or below base.ids
 * were deleted in between — which the next full count catches — so one full count can
 * serve a whole refresh pass over many comparisons.
 *
 * @example
 * entryCountsFrom(rawDb(), { ids: { tally: 1000, units: 50 }, counts: { tally: 1000, units: 50 } }); // { tally: 1025, units: 51 } after one floor sheet
 */
export function entryCountsFrom(db: Database.Database, base: { ids: MaxIds; counts: MaxIds }): MaxIds {
  const row = db
    .prepare("SELECT (SELECT COUNT(*) FROM TallyEntry WHERE id > ?), (SELECT COUNT(*) FROM InspectionCount WHERE id > ?)")
    .raw()
    .get(base.ids.tally, base.ids.units) as [number, number];
  return { tally: base.counts.tally + row[0], units: base.counts.units + row[1] };
}

/** An entry touched by a change: a new entry, or one a new entry supersedes. */
export interface TouchedEntry {
  table: "tally" | "units";
  day: number;
  lineId: number;
  shiftId: number;
  /** null for units. */
  categoryId: number | null;
  /**
   * What this entry changes in the current sums: +count (+units) for a new entry, −count
   * for an entry a new one supersedes. Entries are never updated or deleted, so adding
   * these deltas to sums taken before the change gives the sums after it.
   */
  delta: number;
}

/** What entries newer than a version touch. */
export interface Changes {
  touched: TouchedEntry[];
  /** New entries per table. */
  added: MaxIds;
}

/**
 * The entries with id above `since` and the entries they supersede: a correction moves a
 * count off the old entry's date (and line, shift, category) as well as onto its own.
 * Cost: a rowid range plus a join per new entry.
 *
 * @example
 * changesSince(rawDb(), { tally: 1000, units: 50 }).touched[0]; // { table: "tally", day: 20473, lineId: 2, shiftId: 2, categoryId: 5, delta: 3 }
 */
export function changesSince(db: Database.Database, since: MaxIds): Changes {
  const parseDay = dayNumberCache();
  const changes: Changes = { touched: [], added: { tally: 0, units: 0 } };
  const tallies = db
    .prepare(
      `SELECT e.productionDate, e.lineId, e.shiftId, e.categoryId, 1, e.count FROM TallyEntry e WHERE e.id > ?
       UNION ALL
       SELECT s.productionDate, s.lineId, s.shiftId, s.categoryId, 0, -s.count FROM TallyEntry e JOIN TallyEntry s ON s.id = e.supersedesId WHERE e.id > ?`,
    )
    .raw();
  for (const [date, lineId, shiftId, categoryId, isNew, delta] of tallies.iterate(since.tally, since.tally) as Iterable<
    [string, number, number, number, number, number]
  >) {
    changes.touched.push({ table: "tally", day: parseDay(date), lineId, shiftId, categoryId, delta });
    changes.added.tally += isNew;
  }
  const units = db
    .prepare(
      `SELECT e.productionDate, e.lineId, e.shiftId, 1, e.units FROM InspectionCount e WHERE e.id > ?
       UNION ALL
       SELECT s.productionDate, s.lineId, s.shiftId, 0, -s.units FROM InspectionCount e JOIN InspectionCount s ON s.id = e.supersedesId WHERE e.id > ?`,
    )
    .raw();
  for (const [date, lineId, shiftId, isNew, delta] of units.iterate(since.units, since.units) as Iterable<[string, number, number, number, number]>) {
    changes.touched.push({ table: "units", day: parseDay(date), lineId, shiftId, categoryId: null, delta });
    changes.added.units += isNew;
  }
  return changes;
}
