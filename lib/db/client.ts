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

type Handles = { prisma: PrismaClient; sqlite: Database.Database; url: string };
const globalForDb = globalThis as unknown as { linemixDb?: Handles };

function open(url: string): Handles {
  mkdirSync(path.dirname(databaseFile(url)), { recursive: true });
  const prisma = new PrismaClient({
    adapter: new PrismaBetterSqlite3({ url, timeout: BUSY_TIMEOUT_MS }),
  });
  const sqlite = openSqlite(url);
  return { prisma, sqlite, url };
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
  db.pragma("synchronous = NORMAL");
  return db;
}

function handles(): Handles {
  const url = databaseUrl();
  const current = globalForDb.linemixDb;
  if (current && current.url === url) return current;
  const fresh = open(url);
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
