import { PrismaBetterSqlite3 } from "@prisma/adapter-better-sqlite3";
import Database from "better-sqlite3";
import { mkdirSync } from "node:fs";
import path from "node:path";
import { markDatabaseTrouble } from "./errors";
import { PrismaClient, type Prisma } from "./generated/client";
import { databaseFile, databaseUrl } from "./url";
import { withWriteLock } from "./write-lock";

/**
 * The one Prisma client of the process, on SQLite through the better-sqlite3 driver
 * adapter. In development Next reloads modules, so the client is kept on globalThis
 * to avoid opening a new connection on every reload.
 */

const BUSY_TIMEOUT_MS = 5_000;

type Handles = { prisma: PrismaClient; sqlite: Database.Database; url: string; readonly: boolean };
const globalForDb = globalThis as unknown as { linemixDb?: Handles };

/**
 * LINEMIX_DB_READONLY=1 opens both connections read-only: pages and reads work, every
 * write fails with SQLITE_READONLY (answered as "the database is read-only", see
 * lib/db/errors.ts). For serving a copy during maintenance, and for testing that path.
 */
export function readonlyRequested(): boolean {
  return process.env.LINEMIX_DB_READONLY === "1";
}

/**
 * Per-connection settings, the same on Prisma's connection and the raw one. Pragmas hold
 * for one connection only, and the driver adapter opens its own better-sqlite3
 * connection, so they are run on each. Without this the adapter's connection had
 * synchronous=NORMAL (better-sqlite3 builds with SQLITE_DEFAULT_WAL_SYNCHRONOUS=1) and
 * relied on the build default for foreign keys (test/db/prisma-connection.test.ts).
 */
function connectionPragmas(readonly: boolean): string[] {
  return [
    ...(readonly ? [] : ["journal_mode = WAL"]),
    "foreign_keys = ON",
    `busy_timeout = ${BUSY_TIMEOUT_MS}`,
    // FULL: an acknowledged tally survives a power cut, not only a process crash (≈1.6 ms per commit here).
    "synchronous = FULL",
  ];
}

/**
 * Prisma's transactions on this adapter begin with a plain (deferred) BEGIN, and most of
 * ours read before they write. SQLite does not wait (busy timeout) for a read
 * transaction to become a write transaction: while another connection holds the write
 * lock, or after it has committed since the read, the write fails at once with
 * SQLITE_BUSY / SQLITE_BUSY_SNAPSHOT (measured: 12 ms instead of 5 s). BEGIN IMMEDIATE
 * takes the write lock first, under the busy timeout, as the raw connection's imports
 * and floor posts do. In-process, a transaction that awaits real work (a timer, I/O, the
 * scan service) lets other requests run while it holds the lock, so a raw-connection
 * write then would stall the thread in the busy handler and fail: in-process writers
 * queue on lib/db/write-lock.ts instead (writeTransaction below), and only other
 * processes (CLI import, backup) ever meet the busy timeout.
 * Not on a read-only connection, which cannot write anyway.
 */
function beginImmediately(adapter: object): void {
  const sqlite = (adapter as { client?: Database.Database }).client;
  if (!sqlite || typeof sqlite.prepare !== "function") {
    throw new Error("@prisma/adapter-better-sqlite3 changed: its connection is no longer at adapter.client (see lib/db/client.ts)");
  }
  const prepare = sqlite.prepare.bind(sqlite);
  let begin: { run: () => Database.RunResult } | null = null;
  sqlite.prepare = ((source: string) => {
    if (source !== "BEGIN") return prepare(source);
    if (!begin) {
      const immediate = prepare("BEGIN IMMEDIATE");
      const deferred = prepare("BEGIN");
      // The adapter takes its transaction mutex before BEGIN and does not give it back when
      // BEGIN throws. So when the lock cannot be had within the busy timeout, begin
      // deferred instead (that cannot fail): the transaction's first write then meets the
      // same SQLITE_BUSY, and Prisma rolls back and releases as for any failed write.
      begin = {
        run: () => {
          try {
            return immediate.run();
          } catch {
            return deferred.run();
          }
        },
      };
    }
    return begin;
  }) as typeof sqlite.prepare;
}

/** The driver adapter's factory, running connectionPragmas on every connection it opens. */
class LinemixSqliteAdapter extends PrismaBetterSqlite3 {
  readonly #pragmas: string;
  readonly #readonly: boolean;
  constructor(url: string, readonly: boolean) {
    super({ url, timeout: BUSY_TIMEOUT_MS, ...(readonly ? { readonly: true, fileMustExist: true } : {}) });
    this.#readonly = readonly;
    this.#pragmas = connectionPragmas(readonly)
      .map((p) => `PRAGMA ${p};`)
      .join("\n");
  }
  override async connect() {
    const adapter = await super.connect();
    await adapter.executeScript(this.#pragmas);
    if (!this.#readonly) beginImmediately(adapter);
    return adapter;
  }
}

/** Prisma operations that write; the others read. */
const WRITE_OPERATIONS = new Set([
  "create",
  "createMany",
  "createManyAndReturn",
  "update",
  "updateMany",
  "updateManyAndReturn",
  "upsert",
  "delete",
  "deleteMany",
  "$executeRaw",
  "$executeRawUnsafe",
]);

/**
 * The client with one query extension that does two things:
 * - a single write (outside writeTransaction) takes the process-wide write lock. The
 *   adapter runs every query on its one connection and does not hold other queries back
 *   while an interactive transaction is open, so without the lock a single write from
 *   another request ran inside that transaction and was silently undone when it rolled
 *   back (test/db/write-lock.test.ts). Inside a holder it runs at once (re-entrant).
 * - an error that is a database condition (full, read-only, busy…; lib/db/errors.ts)
 *   gets a digest naming the condition before it leaves, so that a page failing on it
 *   can say so plainly in app/error.tsx even in production, where Next passes error
 *   pages the digest but not the message.
 */
function prismaClient(url: string, readonly: boolean): PrismaClient {
  const base = new PrismaClient({ adapter: new LinemixSqliteAdapter(url, readonly) });
  const marked = base.$extends({
    query: {
      async $allOperations({ operation, args, query }) {
        try {
          return WRITE_OPERATIONS.has(operation) ? await withWriteLock(() => query(args)) : await query(args);
        } catch (error) {
          throw markDatabaseTrouble(error);
        }
      },
    },
  });
  // A query-only extension changes no method's type; the rest of the code keeps the base type.
  return marked as unknown as PrismaClient;
}

function open(url: string, readonly: boolean): Handles {
  if (!readonly) mkdirSync(path.dirname(databaseFile(url)), { recursive: true });
  const prisma = prismaClient(url, readonly);
  const sqlite = openSqlite(url, readonly ? { readonly: true, fileMustExist: true } : {});
  return { prisma, sqlite, url, readonly };
}

/**
 * A plain better-sqlite3 connection to the same file, for the two paths where Prisma's
 * per-row object mapping costs too much: streaming imports and the window aggregation
 * of the scan service. Everything else goes through Prisma.
 */
export function openSqlite(url = databaseUrl(), options: Database.Options = {}): Database.Database {
  const db = new Database(databaseFile(url), { timeout: BUSY_TIMEOUT_MS, ...options });
  for (const pragma of connectionPragmas(options.readonly ?? false)) db.pragma(pragma);
  return db;
}

function handles(): Handles {
  const url = databaseUrl();
  const readonly = readonlyRequested();
  const current = globalForDb.linemixDb;
  if (current && current.url === url && current.readonly === readonly) return current;
  const fresh = open(url, readonly);
  globalForDb.linemixDb = fresh;
  return fresh;
}

/** The Prisma client for DATABASE_URL (default ./data/linemix.db). */
export function db(): PrismaClient {
  return handles().prisma;
}

/** The raw connection for bulk paths (see openSqlite). */
export function rawDb(): Database.Database {
  return handles().sqlite;
}

/** The transaction client handed to writeTransaction's fn. */
export type TransactionClient = Prisma.TransactionClient;

/**
 * A Prisma interactive transaction under the process-wide write lock
 * (lib/db/write-lock.ts): every Prisma write transaction goes through here, never through
 * db().$transaction directly (test/db/write-lock.test.ts checks the source), so that a
 * raw-connection write (floor sheet, API, import) waits on the event loop for it instead
 * of stalling the thread 5 s in SQLite's busy handler and failing.
 *
 * Nested use joins: writeTransaction called inside another one's fn (same async context)
 * runs fn on the outer transaction client — one transaction, committed or rolled back
 * as a whole — instead of queueing behind itself (deadlock) or opening a second
 * transaction on the same connection (the adapter's own mutex would deadlock too).
 * Inside a plain withWriteLock holder it opens the transaction without queueing again.
 * Cost: the lock (microseconds uncontended) plus the transaction.
 *
 * @example
 * await writeTransaction(async (tx) => { await tx.line.update({ where: { id: 1 }, data: { name: "Press 1" } }); });
 */
export function writeTransaction<T>(fn: (tx: TransactionClient) => Promise<T>, options?: { maxWait?: number; timeout?: number }): Promise<T> {
  return withWriteLock(async (holder) => {
    if (holder.prismaTx) return fn(holder.prismaTx as TransactionClient);
    try {
      // $transaction is the only call of it in lib/ and app/ (see the doc comment).
      return await db().$transaction(async (tx) => {
        holder.prismaTx = tx;
        return fn(tx);
      }, options);
    } finally {
      holder.prismaTx = null;
    }
  });
}

/** Closes both connections; tests call this between databases. */
export async function closeDb(): Promise<void> {
  const current = globalForDb.linemixDb;
  globalForDb.linemixDb = undefined;
  if (!current) return;
  await current.prisma.$disconnect();
  current.sqlite.close();
}

export type { PrismaClient };
