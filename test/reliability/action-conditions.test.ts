import Database from "better-sqlite3";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

/**
 * The server actions of setup, admin (users, tokens) and corrections when the database
 * is full, read-only or locked by another connection: the form gets the plain message in
 * its typed result ({ ok: false, status: 503, error }), no row of the refused change is
 * stored, and the same action works once the condition clears. Simulated as in
 * db-conditions.test.ts: max_page_count for full, LINEMIX_DB_READONLY=1 for read-only, a
 * second connection holding BEGIN EXCLUSIVE past the 5 s busy timeout for busy.
 *
 * The actions run as they are, called directly: only Next's request context is stood
 * in for (next/headers gives the session cookie and same-origin headers of the test's
 * request, revalidatePath does nothing). The database is real.
 */

const request = vi.hoisted(() => ({ cookie: "", headers: {} as Record<string, string> }));
vi.mock("next/headers", () => ({
  cookies: async () => ({
    get: (name: string) => (name === "linemix_session" && request.cookie ? { name, value: request.cookie } : undefined),
    set: () => undefined,
    delete: () => undefined,
  }),
  headers: async () => new Headers(request.headers),
}));
vi.mock("next/cache", () => ({ revalidatePath: () => undefined }));

import { createMasterAction, setActiveAction, updateMasterAction } from "@/app/setup/actions";
import { createTokenAction, revokeTokenAction } from "@/app/admin/tokens/actions";
import { createUserAction } from "@/app/admin/users/actions";
import { correctEntryAction } from "@/app/entry/corrections/actions";
import { saveComparisonSettings } from "@/app/comparisons/[code]/settings/actions";
import { signInWithPassword } from "@/app/signin/actions";
import { hashPassword } from "@/lib/auth/password";
import { ensureDefaultComparisons, getComparison } from "@/lib/db/comparisons";
import { IDLE as SETTINGS_IDLE } from "@/lib/review/settings-form";
import { createSession } from "@/lib/auth/sessions";
import { closeDb, db, rawDb } from "@/lib/db/client";
import { correctEntry } from "@/lib/intake/corrections";
import type { ActionResult } from "@/lib/http/action-result";
import { markDatabaseTrouble, troubleFromDigest } from "@/lib/db/errors";
import { useTempDatabase } from "../helpers/temp-db";
import { count, seedPlant, type Plant } from "../intake/fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
let adminToken = "";
let engineerToken = "";
const entryIds: number[] = [];
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
  adminToken = (await createSession(plant.users.admin.userId!, "password")).token;
  engineerToken = (await createSession(plant.users.engineer.userId!, "password")).token;
  const insert = rawDb().prepare(
    "INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, count, source, enteredByName, idempotencyKey) VALUES ('2026-03-02', ?, ?, ?, 1, 'floor', 'seed', ?)",
  );
  for (let i = 0; i < 400; i++) {
    entryIds.push(Number(insert.run(plant.shifts.A, plant.lines.L1, plant.categories.dent, `seed-${String(i).padStart(4, "0")}`).lastInsertRowid));
  }
});
afterAll(async () => {
  delete process.env.LINEMIX_DB_READONLY;
  await ctx.cleanup();
});
beforeEach(() => signedIn(adminToken));

function signedIn(token: string): void {
  request.cookie = token;
  request.headers = { host: "plant.example:3000", origin: "http://plant.example:3000" };
}

function form(fields: Record<string, string | string[]>): FormData {
  const f = new FormData();
  for (const [k, v] of Object.entries(fields)) for (const one of Array.isArray(v) ? v : [v]) f.append(k, one);
  return f;
}

const IDLE = { ok: false, error: "" } as ActionResult<never>;

function rowCounts() {
  return {
    lines: count("SELECT COUNT(*) AS n FROM Line"),
    shifts: count("SELECT COUNT(*) AS n FROM Shift WHERE active = 1"),
    tokens: count("SELECT COUNT(*) AS n FROM ApiToken"),
    users: count("SELECT COUNT(*) AS n FROM User"),
    tallies: count("SELECT COUNT(*) AS n FROM TallyEntry"),
    submissions: count("SELECT COUNT(*) AS n FROM Submission"),
    audit: count("SELECT COUNT(*) AS n FROM AuditEvent"),
  };
}

function expectPlain(result: ActionResult<unknown>, message: RegExp): void {
  expect(result.ok).toBe(false);
  if (result.ok) return;
  expect(result.status).toBe(503);
  expect(result.error).toMatch(message);
  expect(result.error).toMatch(/Nothing was stored/);
  expect(result.error).not.toMatch(/SQLITE|sqlite|Prisma|constraint/);
}

/** Both connections of the app (Prisma and raw) limited to `pages` pages, as a full disk would. */
async function limitPages(pages: number): Promise<void> {
  rawDb().pragma(`max_page_count = ${pages}`);
  await db().$queryRawUnsafe(`PRAGMA max_page_count = ${pages}`);
}

/**
 * A small write may still fit in the free space of pages the file already has. So the
 * file is held at its size and filled with writes of the same shape as the action's
 * (rows appended at the same end of the same tables and indexes) until SQLite answers
 * SQLITE_FULL; the action's own write, sorted after them, then needs a new page too.
 */
async function fillUntilFull(write: (i: number) => unknown | Promise<unknown>): Promise<number> {
  await limitPages(rawDb().pragma("page_count", { simple: true }) as number);
  for (let i = 0; i < 5_000; i++) {
    try {
      await write(i);
    } catch (error) {
      const text = JSON.stringify(error, Object.getOwnPropertyNames(error as object)) + String(error);
      if (/SQLITE_FULL|database or disk is full/.test(text)) return i;
      throw error;
    }
  }
  throw new Error("the database never filled up");
}

const junk = (i: number) => String(i).padStart(4, "0");

describe("server actions when the database is full", () => {
  it("setup: adding a line answers 'The database is full', stores nothing, and works once space is back", async () => {
    const adder = form({ kind: "line", code: "Z-LINE", name: "Line added when full", displayOrder: "9" });
    const filled = await fillUntilFull((i) =>
      createMasterAction(IDLE, form({ kind: "line", code: `J-${junk(i)}`, name: "Line added when full", displayOrder: "9" })).then((r) => {
        if (!r.ok) throw Object.assign(new Error(r.error), { code: r.status === 503 ? "SQLITE_FULL" : "OTHER" });
      }),
    );
    expect(filled).toBeGreaterThan(0);
    const before = rowCounts();
    expectPlain(await createMasterAction(IDLE, adder), /The database is full/);
    expect(rowCounts()).toEqual(before);
    await limitPages(1_073_741_823);
    expect(await createMasterAction(IDLE, adder)).toMatchObject({ ok: true, message: "Added Z-LINE." });
    expect(rowCounts()).toMatchObject({ lines: before.lines + 1, audit: before.audit + 1 });
  });

  it("admin: creating a token answers 'full' with no token and no audit entry left behind", async () => {
    const name = "Z token made when the disk is full";
    await fillUntilFull((i) =>
      createTokenAction(IDLE, form({ name: `J token ${junk(i)} made when the disk is ful`, scopes: "analysis:read" })).then((r) => {
        if (!r.ok) throw Object.assign(new Error(r.error), { code: r.status === 503 ? "SQLITE_FULL" : "OTHER" });
      }),
    );
    const before = rowCounts();
    expectPlain(await createTokenAction(IDLE, form({ name, scopes: "analysis:read" })), /The database is full/);
    expect(rowCounts()).toEqual(before);
    await limitPages(1_073_741_823);
    const made = await createTokenAction(IDLE, form({ name, scopes: "analysis:read" }));
    expect(made.ok && made.data?.secret).toMatch(/^lmx_/);
    expect(rowCounts()).toMatchObject({ tokens: before.tokens + 1, audit: before.audit + 1 });
  });

  it("corrections: a correction answers 'full' and stores neither the new entry nor its submission", async () => {
    signedIn(engineerToken);
    const reason = "recount at the end of the shift ".repeat(15).trim();
    const engineer = plant.users.engineer;
    await fillUntilFull(async (i) => {
      const outcome = await correctEntry(engineer, { idempotencyKey: `fill-${junk(i)}`, kind: "tally", entryId: entryIds[i], value: 2, reason });
      if (outcome.status !== "created") throw new Error(`fill: ${outcome.status}`);
    });
    const target = entryIds[entryIds.length - 1];
    const correction = form({ idempotencyKey: "zz-correction-when-full", kind: "tally", entryId: String(target), value: "3", reason, back: "/entry/corrections?x=1" });
    const before = rowCounts();
    expectPlain(await correctEntryAction(IDLE, correction), /The database is full/);
    expect(rowCounts()).toEqual(before);
    await limitPages(1_073_741_823);
    // Stored: the action sends the browser back to the sheet (Next's redirect throws).
    await expect(correctEntryAction(IDLE, correction)).rejects.toThrow(/NEXT_REDIRECT/);
    expect(rowCounts()).toMatchObject({ tallies: before.tallies + 1, submissions: before.submissions + 1 });
  });
});

describe("server actions when the database is read-only", () => {
  it("answer 'read-only' in the form's result for setup, users, tokens and corrections, and write again once writable", async () => {
    const before = rowCounts();
    process.env.LINEMIX_DB_READONLY = "1";
    await closeDb();
    try {
      expectPlain(await createMasterAction(IDLE, form({ kind: "line", code: "RO1", name: "Read-only line" })), /read-only/);
      expectPlain(await setActiveAction(IDLE, form({ kind: "category", id: String(plant.categories.old), active: "true" })), /read-only/);
      expectPlain(await createTokenAction(IDLE, form({ name: "read-only token", scopes: "analysis:read" })), /read-only/);
      expectPlain(await revokeTokenAction(IDLE, form({ tokenId: "1" })), /read-only/);
      expectPlain(
        await createUserAction(IDLE, form({ username: "ro-user", role: "engineer", password: "a long enough password" })),
        /read-only/,
      );
      signedIn(engineerToken);
      expectPlain(
        await correctEntryAction(IDLE, form({ idempotencyKey: "ro-correction-1", kind: "tally", entryId: String(entryIds[300]), value: "5", reason: "recount" })),
        /read-only/,
      );
      expect(rowCounts()).toEqual(before);

      // A page writing while it renders (the flagged-period sync does) fails with an error
      // whose digest names the condition: what app/error.tsx reads in production.
      const failed = await db()
        .line.create({ data: { code: "RO2", name: "x" } })
        .then(() => null, (e: unknown) => e as { digest?: string });
      expect(failed?.digest).toMatch(/^linemix-db-read-only-[0-9a-f]{8}$/);
      expect(troubleFromDigest(failed?.digest)).toMatchObject({ kind: "read-only", message: expect.stringMatching(/^The database is read-only/) });
    } finally {
      delete process.env.LINEMIX_DB_READONLY;
      await closeDb();
    }
    signedIn(adminToken);
    expect(await createMasterAction(IDLE, form({ kind: "line", code: "RO1", name: "Read-only line" }))).toMatchObject({ ok: true });
    expect(await createUserAction(IDLE, form({ username: "ro-user", role: "engineer", password: "a long enough password" }))).toMatchObject({ ok: true });
  });
});

describe("comparison settings when the database is read-only", () => {
  it("the settings form answers 'read-only' with its own result shape, changes nothing, and saves once writable", async () => {
    await ensureDefaultComparisons();
    signedIn(engineerToken);
    const settings = form({
      code: "lines",
      name: "All lines compared (14 days)",
      windowDays: "14",
      stepDays: "1",
      alpha: "0.05",
      adjust: "bh",
      minEffect: "0",
      sparse: "auto",
      historyWeeks: "8",
      "lines-all": "on",
      "shifts-all": "on",
      "categories-all": "on",
    });
    process.env.LINEMIX_DB_READONLY = "1";
    await closeDb();
    try {
      const refused = await saveComparisonSettings(SETTINGS_IDLE, settings);
      expect(refused).toMatchObject({ status: "error", message: expect.stringMatching(/read-only/) });
      expect((await getComparison("lines"))?.windowDays).toBe(7);
    } finally {
      delete process.env.LINEMIX_DB_READONLY;
      await closeDb();
    }
    expect(await saveComparisonSettings(SETTINGS_IDLE, settings)).toMatchObject({ status: "saved" });
    expect((await getComparison("lines"))?.windowDays).toBe(14);
  });
});

describe("sign-in on a read-only database", () => {
  it("answers the form with the plain message, opens no session, and signs in once writable", async () => {
    await db().user.update({ where: { id: plant.users.engineer.userId! }, data: { passwordHash: await hashPassword("a long test passphrase") } });
    const sessions = () => count("SELECT COUNT(*) AS n FROM Session");
    const before = sessions();
    const fields = { username: "eng", password: "a long test passphrase", next: "/" };
    // A browser without a session (signing in revokes the session its cookie names).
    request.cookie = "";
    process.env.LINEMIX_DB_READONLY = "1";
    await closeDb();
    try {
      const refused = await signInWithPassword({ ok: false, error: "" }, form(fields));
      expect(refused.ok).toBe(false);
      expect(!refused.ok && refused.error).toMatch(/read-only/);
      expect(!refused.ok && refused.error).not.toMatch(/SQLITE|Prisma/);
      expect(sessions()).toBe(before);
    } finally {
      delete process.env.LINEMIX_DB_READONLY;
      await closeDb();
    }
    // Writable again: the same form signs in (Next's redirect is thrown as its digest) and stores one session.
    await expect(signInWithPassword({ ok: false, error: "" }, form(fields))).rejects.toMatchObject({ digest: expect.stringMatching(/^NEXT_REDIRECT/) });
    expect(sessions()).toBe(before + 1);
  });
});

describe("server actions when another connection holds the write lock", () => {
  it("answer 'busy, try again', store nothing, and work once the lock is released", async () => {
    const before = rowCounts();
    const locker = new Database(ctx.url.slice("file:".length));
    locker.exec("BEGIN EXCLUSIVE");
    const t0 = Date.now();
    try {
      // Prisma's transaction begins IMMEDIATE, so it waits out the busy timeout for the lock
      // (lib/db/client.ts), then answers busy; and the next transaction still starts
      // (the adapter's mutex is not left held: the update after the release below).
      expectPlain(await updateMasterAction(IDLE, form({ kind: "line", id: String(plant.lines.L1), name: "Renamed while locked", displayOrder: "0" })), /busy.*try again/);
      expect(Date.now() - t0).toBeGreaterThanOrEqual(4_500);
      signedIn(engineerToken);
      expectPlain(
        await correctEntryAction(IDLE, form({ idempotencyKey: "busy-correction-1", kind: "tally", entryId: String(entryIds[301]), value: "5", reason: "recount" })),
        /busy.*try again/,
      );
    } finally {
      locker.exec("ROLLBACK");
      locker.close();
    }
    expect(rowCounts()).toEqual(before);
    expect(count("SELECT COUNT(*) AS n FROM Line WHERE name = 'Renamed while locked'")).toBe(0);
    signedIn(adminToken);
    expect(await updateMasterAction(IDLE, form({ kind: "line", id: String(plant.lines.L1), name: "Renamed while locked", displayOrder: "0" }))).toMatchObject({ ok: true });
  }, 30_000);
});

describe("setup refuses overlapping shifts", () => {
  it("adding, changing or bringing back a shift that overlaps an active one is refused with a plain message", async () => {
    const before = rowCounts();
    const add = await createMasterAction(IDLE, form({ kind: "shift", code: "X", name: "Extra", startTime: "21:00", endTime: "23:00", displayOrder: "5" }));
    expect(add).toMatchObject({ ok: false, status: 400 });
    expect(!add.ok && add.error).toBe(
      "Shift X (21:00–23:00) would overlap shift B (14:00–22:00) from 21:00 to 22:00. Shifts must not overlap: each minute of the day belongs to one shift. Change the clock times, or retire B first.",
    );
    const widen = await updateMasterAction(IDLE, form({ kind: "shift", id: String(plant.shifts.N), name: "Night", startTime: "22:00", endTime: "07:00", displayOrder: "2" }));
    expect(!widen.ok && widen.error).toMatch(/^Shift N \(22:00–07:00\) would overlap shift A \(06:00–14:00\) from 06:00 to 07:00\./);
    expect(rowCounts()).toEqual(before);

    // Meeting end to start is fine; a retired shift does not count, until it comes back.
    expect(await updateMasterAction(IDLE, form({ kind: "shift", id: String(plant.shifts.N), name: "Night", startTime: "22:00", endTime: "06:00", displayOrder: "2" }))).toMatchObject({ ok: true });
    expect(await setActiveAction(IDLE, form({ kind: "shift", id: String(plant.shifts.B), active: "false" }))).toMatchObject({ ok: true });
    expect(await createMasterAction(IDLE, form({ kind: "shift", code: "X", name: "Extra", startTime: "14:00", endTime: "20:00", displayOrder: "5" }))).toMatchObject({ ok: true });
    const back = await setActiveAction(IDLE, form({ kind: "shift", id: String(plant.shifts.B), active: "true" }));
    expect(!back.ok && back.error).toMatch(/^Shift B \(14:00–22:00\) would overlap shift X \(14:00–20:00\) from 14:00 to 20:00\./);
    expect(count("SELECT active AS n FROM Shift WHERE id = ?", plant.shifts.B)).toBe(0);
  });

  it("two admins adding overlapping shifts at the same moment: one is added, the other refused (the check is inside the write)", async () => {
    // Free 20:00–22:00 for the race: X (14:00–20:00) and B (retired) from the test above.
    const before = count("SELECT COUNT(*) AS n FROM Shift WHERE active = 1");
    const [first, second] = await Promise.all([
      createMasterAction(IDLE, form({ kind: "shift", code: "Y1", name: "Late extra", startTime: "20:00", endTime: "21:30", displayOrder: "6" })),
      createMasterAction(IDLE, form({ kind: "shift", code: "Y2", name: "Late extra", startTime: "20:30", endTime: "22:00", displayOrder: "7" })),
    ]);
    expect([first.ok, second.ok].sort()).toEqual([false, true]);
    const refused = first.ok ? second : first;
    expect(!refused.ok && refused).toMatchObject({ status: 400, fieldErrors: { startTime: "Check the clock times." } });
    expect(!refused.ok && refused.error).toMatch(/^Shift Y[12] \(\d\d:\d\d–\d\d:\d\d\) would overlap shift Y[12] .* from 20:30 to 21:30\./);
    expect(count("SELECT COUNT(*) AS n FROM Shift WHERE active = 1")).toBe(before + 1);
    expect(count("SELECT COUNT(*) AS n FROM AuditEvent WHERE action = 'shift.create' AND entityId IN (SELECT CAST(id AS TEXT) FROM Shift WHERE code IN ('Y1', 'Y2'))")).toBe(1);
  });
});

describe("digests for the error page", () => {
  it("name the condition of a database error, leave other errors and digests alone, and read back", () => {
    expect(markDatabaseTrouble({ code: "SQLITE_FULL" } as { code: string; digest?: string }).digest).toMatch(/^linemix-db-full-[0-9a-f]{8}$/);
    const prismaBusy = { code: "P1008", meta: { driverAdapterError: { cause: { kind: "SocketTimeout" } } } } as { digest?: string };
    expect(troubleFromDigest(markDatabaseTrouble(prismaBusy).digest)?.kind).toBe("busy");
    expect((markDatabaseTrouble(new TypeError("x is undefined")) as { digest?: string }).digest).toBeUndefined();
    // Next's own digests (redirects, not-found) are never replaced.
    expect(markDatabaseTrouble({ code: "SQLITE_FULL", digest: "NEXT_REDIRECT;push;/x;307;" }).digest).toBe("NEXT_REDIRECT;push;/x;307;");
    expect(troubleFromDigest("linemix-db-read-only-0a1b2c3d")).toMatchObject({ kind: "read-only", reference: "0a1b2c3d" });
    expect(troubleFromDigest("linemix-db-nonsense-0a1b2c3d")).toBeNull();
    expect(troubleFromDigest("2481116385")).toBeNull();
    expect(troubleFromDigest(undefined)).toBeNull();
  });
});
