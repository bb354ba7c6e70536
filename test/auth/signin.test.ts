import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { db } from "@/lib/db/client";
import { validateSessionToken } from "@/lib/auth/sessions";
import { PIN_ATTEMPTS, WRONG_PASSWORD, badgeSignIn, passwordSignIn } from "@/lib/auth/signin";
import { recordPasswordFailure, resetThrottles } from "@/lib/auth/throttle";
import { createUser, setActive, setBadge } from "@/lib/auth/users";
import { useTempDatabase } from "../helpers/temp-db";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
const cli = { id: null, name: "test" };
let operatorId: number;

beforeAll(async () => {
  ctx = await useTempDatabase();
  const eng = await createUser(cli, { username: "Engineer", role: "engineer", password: "engineer-password" });
  const op = await createUser(cli, { username: "op", role: "operator", password: "operator-password" });
  const admin = await createUser(cli, { username: "boss", role: "admin", password: "admin-password-1" });
  if (!eng.ok || !op.ok || !admin.ok) throw new Error("setup");
  operatorId = op.userId;
  await setBadge(cli, operatorId, "1001", "2468");
});
afterAll(async () => ctx.cleanup());
beforeEach(() => resetThrottles());

describe("password sign-in", () => {
  it("signs in (names are case-insensitive) with a new session each time", async () => {
    const a = await passwordSignIn({ username: " ENGINEER ", password: "engineer-password", ip: "10.0.0.1" });
    const b = await passwordSignIn({ username: "engineer", password: "engineer-password", ip: "10.0.0.1" });
    expect(a.ok && b.ok).toBe(true);
    if (!a.ok || !b.ok) return;
    expect(a.token).not.toBe(b.token);
    expect(await validateSessionToken(a.token)).toMatchObject({ username: "engineer", sessionKind: "password" });
    expect(await db().auditEvent.count({ where: { action: "auth.signin" } })).toBeGreaterThanOrEqual(2);
  });

  it("gives one generic message for a wrong name, a wrong password and an inactive account", async () => {
    const wrongName = await passwordSignIn({ username: "nobody", password: "engineer-password", ip: "10.0.0.2" });
    const wrongPassword = await passwordSignIn({ username: "engineer", password: "guess-guess-guess", ip: "10.0.0.2" });
    const gone = await createUser(cli, { username: "gone", role: "engineer", password: "gone-password-1" });
    if (!gone.ok) throw new Error(gone.error);
    await setActive({ id: null, name: "test" }, gone.userId, false);
    const inactive = await passwordSignIn({ username: "gone", password: "gone-password-1", ip: "10.0.0.2" });
    for (const r of [wrongName, wrongPassword, inactive]) expect(r).toEqual({ ok: false, error: WRONG_PASSWORD });
  });

  it("throttles after 5 failures per name and address, even for the right password, but not from another address", async () => {
    for (let i = 0; i < 5; i++) {
      expect(await passwordSignIn({ username: "engineer", password: `wrong-${i}-password`, ip: "10.0.0.3" })).toEqual({ ok: false, error: WRONG_PASSWORD });
    }
    const blocked = await passwordSignIn({ username: "engineer", password: "engineer-password", ip: "10.0.0.3" });
    expect(blocked.ok).toBe(false);
    if (!blocked.ok) expect(blocked.error).toMatch(/Too many failed sign-ins\. Try again in 1[45] minutes\./);
    const elsewhere = await passwordSignIn({ username: "engineer", password: "engineer-password", ip: "10.0.0.4" });
    expect(elsewhere.ok).toBe(true);
  });

  it("throttles one address trying many names", async () => {
    // 29 failures counted directly (each real attempt costs a full scrypt), the 30th through sign-in.
    for (let i = 0; i < 29; i++) await recordPasswordFailure(`user${i}`, "10.0.0.5");
    expect(await passwordSignIn({ username: "user29", password: "whatever-password", ip: "10.0.0.5" })).toEqual({ ok: false, error: WRONG_PASSWORD });
    const r = await passwordSignIn({ username: "engineer", password: "engineer-password", ip: "10.0.0.5" });
    expect(r.ok).toBe(false);
  });
});

describe("badge sign-in", () => {
  it("opens a badge session for the right PIN", async () => {
    const r = await badgeSignIn({ badge: "1001", pin: "2468", ip: "10.0.1.1" });
    expect(r.ok).toBe(true);
    if (r.ok) expect(await validateSessionToken(r.token)).toMatchObject({ username: "op", sessionKind: "badge" });
  });

  it("locks the badge after five wrong PINs, then refuses even the right PIN until the lock ends", async () => {
    const t0 = new Date();
    for (let i = 1; i <= PIN_ATTEMPTS; i++) {
      const r = await badgeSignIn({ badge: "1001", pin: "0000", ip: "10.0.1.2" }, t0);
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error).toMatch(i < PIN_ATTEMPTS ? /do not match/ : /locked for 15 minutes/);
    }
    const user = await db().user.findUniqueOrThrow({ where: { id: operatorId } });
    expect(user.pinLockedUntil!.getTime() - t0.getTime()).toBe(15 * 60_000);
    const right = await badgeSignIn({ badge: "1001", pin: "2468", ip: "10.0.1.2" }, new Date(t0.getTime() + 60_000));
    expect(right.ok).toBe(false);
    if (!right.ok) expect(right.error).toMatch(/locked/);
    expect(await db().auditEvent.count({ where: { action: "auth.badge-locked", entityId: String(operatorId) } })).toBe(1);
    const later = await badgeSignIn({ badge: "1001", pin: "2468", ip: "10.0.1.2" }, new Date(t0.getTime() + 16 * 60_000));
    expect(later.ok).toBe(true);
    expect((await db().user.findUniqueOrThrow({ where: { id: operatorId } })).failedPins).toBe(0);
  });

  it("refuses an unknown badge with the generic message", async () => {
    const r = await badgeSignIn({ badge: "9999", pin: "2468", ip: "10.0.1.3" });
    expect(r).toEqual({ ok: false, error: "That badge and PIN do not match an active badge." });
  });
});
