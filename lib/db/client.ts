import { PrismaBetterSqlite3 } from "@prisma/adapter-better-sqlite3";
import Database from "better-sqlite3";
import { mkdirSync } from "node:fs";
import path from "node:path";
import { PrismaClient } from "./generated/client";
import { databaseFile, databaseUrl } from "./url";

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

function open(url: string, readonly: boolean): Handles {
  if (!readonly) mkdirSync(path.dirname(databaseFile(url)), { recursive: true });
  const prisma = new PrismaClient({
    adapter: new PrismaBetterSqlite3({ url, timeout: BUSY_TIMEOUT_MS, ...(readonly ? { readonly: true, fileMustExist: true } : {}) }),
  });
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
  if (!options.readonly) db.pragma("journal_mode = WAL");
  db.pragma("foreign_keys = ON");
  db.pragma(`busy_timeout = ${BUSY_TIMEOUT_MS}`);
  // FULL: an acknowledged tally survives a power cut, not only a process crash (≈1.6 ms per commit here).
  db.pragma("synchronous = FULL");
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

/** Closes both connections; tests call this between databases. */
export async function closeDb(): Promise<void> {
  const current = globalForDb.linemixDb;
  globalForDb.linemixDb = undefined;
  if (!current) return;
  await current.prisma.$disconnect();
  current.sqlite.close();
}

export type { PrismaClient };
