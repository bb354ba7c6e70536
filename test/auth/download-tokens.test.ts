import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import { NextRequest } from "next/server";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { GET as getEpisodeExport } from "@/app/episodes/[id]/export/[format]/route";
import { GET as getListExport } from "@/app/episodes/export/[format]/route";
import { createApiToken, revokeApiToken } from "@/lib/auth/api-tokens";
import { TOKEN_ROUTE_PATTERNS, acceptsBearerToken } from "@/lib/auth/constants";
import { db } from "@/lib/db/client";
import { liveSource } from "@/lib/episodes/live-source";
import { syncComparison } from "@/lib/episodes/sync";
import { proxy } from "@/proxy";
import { useTempDatabase } from "../helpers/temp-db";
import { seedMasterData, seedTallies, seedUsers } from "../episodes/helpers";

/**
 * A script holding an API token downloads a flagged period's export: proxy.ts lets a
 * bearer request through to the download routes only (not to pages), and the route
 * handlers themselves check the token and its scope (analysis:read).
 */

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let id = 0;
let reader = "";
let writer = "";
let revoked = "";
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  const users = seedUsers();
  seedTallies(0, 50);
  id = (await syncComparison(liveSource, "lines")).created[0];
  reader = (await createApiToken("report job", ["analysis:read"], users.admin.id)).token;
  writer = (await createApiToken("line gateway", ["tallies:write"], users.admin.id)).token;
  const gone = await createApiToken("old job", ["analysis:read"], users.admin.id);
  await revokeApiToken(gone.id);
  revoked = gone.token;
});
afterAll(async () => ctx.cleanup());

const BASE = "http://plant.example:3000";
const get = (p: string, token?: string) => new Request(`${BASE}${p}`, { headers: token ? { authorization: `Bearer ${token}` } : {} });
const params = <T>(value: T) => ({ params: Promise.resolve(value) });

describe("the download route handlers with an API token", () => {
  it("serve each format of one flagged period to an analysis:read token, recorded under the token's name", async () => {
    for (const format of ["csv", "json", "pdf"] as const) {
      const r = await getEpisodeExport(get(`/episodes/${id}/export/${format}`, reader), params({ id: String(id), format }));
      expect(r.status, format).toBe(200);
      expect(r.headers.get("content-disposition")).toBe(`attachment; filename="linemix-episode-${id}.${format}"`);
      await r.arrayBuffer();
    }
    const json = await getEpisodeExport(get(`/episodes/${id}/export/json`, reader), params({ id: String(id), format: "json" }));
    expect(((await json.json()) as { exportedBy: string }).exportedBy).toBe("API token “report job”");
    const events = await db().auditEvent.findMany({ where: { action: { startsWith: "export.episodes." } } });
    expect(events.length).toBe(4);
    expect(events.every((e) => e.actorId === null && e.actorName === "API token “report job”")).toBe(true);
  });

  it("serve the filtered list to the same token", async () => {
    const r = await getListExport(get("/episodes/export/csv?status=open", reader), params({ format: "csv" }));
    expect(r.status).toBe(200);
    expect((await r.text()).split("\r\n")[0]).toMatch(/^episode_id,/);
  });

  it("refuse a token without analysis:read (403), a revoked one (401) and a malformed header (401)", async () => {
    const byWriter = await getEpisodeExport(get(`/episodes/${id}/export/csv`, writer), params({ id: String(id), format: "csv" }));
    expect(byWriter.status).toBe(403);
    expect(((await byWriter.json()) as { error: string }).error).toBe("This token lacks the scope analysis:read.");
    expect((await getListExport(get("/episodes/export/json", writer), params({ format: "json" }))).status).toBe(403);
    expect((await getEpisodeExport(get(`/episodes/${id}/export/csv`, revoked), params({ id: String(id), format: "csv" }))).status).toBe(401);
    const malformed = new Request(`${BASE}/episodes/${id}/export/csv`, { headers: { authorization: "Token abc" } });
    expect((await getEpisodeExport(malformed, params({ id: String(id), format: "csv" }))).status).toBe(401);
    expect((await getEpisodeExport(get(`/episodes/${id}/export/csv`), params({ id: String(id), format: "csv" }))).status).toBe(401);
  });
});

function proxied(p: string, headers: Record<string, string> = {}, method = "GET") {
  return proxy(new NextRequest(`${BASE}${p}`, { headers, method }));
}

describe("proxy.ts and bearer tokens", () => {
  it("lets a bearer request through to the download routes instead of sending it to /signin", () => {
    for (const p of [`/episodes/${id}/export/csv`, "/episodes/12/export/pdf", "/episodes/export/json"]) {
      const r = proxied(p, { authorization: "Bearer lmx_anything" });
      expect(r.status, p).toBe(200);
      expect(r.headers.get("x-middleware-next")).toBe("1");
    }
  });

  it("still redirects pages, and downloads without a token or cookie, to /signin", () => {
    for (const p of ["/episodes", `/episodes/${id}`, "/admin/users", "/", "/episodes/12/export", "/episodes/12/export/csv/x"]) {
      const r = proxied(p, { authorization: "Bearer lmx_anything" });
      expect(r.status, p).toBe(307);
      expect(r.headers.get("location")).toMatch(/\/signin/);
    }
    expect(proxied("/episodes/12/export/csv").status).toBe(307);
    expect(proxied("/episodes/12/export/csv", { authorization: "Basic dXNlcjpwYXNz" }).status).toBe(307);
  });

  it("lists only paths whose route handler checks the token itself", () => {
    // Every route.ts outside app/api whose path the patterns accept must authenticate the
    // request (through the download helpers, which call authenticateApi).
    const routes: string[] = [];
    const walk = (dir: string) => {
      for (const name of readdirSync(dir)) {
        const full = path.join(dir, name);
        if (statSync(full).isDirectory()) walk(full);
        else if (name === "route.ts") routes.push(full);
      }
    };
    walk(path.resolve("app"));
    const urlOf = (file: string) =>
      "/" + path.relative(path.resolve("app"), path.dirname(file)).split(path.sep).map((s) => s.replace(/^\[.+\]$/, "1")).join("/");
    const accepted = routes.filter((f) => !urlOf(f).startsWith("/api/") && acceptsBearerToken(urlOf(f)));
    expect(accepted.map(urlOf).sort()).toEqual(["/episodes/1/export/1", "/episodes/export/1"]);
    for (const file of accepted) expect(readFileSync(file, "utf8")).toMatch(/downloadEpisode(List)?\(request/);
    const helpers = readFileSync(path.resolve("lib/episodes/download.ts"), "utf8");
    expect(helpers.match(/authenticateApi\(request, "analysis:read"\)/g)).toHaveLength(2);
    expect(TOKEN_ROUTE_PATTERNS.length).toBe(2);
  });
});
