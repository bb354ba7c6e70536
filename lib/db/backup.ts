import Database from "better-sqlite3";
import { existsSync, renameSync, rmSync } from "node:fs";
import path from "node:path";
import { openSqlite } from "./client";
import { databaseFile, databaseUrl } from "./url";

export type IntegrityResult = { ok: boolean; messages: string[] };

/** PRAGMA integrity_check on a database file, opened read-only. */
export function checkIntegrity(file: string): IntegrityResult {
  if (!existsSync(file)) return { ok: false, messages: [`no such file: ${file}`] };
  let db: Database.Database | undefined;
  try {
    db = new Database(file, { readonly: true, fileMustExist: true });
    const rows = db.pragma("integrity_check") as { integrity_check: string }[];
    const messages = rows.map((r) => r.integrity_check);
    return { ok: messages.length === 1 && messages[0] === "ok", messages };
  } catch (error) {
    return { ok: false, messages: [(error as Error).message] };
  } finally {
    db?.close();
  }
}

/**
 * Copies the live database to `target` through SQLite's online backup API, which
 * copies a consistent snapshot page by page while the app keeps reading and writing.
 */
export async function backupDatabase(target: string, url = databaseUrl()): Promise<{ file: string; pages: number }> {
  const destination = path.resolve(target);
  if (destination === databaseFile(url)) throw new Error("The backup file must not be the live database.");
  const source = openSqlite(url);
  try {
    const result = await source.backup(destination);
    const check = checkIntegrity(destination);
    if (!check.ok) throw new Error(`The backup failed its integrity check: ${check.messages.join("; ")}`);
    return { file: destination, pages: result.totalPages };
  } finally {
    source.close();
  }
}

/**
 * Replaces the database at DATABASE_URL with a backup after checking the backup's
 * integrity. The app must be stopped first: the file is swapped underneath any open
 * connection. The swap goes through a temporary file and a rename, so a failure midway
 * leaves the old database in place.
 */
export async function restoreDatabase(backup: string, url = databaseUrl()): Promise<{ file: string }> {
  const sourceFile = path.resolve(backup);
  const check = checkIntegrity(sourceFile);
  if (!check.ok) throw new Error(`Not restoring: the backup failed its integrity check (${check.messages.join("; ")}).`);
  const target = databaseFile(url);
  const staging = `${target}.restoring`;
  rmSync(staging, { force: true });
  const source = new Database(sourceFile, { readonly: true, fileMustExist: true });
  try {
    await source.backup(staging);
  } finally {
    source.close();
  }
  for (const suffix of ["-wal", "-shm"]) rmSync(target + suffix, { force: true });
  renameSync(staging, target);
  const after = checkIntegrity(target);
  if (!after.ok) throw new Error(`The restored database failed its integrity check: ${after.messages.join("; ")}`);
  return { file: target };
}
