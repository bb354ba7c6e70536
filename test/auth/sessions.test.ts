import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "@/lib/db/client";
import { AuthError, authenticateRequest, checkActionUser } from "@/lib/auth/access";
import { createApiToken, revokeApiToken } from "@/lib/auth/api-tokens";
import { SESSION_COOKIE, createSession, revokeSessionToken, revokeUserSessions, validateSessionToken } from "@/lib/auth/sessions";
import { sha256 } from "@/lib/auth/tokens-crypto";
import { useTempDatabase } from "../helpers/temp-db";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let operatorId: number;
let engineerId: number;
let adminId: number;

beforeAll(async () => {
  ctx = await useTempDatabase();
  const mk = (username: string, role: string) =>
    db().user.create({ data: { username, displayName: username, role } }).then((u) => u.id);
  operatorId = await mk("op", "operator");
  engineerId = await mk("eng", "engineer");
  adminId = await mk("adm", "admin");
});
afterAll(async () => ctx.cleanup());

const sameSite = (extra: Record<string, string> = {}) =>
  new Headers({ host: "plant.example:3000", origin: "http://plant.example:3000", ...extra });

describe("sessions", () => {
  it("stores only the SHA-256 of a 256-bit token", async () => {
    const { token } = await createSession(engineerId, "password");
    expect(Buffer.from(token, "base64url")).toHaveLength(32);
    const rows = await db().session.findMany({ where: { userId: engineerId } });
    expect(rows.some((r) => r.tokenHash === sha256(token))).toBe(true);
    expect(rows.some((r) => r.tokenHash === token)).toBe(false);
    const user = await validateSessionToken(token);
    expect(user).toMatchObject({ username: "eng", role: "engineer", sessionKind: "password" });
  });

  it("refuses an unknown, revoked, idle or absolutely expired session", async () => {
    expect(await validateSessionToken("nope")).toBeNull();
    expect(await validateSessionToken(undefined)).toBeNull();

    const t0 = new Date("2026-03-02T06:00:00Z");
    const a = await createSession(engineerId, "password", t0);
    expect(await validateSessionToken(a.token, new Date(t0.getTime() + 7 * 3600_000))).not.toBeNull();
    // 8 h idle since the last touch (7 h) is still fine at 14 h, gone at 15 h + 1 min.
    expect(await validateSessionToken(a.token, new Date(t0.getTime() + 14 * 3600_000))).not.toBeNull();
    expect(await validateSessionToken(a.token, new Date(t0.getTime() + 22 * 3600_000 + 60_000))).toBeNull();

    const b = await createSession(engineerId, "password", t0);
    // Kept alive every 6 h, it still ends at the 7-day absolute expiry.
    for (let h = 6; h < 7 * 24; h += 6) expect(await validateSessionToken(b.token, new Date(t0.getTime() + h * 3600_000))).not.toBeNull();
    expect(await validateSessionToken(b.token, new Date(t0.getTime() + 7 * 24 * 3600_000))).toBeNull();

    const c = await createSession(engineerId, "password");
    await revokeSessionToken(c.token);
    expect(await validateSessionToken(c.token)).toBeNull();
  });

  it("ends a badge session after the configured idle time", async () => {
    const t0 = new Date("2026-03-02T06:00:00Z");
    const s = await createSession(operatorId, "badge", t0);
    expect(await validateSessionToken(s.token, new Date(t0.getTime() + 14 * 60_000))).toMatchObject({ sessionKind: "badge" });
    expect(await validateSessionToken(s.token, new Date(t0.getTime() + 29 * 60_000))).toBeNull();
    process.env.LINEMIX_BADGE_IDLE_MINUTES = "5";
    try {
      const s2 = await createSession(operatorId, "badge", t0);
      expect(await validateSessionToken(s2.token, new Date(t0.getTime() + 6 * 60_000))).toBeNull();
    } finally {
      delete process.env.LINEMIX_BADGE_IDLE_MINUTES;
    }
  });

  it("revokes all sessions of a user and refuses an inactive user", async () => {
    const a = await createSession(operatorId, "password");
    const b = await createSession(operatorId, "badge");
    expect(await revokeUserSessions(operatorId)).toBeGreaterThanOrEqual(2);
    expect(await validateSessionToken(a.token)).toBeNull();
    expect(await validateSessionToken(b.token)).toBeNull();

    const u = await db().user.create({ data: { username: "gone", displayName: "Gone", role: "engineer" } });
    const s = await createSession(u.id, "password");
    await db().user.update({ where: { id: u.id }, data: { active: false } });
    expect(await validateSessionToken(s.token)).toBeNull();
  });
});

describe("server-action guard (checkActionUser)", () => {
  it("refuses an operator posting to an engineer or admin action (403) and no session (401)", async () => {
    const op = await createSession(operatorId, "password");
    await expect(checkActionUser(op.token, sameSite(), "engineer")).rejects.toMatchObject({ status: 403 });
    await expect(checkActionUser(op.token, sameSite(), "admin")).rejects.toBeInstanceOf(AuthError);
    await expect(checkActionUser(null, sameSite(), "operator")).rejects.toMatchObject({ status: 401 });
    await expect(checkActionUser(op.token, sameSite(), "operator")).resolves.toMatchObject({ role: "operator" });
  });

  it("lets a badge session through only on floor actions", async () => {
    const badge = await createSession(operatorId, "badge");
    await expect(checkActionUser(badge.token, sameSite(), "operator")).rejects.toMatchObject({ status: 403 });
    await expect(checkActionUser(badge.token, sameSite(), "operator", { floor: true })).resolves.toMatchObject({ sessionKind: "badge" });
  });

  it("admin can do everything below", async () => {
    const adm = await createSession(adminId, "password");
    for (const role of ["operator", "engineer", "admin"] as const) {
      await expect(checkActionUser(adm.token, sameSite(), role)).resolves.toMatchObject({ role: "admin" });
    }
  });

  it("refuses a cross-site form post (Origin ≠ Host) even with a valid admin session", async () => {
    const adm = await createSession(adminId, "password");
    const evil = new Headers({ host: "plant.example:3000", origin: "https://evil.example" });
    await expect(checkActionUser(adm.token, evil, "admin")).rejects.toMatchObject({ status: 403 });
    const noOrigin = new Headers({ host: "plant.example:3000" });
    await expect(checkActionUser(adm.token, noOrigin, "admin")).rejects.toMatchObject({ status: 403 });
    const viaProxy = new Headers({ host: "127.0.0.1:3000", "x-forwarded-host": "plant.example", origin: "https://plant.example" });
    await expect(checkActionUser(adm.token, viaProxy, "admin")).resolves.toMatchObject({ role: "admin" });
  });
});

describe("route-handler guard (authenticateRequest)", () => {
  const url = "http://plant.example:3000/api/x";
  it("answers 401 without credentials", async () => {
    const r = await authenticateRequest(new Request(url), "analysis:read");
    expect(r).toBeInstanceOf(Response);
    expect((r as Response).status).toBe(401);
  });

  it("accepts a token with the scope, 403 without it, 401 once revoked", async () => {
    const { token, id } = await createApiToken("gateway", ["tallies:write"], adminId);
    expect(token.startsWith("lmx_")).toBe(true);
    const auth = { authorization: `Bearer ${token}` };
    const ok = await authenticateRequest(new Request(url, { method: "POST", headers: auth }), "tallies:write");
    expect(ok).toMatchObject({ kind: "token", name: "gateway", scopes: ["tallies:write"] });
    const row = await db().apiToken.findUniqueOrThrow({ where: { id } });
    expect(row.lastUsedAt).not.toBeNull();
    expect(row.tokenHash).toBe(sha256(token));
    const wrongScope = await authenticateRequest(new Request(url, { headers: auth }), "analysis:read");
    expect((wrongScope as Response).status).toBe(403);
    await revokeApiToken(id);
    const revoked = await authenticateRequest(new Request(url, { method: "POST", headers: auth }), "tallies:write");
    expect((revoked as Response).status).toBe(401);
    const bogus = await authenticateRequest(new Request(url, { headers: { authorization: "Bearer lmx_nothing" } }), "tallies:write");
    expect((bogus as Response).status).toBe(401);
  });

  it("maps scopes to session roles: operator writes tallies (badge ok), only engineers read analysis", async () => {
    const op = await createSession(operatorId, "badge");
    const cookie = { cookie: `${SESSION_COOKIE}=${op.token}`, host: "plant.example:3000", origin: "http://plant.example:3000" };
    const write = await authenticateRequest(new Request(url, { method: "POST", headers: cookie }), "tallies:write");
    expect(write).toMatchObject({ kind: "user", role: "operator" });
    const read = await authenticateRequest(new Request(url, { headers: cookie }), "analysis:read");
    expect((read as Response).status).toBe(403);
    const eng = await createSession(engineerId, "password");
    const engRead = await authenticateRequest(new Request(url, { headers: { cookie: `${SESSION_COOKIE}=${eng.token}` } }), "analysis:read");
    expect(engRead).toMatchObject({ role: "engineer" });
  });

  it("refuses a cross-site cookie-authenticated POST", async () => {
    const op = await createSession(operatorId, "password");
    const r = await authenticateRequest(
      new Request(url, { method: "POST", headers: { cookie: `${SESSION_COOKIE}=${op.token}`, host: "plant.example:3000", origin: "https://evil.example" } }),
      "tallies:write",
    );
    expect((r as Response).status).toBe(403);
  });
});
