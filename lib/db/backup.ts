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
 * Makes sure nothing else has the database open, and folds its write-ahead log into the
 * file, so removing the log below loses nothing even if the swap is interrupted.
 * Every connection to a WAL database holds a shared lock on the file for as long as it is
 * open, so an exclusive lock taken without waiting proves there is none. A file that is
 * not a readable database (the reason to restore, often) is left to be replaced.
 */
function takeOver(target: string): void {
  if (!existsSync(target)) return;
  let probe: Database.Database | undefined;
  try {
    probe = new Database(target, { timeout: 0, fileMustExist: true });
    probe.pragma("locking_mode = EXCLUSIVE");
    probe.exec("BEGIN EXCLUSIVE; COMMIT");
    probe.pragma("wal_checkpoint(TRUNCATE)");
  } catch (error) {
    const code = (error as { code?: unknown }).code;
    if (typeof code === "string" && (code.startsWith("SQLITE_BUSY") || code.startsWith("SQLITE_LOCKED"))) {
      throw new Error("Not restoring: the database is in use (is the app or an import still running?). Stop it, then restore.");
    }
  } finally {
    probe?.close();
  }
}

/**
 * Replaces the database at DATABASE_URL with a backup after checking the backup's
 * integrity. The app must be stopped first: the restore refuses while any connection has
 * the file open (an app still running would go on writing to the replaced file, and
 * those writes would be lost). The swap goes through a temporary file and a rename, so a
 * failure midway leaves the old database in place.
 */
export async function restoreDatabase(backup: string, url = databaseUrl()): Promise<{ file: string }> {
  const sourceFile = path.resolve(backup);
  const check = checkIntegrity(sourceFile);
  if (!check.ok) throw new Error(`Not restoring: the backup failed its integrity check (${check.messages.join("; ")}).`);
  const target = databaseFile(url);
  takeOver(target);
  const staging = `${target}.restoring`;
  rmSync(staging, { force: true });
  const source = new Database(sourceFile, { readonly: true, fileMustExist: true });
  try {
    await source.backup(staging);
  } finally {
    source.close();
  }
  try {
    // Checked again right before the swap: the copy above may have taken a while.
    takeOver(target);
  } catch (error) {
    rmSync(staging, { force: true });
    throw error;
  }
  for (const suffix of ["-wal", "-shm"]) rmSync(target + suffix, { force: true });
  renameSync(staging, target);
  const after = checkIntegrity(target);
  if (!after.ok) throw new Error(`The restored database failed its integrity check: ${after.messages.join("; ")}`);
  return { file: target };
}
