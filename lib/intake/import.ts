import type Database from "better-sqlite3";
import { rawDb } from "../db/client";
import { withRawWrite } from "../db/write-lock";
import type { Actor } from "./actor";
import { sqliteTime, writeAudit } from "./audit";
import { type CodeLookup, type ImportKind, type MasterKind, type Problem, type ReadResult, readImportFile } from "./csv-read";

/**
 * CSV import: one streaming read that checks every row (csv-read.ts), then — only when
 * the whole file is clean — one transaction on the raw connection with prepared
 * statements. A file is all or nothing; the same bytes (SHA-256) are refused a second
 * time unless forced.
 */

export type ImportOptions = {
  actor: Actor;
  fileName?: string | null;
  dryRun?: boolean;
  addMissing?: boolean;
  force?: boolean;
  /** Write only when the bytes hash to this (the file that was previewed). */
  expectedHash?: string | null;
  /** The connection to write on (default rawDb()). */
  sqlite?: Database.Database;
};

export type PreviousImport = { batchId: number; at: string; userName: string; fileName: string | null; forced: boolean };

export type ImportOutcome = {
  /** imported: written; checked: dry run found nothing wrong; refused: nothing written. */
  status: "imported" | "checked" | "refused";
  kind: ImportKind | null;
  fileName: string | null;
  contentHash: string;
  bytes: number;
  rows: number;
  problems: Problem[];
  moreProblems: number;
  /** Set when the same content was imported before. */
  duplicateOf: PreviousImport | null;
  /** Codes created (imported) or that would be created (checked) with --add-missing. */
  created: Record<MasterKind, string[]>;
  batchId: number | null;
  summary: { firstDate: string | null; lastDate: string | null; total: number; perLine: { line: string; rows: number; total: number }[] };
  sample: string[][];
  header: string[];
  /** Current entries already recorded on the file's lines within its date span (the import adds to them). */
  existingEntries: number;
  elapsedMs: { read: number; write: number };
};

/** Every code of every kind (retired ones too) → id. */
export function loadCodeLookup(sqlite: Database.Database): CodeLookup {
  const map = (table: string) =>
    new Map((sqlite.prepare(`SELECT code, id FROM ${table}`).all() as { code: string; id: number }[]).map((r) => [r.code, r.id]));
  return { line: map("Line"), shift: map("Shift"), category: map("DefectCategory"), product: map("Product") };
}

export function findPreviousImport(sqlite: Database.Database, contentHash: string): PreviousImport | null {
  const row = sqlite
    .prepare("SELECT id, createdAt, userName, fileName, forced FROM ImportBatch WHERE contentHash = ? ORDER BY id LIMIT 1")
    .get(contentHash) as { id: number; createdAt: string; userName: string; fileName: string | null; forced: number } | undefined;
  if (!row) return null;
  return { batchId: row.id, at: sqliteTime(row.createdAt).toISOString(), userName: row.userName, fileName: row.fileName, forced: row.forced === 1 };
}

function duplicateProblem(previous: PreviousImport): Problem {
  return {
    line: null,
    message:
      `this file's content was already imported (batch #${previous.batchId}, ${previous.at.slice(0, 16).replace("T", " ")} UTC by ${previous.userName}` +
      `${previous.fileName ? `, file ${previous.fileName}` : ""}); importing it again would count every row twice — use --force only if that is intended`,
  };
}

function countExisting(sqlite: Database.Database, read: ReadResult, lineIds: number[]): number {
  const { firstDate, lastDate } = read.summary;
  if (!firstDate || !lastDate || lineIds.length === 0) return 0;
  const table = read.kind === "units" ? "InspectionCount" : "TallyEntry";
  const placeholders = lineIds.map(() => "?").join(",");
  const row = sqlite
    .prepare(
      `SELECT COUNT(*) AS n FROM ${table} e WHERE e.productionDate BETWEEN ? AND ? AND e.lineId IN (${placeholders})
       AND NOT EXISTS (SELECT 1 FROM ${table} c WHERE c.supersedesId = e.id)`,
    )
    .get(firstDate, lastDate, ...lineIds) as { n: number };
  return row.n;
}

const MASTER_TABLE: Record<MasterKind, { table: string; entity: string; action: string }> = {
  line: { table: "Line", entity: "Line", action: "line.create" },
  shift: { table: "Shift", entity: "Shift", action: "shift.create" },
  category: { table: "DefectCategory", entity: "DefectCategory", action: "category.create" },
  product: { table: "Product", entity: "Product", action: "product.create" },
};

function createMissing(sqlite: Database.Database, actor: Actor, kind: MasterKind, code: string, fileName: string | null, now: Date): number {
  const { table, entity, action } = MASTER_TABLE[kind];
  const stamp = now.toISOString();
  let id: number;
  let after: Record<string, unknown>;
  if (kind === "shift") {
    // Clock times are unknown, so the shift is created retired (history can use it, the
    // floor sheet cannot) until an admin sets its times and activates it in Setup.
    id = Number(
      sqlite
        .prepare("INSERT INTO Shift (code, name, startTime, endTime, active, displayOrder, createdAt) VALUES (?, ?, '00:00', '00:00', 0, (SELECT COALESCE(MAX(displayOrder), -1) + 1 FROM Shift), ?)")
        .run(code, code, stamp).lastInsertRowid,
    );
    after = { code, name: code, startTime: "00:00", endTime: "00:00", active: false };
  } else if (kind === "product") {
    id = Number(sqlite.prepare("INSERT INTO Product (code, name, createdAt) VALUES (?, ?, ?)").run(code, code, stamp).lastInsertRowid);
    after = { code, name: code, active: true };
  } else {
    id = Number(
      sqlite
        .prepare(`INSERT INTO ${table} (code, name, displayOrder, createdAt) VALUES (?, ?, (SELECT COALESCE(MAX(displayOrder), -1) + 1 FROM ${table}), ?)`)
        .run(code, code, stamp).lastInsertRowid,
    );
    after = { code, name: code, active: true };
  }
  writeAudit(sqlite, actor, { action, entity, entityId: id, after, reason: `created by the import of ${fileName ?? "a file"} (missing codes added)` }, now);
  return id;
}

class RefusedInTransaction extends Error {
  constructor(readonly previous: PreviousImport) {
    super("duplicate");
  }
}

/** Reads, checks and (unless a dry run or a problem) writes a tally or inspected-units file. */
export async function importCsv(
  source: Parameters<typeof readImportFile>[0],
  options: ImportOptions,
): Promise<ImportOutcome> {
  const sqlite = options.sqlite ?? rawDb();
  const fileName = options.fileName ?? null;
  const t0 = performance.now();
  const lookup = loadCodeLookup(sqlite);
  const read = await readImportFile(source, lookup, { addMissing: options.addMissing });
  const t1 = performance.now();

  const lineIds = [...new Set(Array.from(read.line.data.subarray(0, read.line.length)).filter((id) => id > 0))];
  const outcome: ImportOutcome = {
    status: "refused",
    kind: read.kind,
    fileName,
    contentHash: read.contentHash,
    bytes: read.bytes,
    rows: read.rows,
    problems: read.problems,
    moreProblems: read.moreProblems,
    duplicateOf: null,
    created: read.missing,
    batchId: null,
    summary: {
      firstDate: read.summary.firstDate,
      lastDate: read.summary.lastDate,
      total: read.summary.total,
      perLine: [...read.summary.perLine].map(([line, v]) => ({ line, ...v })).sort((a, b) => a.line.localeCompare(b.line)),
    },
    sample: read.sample,
    header: read.header,
    existingEntries: read.problems.length === 0 ? countExisting(sqlite, read, lineIds) : 0,
    elapsedMs: { read: Math.round(t1 - t0), write: 0 },
  };

  if (options.expectedHash && options.expectedHash !== read.contentHash) {
    outcome.problems = [{ line: null, message: "the file changed since it was checked; check it again before importing" }, ...outcome.problems];
    return outcome;
  }
  const previous = read.contentHash ? findPreviousImport(sqlite, read.contentHash) : null;
  outcome.duplicateOf = previous;
  if (previous && !options.force) outcome.problems = [duplicateProblem(previous), ...outcome.problems];
  if (outcome.problems.length > 0 || outcome.moreProblems > 0 || !read.kind) return outcome;
  if (options.dryRun) {
    outcome.status = "checked";
    return outcome;
  }

  try {
    // Under the process-wide write lock (lib/db/write-lock.ts); the write stays one
    // synchronous transaction, so the file is read and checked before the lock is taken.
    outcome.batchId = await withRawWrite(() => writeImport(sqlite, read, options, fileName));
  } catch (error) {
    if (error instanceof RefusedInTransaction) {
      outcome.duplicateOf = error.previous;
      outcome.problems = [duplicateProblem(error.previous)];
      return outcome;
    }
    throw error;
  }
  outcome.elapsedMs.write = Math.round(performance.now() - t1);
  outcome.status = "imported";
  return outcome;
}

function writeImport(sqlite: Database.Database, read: ReadResult, options: ImportOptions, fileName: string | null): number {
  const actor = options.actor;
  const kind = read.kind as ImportKind;
  const now = new Date();
  const stamp = now.toISOString();
  const run = sqlite.transaction((): number => {
    // Checked again inside the write lock: two imports of one file at the same time.
    const previous = findPreviousImport(sqlite, read.contentHash);
    if (previous && !options.force) throw new RefusedInTransaction(previous);

    const created: Record<MasterKind, number[]> = { line: [], shift: [], category: [], product: [] };
    for (const k of ["line", "shift", "category", "product"] as const) {
      for (const code of read.missing[k]) created[k].push(createMissing(sqlite, actor, k, code, fileName, now));
    }
    const id = (k: MasterKind, value: number): number => (value < 0 ? created[k][-value - 1] : value);

    const batchId = Number(
      sqlite
        .prepare("INSERT INTO ImportBatch (contentHash, kind, fileName, rows, forced, userId, userName, createdAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?)")
        .run(read.contentHash, kind, fileName, read.rows, previous ? 1 : 0, actor.userId, actor.name, stamp).lastInsertRowid,
    );
    // Zero-padded file line numbers keep the unique key index growing at its end.
    const keyPrefix = `import:${batchId}:`;
    const { date, shift, line, category, product, value, fileLine, notes, dates } = read;
    const n = read.rows;
    const hasMissing = Object.values(read.missing).some((list) => list.length > 0);
    if (kind === "tallies") {
      const insert = sqlite.prepare(
        `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, productId, count, source, note, enteredById, enteredByName, createdAt, idempotencyKey, importBatchId)
         VALUES (?, ?, ?, ?, ?, ?, 'import', ?, ?, ?, ?, ?, ?)`,
      );
      for (let i = 0; i < n; i += 1) {
        const p = product.data[i];
        insert.run(
          dates[date.data[i]],
          hasMissing ? id("shift", shift.data[i]) : shift.data[i],
          hasMissing ? id("line", line.data[i]) : line.data[i],
          hasMissing ? id("category", category.data[i]) : category.data[i],
          p === 0 ? null : hasMissing ? id("product", p) : p,
          value.data[i],
          notes.get(i) ?? null,
          actor.userId,
          actor.name,
          stamp,
          keyPrefix + String(fileLine.data[i]).padStart(10, "0"),
          batchId,
        );
      }
    } else {
      const insert = sqlite.prepare(
        `INSERT INTO InspectionCount (productionDate, shiftId, lineId, productId, units, source, enteredById, enteredByName, createdAt, idempotencyKey, importBatchId)
         VALUES (?, ?, ?, ?, ?, 'import', ?, ?, ?, ?, ?)`,
      );
      for (let i = 0; i < n; i += 1) {
        const p = product.data[i];
        insert.run(
          dates[date.data[i]],
          hasMissing ? id("shift", shift.data[i]) : shift.data[i],
          hasMissing ? id("line", line.data[i]) : line.data[i],
          p === 0 ? null : hasMissing ? id("product", p) : p,
          value.data[i],
          actor.userId,
          actor.name,
          stamp,
          keyPrefix + String(fileLine.data[i]).padStart(10, "0"),
          batchId,
        );
      }
    }
    writeAudit(
      sqlite,
      actor,
      {
        action: previous ? "import.forced" : "import.commit",
        entity: "ImportBatch",
        entityId: batchId,
        after: { kind, fileName, rows: n, contentHash: read.contentHash, firstDate: read.summary.firstDate, lastDate: read.summary.lastDate, total: read.summary.total },
        reason: previous ? `same content as batch #${previous.batchId}, imported again on purpose` : null,
      },
      now,
    );
    return batchId;
  });
  // A larger page cache while the indexes grow; the connection's setting is restored after.
  const cacheSize = sqlite.pragma("cache_size", { simple: true }) as number;
  sqlite.pragma(`cache_size = ${-IMPORT_CACHE_KIB}`);
  try {
    return run.immediate();
  } finally {
    sqlite.pragma(`cache_size = ${cacheSize}`);
  }
}

/** Page cache for the import transaction, KiB (SQLite's negative cache_size). */
const IMPORT_CACHE_KIB = 128 * 1024;
