import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { GET as getTallies, POST as postTallies } from "@/app/api/v1/tallies/route";
import { POST as postInspections } from "@/app/api/v1/inspections/route";
import { POST as postImport } from "@/app/api/v1/imports/route";
import { closeDb, db, rawDb } from "@/lib/db/client";
import { databaseTrouble } from "@/lib/db/errors";
import { createApiToken } from "@/lib/auth/api-tokens";
import { createSession } from "@/lib/auth/sessions";
import { useTempDatabase } from "../helpers/temp-db";
import { count, seedPlant, type Plant } from "../intake/fixture";

/**
 * A full disk, a read-only database and a database locked by another connection, each
 * met by the JSON API: a 503 with Retry-After and a plain message, no row of the refused
 * write stored, and the same request stored once the condition clears.
 *
 * Simulated, as root on a machine where nothing can be mounted: a full disk is
 * `PRAGMA max_page_count` lowered to just above the file's size on the app's connections
 * (SQLite then answers SQLITE_FULL exactly as on a full disk); read-only is
 * LINEMIX_DB_READONLY=1 (both connections opened read-only → SQLITE_READONLY); locked is
 * a second connection holding BEGIN EXCLUSIVE past the 5 s busy timeout (SQLITE_BUSY).
 */

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
let engineerCookie: string;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
  engineerCookie = `linemix_session=${(await createSession(plant.users.engineer.userId!, "password")).token}`;
});
afterAll(async () => {
  delete process.env.LINEMIX_DB_READONLY;
  await ctx.cleanup();
});

const BASE = "http://plant.example:3000";

function request(path: string, body: string, key: string | null, token = plant.tokens.write, type = "application/json"): Request {
  const headers: Record<string, string> = { "content-type": type, authorization: `Bearer ${token}` };
  if (key) headers["idempotency-key"] = key;
  return new Request(`${BASE}${path}`, { method: "POST", headers, body });
}

/** CSV uploads are for an engineer's signed-in session (tokens send rows to /api/v1/tallies). */
function upload(path: string, csv: string): Request {
  const host = new URL(BASE).host;
  return new Request(`${BASE}${path}`, {
    method: "POST",
    headers: { host, origin: BASE, cookie: engineerCookie, "content-type": "text/csv" },
    body: csv,
  });
}

/** A batch big enough (about 1 MB) that it cannot fit in the pages a database already has. */
function bigBatch(date: string): string {
  const rows = Array.from({ length: 2_500 }, (_, i) => ({
    date,
    shift: "A",
    line: i % 2 ? "L1" : "L2",
    category: ["scratch", "dent", "crack"][i % 3],
    count: i % 7,
    note: `row ${i} `.padEnd(380, "x"),
  }));
  return JSON.stringify({ rows });
}

function rowCounts() {
  return {
    submissions: count("SELECT COUNT(*) AS n FROM Submission"),
    tallies: count("SELECT COUNT(*) AS n FROM TallyEntry"),
    units: count("SELECT COUNT(*) AS n FROM InspectionCount"),
    imports: count("SELECT COUNT(*) AS n FROM ImportBatch"),
    audit: count("SELECT COUNT(*) AS n FROM AuditEvent"),
  };
}

async function expect503(response: Response, code: string, message: RegExp): Promise<void> {
  expect(response.status).toBe(503);
  expect(Number(response.headers.get("retry-after"))).toBeGreaterThan(0);
  const body = (await response.json()) as { error: string; code: string };
  expect(body.code).toBe(code);
  expect(body.error).toMatch(message);
  expect(body.error).toMatch(/Nothing was stored/);
  // No SQLite jargon in what the user reads.
  expect(body.error).not.toMatch(/SQLITE|sqlite|disk I\/O|constraint/);
}

/** Both connections of the app (Prisma and raw) limited to `pages` pages, as a full disk would. */
async function limitPages(pages: number): Promise<void> {
  rawDb().pragma(`max_page_count = ${pages}`);
  await db().$queryRawUnsafe(`PRAGMA max_page_count = ${pages}`);
}

describe("the database is full", () => {
  it("answers 503 'The database is full', stores no row of the batch, and takes the same batch once space is back", async () => {
    const before = rowCounts();
    const pages = rawDb().pragma("page_count", { simple: true }) as number;
    // A few pages of room: the batch gets part-way into its transaction before SQLITE_FULL.
    await limitPages(pages + 8);
    const body = bigBatch("2026-04-01");
    await expect503(await postTallies(request("/api/v1/tallies", body, "full-disk-batch-1")), "database-full", /The database is full/);
    expect(rowCounts()).toEqual(before);

    // A CSV import through the upload route: all or nothing as well.
    const csv = ["date,shift,line,category,count,note", ...Array.from({ length: 3_000 }, (_, i) => `2026-04-02,A,L1,dent,${i % 5},${"n".repeat(300)}`)].join("\n");
    const preview = await postImport(upload("/api/v1/imports?dryRun=1", csv));
    expect(preview.status).toBe(200);
    const { contentHash } = (await preview.json()) as { contentHash: string };
    await expect503(
      await postImport(upload(`/api/v1/imports?expect=${contentHash}`, csv)),
      "database-full",
      /The database is full/,
    );
    expect(rowCounts()).toEqual(before);

    // Space is freed: the same requests are taken, each once.
    await limitPages(1_073_741_823);
    expect((await postTallies(request("/api/v1/tallies", body, "full-disk-batch-1"))).status).toBe(201);
    expect((await postTallies(request("/api/v1/tallies", body, "full-disk-batch-1"))).status).toBe(200);
    expect((await postImport(upload(`/api/v1/imports?expect=${contentHash}`, csv))).status).toBe(201);
    expect(rowCounts()).toMatchObject({ submissions: before.submissions + 1, tallies: before.tallies + 2_500 + 3_000, imports: before.imports + 1 });
    expect((rawDb().pragma("integrity_check") as { integrity_check: string }[])[0].integrity_check).toBe("ok");
  });
});

describe("the database is read-only", () => {
  it("answers 503 'read-only' to writes, keeps reads working (a token's first use too), and writes again once writable", async () => {
    const fresh = await createApiToken("fresh reader", ["analysis:read"], plant.users.admin.userId!);
    const before = rowCounts();
    process.env.LINEMIX_DB_READONLY = "1";
    await closeDb();
    try {
      const units = JSON.stringify({ rows: [{ date: "2026-04-03", shift: "A", line: "L1", units: 800 }] });
      await expect503(await postInspections(request("/api/v1/inspections", units, "read-only-units-1")), "database-read-only", /read-only/);
      const tallies = JSON.stringify({ rows: [{ date: "2026-04-03", shift: "A", line: "L1", category: "dent", count: 4 }] });
      await expect503(await postTallies(request("/api/v1/tallies", tallies, "read-only-tallies-1")), "database-read-only", /read-only/);
      // Reads work, even for a token whose last-use time cannot be written.
      const read = await getTallies(
        new Request(`${BASE}/api/v1/tallies?from=2026-04-01&to=2026-04-03`, { headers: { authorization: `Bearer ${fresh.token}` } }),
      );
      expect(read.status).toBe(200);
      expect(((await read.json()) as { rows: unknown[] }).rows.length).toBeGreaterThan(0);
      expect(rowCounts()).toEqual(before);
    } finally {
      delete process.env.LINEMIX_DB_READONLY;
      await closeDb();
    }
    const units = JSON.stringify({ rows: [{ date: "2026-04-03", shift: "A", line: "L1", units: 800 }] });
    expect((await postInspections(request("/api/v1/inspections", units, "read-only-units-1"))).status).toBe(201);
    expect(rowCounts()).toMatchObject({ submissions: before.submissions + 1, units: before.units + 1 });
  });
});

describe("the database is locked by another connection", () => {
  it("answers 503 'busy, try again' after the busy timeout, stores nothing, and takes the batch once the lock is released", async () => {
    const before = rowCounts();
    const locker = new Database(ctx.url.slice("file:".length));
    locker.exec("BEGIN EXCLUSIVE");
    const t0 = Date.now();
    try {
      const tallies = JSON.stringify({ rows: [{ date: "2026-04-04", shift: "B", line: "L2", category: "crack", count: 2 }] });
      await expect503(await postTallies(request("/api/v1/tallies", tallies, "locked-batch-1")), "database-busy", /busy.*try again/);
      expect(Date.now() - t0).toBeGreaterThanOrEqual(4_500);
    } finally {
      locker.exec("ROLLBACK");
      locker.close();
    }
    expect(rowCounts()).toEqual(before);
    const tallies = JSON.stringify({ rows: [{ date: "2026-04-04", shift: "B", line: "L2", category: "crack", count: 2 }] });
    expect((await postTallies(request("/api/v1/tallies", tallies, "locked-batch-1"))).status).toBe(201);
    expect(rowCounts()).toMatchObject({ submissions: before.submissions + 1, tallies: before.tallies + 1 });
  }, 20_000);
});

describe("databaseTrouble", () => {
  it("reads the SQLite code from better-sqlite3 and from Prisma's wrapped errors, and ignores everything else", () => {
    expect(databaseTrouble(Object.assign(new Error("database or disk is full"), { code: "SQLITE_FULL" }))?.kind).toBe("full");
    expect(databaseTrouble({ code: "SQLITE_READONLY_DBMOVED", message: "x" })?.kind).toBe("read-only");
    expect(databaseTrouble({ code: "SQLITE_BUSY_SNAPSHOT", message: "x" })?.kind).toBe("busy");
    expect(databaseTrouble({ code: "SQLITE_IOERR_WRITE", message: "x" })?.kind).toBe("io");
    expect(databaseTrouble({ code: "SQLITE_CORRUPT", message: "x" })?.kind).toBe("corrupt");
    const prismaFull = { code: "P2039", meta: { driverAdapterError: { name: "DriverAdapterError", cause: { originalCode: "SQLITE_FULL", kind: "sqlite" } } } };
    expect(databaseTrouble(prismaFull)?.kind).toBe("full");
    const prismaBusy = { code: "P1008", meta: { driverAdapterError: { cause: { kind: "SocketTimeout" } } } };
    expect(databaseTrouble(prismaBusy)?.kind).toBe("busy");
    expect(databaseTrouble({ code: "SQLITE_CONSTRAINT_UNIQUE", message: "x" })).toBeNull();
    expect(databaseTrouble(new TypeError("x is undefined"))).toBeNull();
    expect(databaseTrouble(null)).toBeNull();
    expect(databaseTrouble("SQLITE_FULL")).toBeNull();
  });
});
