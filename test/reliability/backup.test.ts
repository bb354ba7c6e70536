import { spawn } from "node:child_process";
import { writeFileSync } from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { backupDatabase, checkIntegrity, restoreDatabase } from "@/lib/db/backup";
import { closeDb, openSqlite } from "@/lib/db/client";
import { useTempDatabase } from "../helpers/temp-db";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
  const db = openSqlite(ctx.url);
  db.exec(`INSERT INTO Line (code, name) VALUES ('L1', 'Line 1');
           INSERT INTO Shift (code, name, startTime, endTime) VALUES ('A', 'Early', '06:00', '14:00');
           INSERT INTO DefectCategory (code, name) VALUES ('scratch', 'Scratch');`);
  db.close();
});
afterAll(async () => ctx.cleanup());

/** A separate process that inserts tallies as fast as it can until killed. */
function startWriter(dbFile: string) {
  const script = path.join(ctx.dir, "writer.cjs");
  writeFileSync(
    script,
    `const D = require(${JSON.stringify(require.resolve("better-sqlite3"))});
     const db = new D(${JSON.stringify(dbFile)}, { timeout: 5000 });
     db.pragma("journal_mode = WAL");
     const ins = db.prepare("INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, count, source, enteredByName, createdAt, idempotencyKey) VALUES ('2026-03-02', 1, 1, 1, 1, 'api', 'writer', '2026-03-02T10:00:00Z', ?)");
     let i = 0;
     const batch = db.transaction((n) => { for (let k = 0; k < n; k++) ins.run('w-' + (i++)); });
     process.stdout.write('ready\\n');
     setInterval(() => batch(50), 1);`,
  );
  const child = spawn(process.execPath, [script], { stdio: ["ignore", "pipe", "inherit"] });
  const ready = new Promise<void>((resolve) => child.stdout.once("data", () => resolve()));
  return { child, ready };
}

function countTallies(file: string): number {
  const db = new Database(file, { readonly: true });
  const n = (db.prepare("SELECT COUNT(*) AS n FROM TallyEntry").get() as { n: number }).n;
  db.close();
  return n;
}

describe("backup and restore", () => {
  it("takes a consistent backup under write load and restores it with the same counts", async () => {
    const dbFile = ctx.url.slice("file:".length);
    const writer = startWriter(dbFile);
    await writer.ready;
    await new Promise((r) => setTimeout(r, 300));
    const backupFile = path.join(ctx.dir, "backup.db");
    await backupDatabase(backupFile, ctx.url);
    await new Promise((r) => setTimeout(r, 200));
    writer.child.kill("SIGKILL");
    await new Promise((r) => writer.child.once("exit", r));

    const inBackup = countTallies(backupFile);
    expect(inBackup).toBeGreaterThan(0);
    expect(checkIntegrity(backupFile)).toEqual({ ok: true, messages: ["ok"] });
    // The writer kept going after the backup, so the live file holds more rows.
    expect(countTallies(dbFile)).toBeGreaterThan(inBackup);

    await closeDb();
    await restoreDatabase(backupFile, ctx.url);
    expect(countTallies(dbFile)).toBe(inBackup);
    expect(checkIntegrity(dbFile).ok).toBe(true);
  });

  it("refuses to restore a file that is not a sound database", async () => {
    const bogus = path.join(ctx.dir, "bogus.db");
    writeFileSync(bogus, "this is not a database");
    await expect(restoreDatabase(bogus, ctx.url)).rejects.toThrow(/integrity check/);
    expect(checkIntegrity(ctx.url.slice("file:".length)).ok).toBe(true);
  });
});
