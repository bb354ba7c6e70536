import Database from "better-sqlite3";
import { spawn } from "node:child_process";
import { existsSync, writeFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { backupDatabase, checkIntegrity, restoreDatabase } from "@/lib/db/backup";
import { closeDb, openSqlite } from "@/lib/db/client";
import { useTempDatabase } from "../helpers/temp-db";

/**
 * Restore while something still has the database open: refused, nothing changed (an app
 * left running would keep writing to the replaced file and lose those writes). A file
 * left by a killed process (write-ahead log not yet folded in) is restored over cleanly.
 * test/reliability/backup.test.ts covers the backup under write load.
 */

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let dbFile: string;
beforeAll(async () => {
  ctx = await useTempDatabase();
  await closeDb();
  dbFile = ctx.url.slice("file:".length);
  const db = openSqlite(ctx.url);
  db.exec(`INSERT INTO Line (code, name) VALUES ('L1', 'Line 1');
           INSERT INTO Shift (code, name, startTime, endTime) VALUES ('A', 'Early', '06:00', '14:00');
           INSERT INTO DefectCategory (code, name) VALUES ('scratch', 'Scratch');`);
  db.close();
});
afterAll(async () => ctx.cleanup());

const lines = (file: string) => {
  const db = new Database(file, { readonly: true });
  const n = (db.prepare("SELECT COUNT(*) AS n FROM Line").get() as { n: number }).n;
  db.close();
  return n;
};

describe("restore", () => {
  it("refuses while another connection has the database open, and changes nothing", async () => {
    const backupFile = path.join(ctx.dir, "one-line.db");
    await backupDatabase(backupFile, ctx.url);
    const app = openSqlite(ctx.url);
    app.exec("INSERT INTO Line (code, name) VALUES ('L2', 'Line 2')");
    try {
      await expect(restoreDatabase(backupFile, ctx.url)).rejects.toThrow(/in use .*Stop it, then restore/);
      expect(app.prepare("SELECT COUNT(*) AS n FROM Line").get()).toEqual({ n: 2 });
      expect(existsSync(`${dbFile}.restoring`)).toBe(false);
    } finally {
      app.close();
    }
    await restoreDatabase(backupFile, ctx.url);
    expect(lines(dbFile)).toBe(1);
  });

  it("restores over a file whose writer was killed with its log not yet folded in", async () => {
    const backupFile = path.join(ctx.dir, "before-kill.db");
    await backupDatabase(backupFile, ctx.url);
    const script = path.join(ctx.dir, "writer.cjs");
    writeFileSync(
      script,
      `const D = require(${JSON.stringify(require.resolve("better-sqlite3"))});
       const db = new D(${JSON.stringify(dbFile)});
       db.pragma("journal_mode = WAL");
       db.pragma("wal_autocheckpoint = 0");
       for (let i = 0; i < 50; i++) db.prepare("INSERT INTO Line (code, name) VALUES (?, 'x')").run('K' + i);
       process.stdout.write('written\\n');
       setInterval(() => {}, 1000);`,
    );
    const child = spawn(process.execPath, [script], { stdio: ["ignore", "pipe", "inherit"] });
    await new Promise<void>((resolve) => child.stdout.once("data", () => resolve()));
    child.kill("SIGKILL");
    await new Promise((r) => child.once("exit", r));
    expect(existsSync(`${dbFile}-wal`)).toBe(true);
    expect(lines(dbFile)).toBe(51);

    await restoreDatabase(backupFile, ctx.url);
    expect(lines(dbFile)).toBe(1);
    expect(checkIntegrity(dbFile)).toEqual({ ok: true, messages: ["ok"] });
  });
});
