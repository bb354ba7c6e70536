import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "@/lib/db/client";
import { createSession, validateSessionToken } from "@/lib/auth/sessions";
import { createUser, resetPassword, setActive, setBadge, setRole } from "@/lib/auth/users";
import { seedDemoAccounts } from "@/lib/auth/demo-accounts";
import { rawDb } from "@/lib/db/client";
import { useTempDatabase } from "../helpers/temp-db";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
});
afterAll(async () => ctx.cleanup());

describe("demo accounts", () => {
  it("are made only when there are no users, and printed with a warning", async () => {
    const lines = await seedDemoAccounts(rawDb());
    expect(lines.join("\n")).toContain("demo only: change or remove before real use");
    expect(lines.join("\n")).toContain("admin / demo-admin-pass");
    expect(lines.join("\n")).toContain("1001 / PIN 2468");
    const users = await db().user.findMany({ orderBy: { username: "asc" } });
    expect(users.map((u) => [u.username, u.role])).toEqual([
      ["admin", "admin"],
      ["engineer", "engineer"],
      ["operator", "operator"],
    ]);
    expect(users.find((u) => u.username === "operator")!.badgeNumber).toBe("1001");
    await seedDemoAccounts(rawDb());
    expect(await db().user.count()).toBe(3);
  });
});

describe("account administration", () => {
  const actor = { id: null, name: "test-admin" };

  it("a role change ends the user's sessions and is audited with before/after", async () => {
    const u = await createUser(actor, { username: "riley", role: "engineer", password: "riley-password" });
    if (!u.ok) throw new Error(u.error);
    const s = await createSession(u.userId, "password");
    const r = await setRole(actor, u.userId, "operator", "moved to the floor");
    expect(r.ok).toBe(true);
    expect(await validateSessionToken(s.token)).toBeNull();
    const event = await db().auditEvent.findFirstOrThrow({ where: { action: "user.role", entityId: String(u.userId) } });
    expect(JSON.parse(event.before!)).toEqual({ role: "engineer" });
    expect(JSON.parse(event.after!)).toEqual({ role: "operator" });
    expect(event.reason).toBe("moved to the floor");
    expect(event.actorName).toBe("test-admin");
  });

  it("deactivation and password reset end sessions; the audit never holds a hash", async () => {
    const u = await createUser(actor, { username: "sam", role: "engineer", password: "sam-password-1" });
    if (!u.ok) throw new Error(u.error);
    const s1 = await createSession(u.userId, "password");
    await resetPassword(actor, u.userId, "sam-password-2");
    expect(await validateSessionToken(s1.token)).toBeNull();
    const s2 = await createSession(u.userId, "password");
    await setActive(actor, u.userId, false);
    expect(await validateSessionToken(s2.token)).toBeNull();
    const events = await db().auditEvent.findMany({ where: { entityId: String(u.userId) } });
    expect(events.map((e) => e.action)).toEqual(["user.create", "user.password", "user.deactivate"]);
    for (const e of events) expect(`${e.before}${e.after}`).not.toMatch(/scrypt|password-/);
  });

  it("keeps at least one active admin and refuses self-deactivation", async () => {
    const admin = await db().user.findUniqueOrThrow({ where: { username: "admin" } });
    expect((await setRole(actor, admin.id, "engineer")).ok).toBe(false);
    expect((await setActive(actor, admin.id, false)).ok).toBe(false);
    expect((await setActive({ id: admin.id, name: "admin" }, admin.id, false)).ok).toBe(false);
  });

  it("refuses a taken badge, a bad PIN, bad names and short passwords", async () => {
    const u = await createUser(actor, { username: "kim", role: "operator", password: "kim-password-1" });
    if (!u.ok) throw new Error(u.error);
    expect((await setBadge(actor, u.userId, "1001", "1357")).ok).toBe(false);
    expect((await setBadge(actor, u.userId, "2002", "12")).ok).toBe(false);
    expect((await setBadge(actor, u.userId, "2002", "1357")).ok).toBe(true);
    expect((await createUser(actor, { username: "no spaces", role: "operator", password: "long-enough-pw" })).ok).toBe(false);
    expect((await createUser(actor, { username: "KIM", role: "operator", password: "long-enough-pw" })).ok).toBe(false);
    expect((await createUser(actor, { username: "lee", role: "operator", password: "short" })).ok).toBe(false);
  });
});
