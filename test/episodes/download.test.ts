import { parse } from "csv-parse/sync";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createSession, SESSION_COOKIE } from "@/lib/auth/sessions";
import { rawDb } from "@/lib/db/client";
import { db } from "@/lib/db/client";
import { downloadEpisode, downloadEpisodeList } from "@/lib/episodes/download";
import { liveSource } from "@/lib/episodes/live-source";
import { syncComparison } from "@/lib/episodes/sync";
import { useTempDatabase } from "../helpers/temp-db";
import { PLANT, seedMasterData, seedTallies, seedUsers } from "./helpers";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let id = 0;
let engineerCookie = "";
let operatorCookie = "";
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  const users = seedUsers();
  const operator = Number(rawDb().prepare("INSERT INTO User (username, displayName, role) VALUES ('op', 'Otto Operator', 'operator')").run().lastInsertRowid);
  seedTallies(0, 50);
  id = (await syncComparison(liveSource, "lines")).created[0];
  engineerCookie = `${SESSION_COOKIE}=${(await createSession(users.engineer.id, "password")).token}`;
  operatorCookie = `${SESSION_COOKIE}=${(await createSession(operator, "password")).token}`;
});
afterAll(async () => ctx.cleanup());

const get = (path: string, cookie?: string) => new Request(`http://localhost:3000${path}`, { headers: cookie ? { cookie } : {} });

describe("export downloads", () => {
  it("refuses without a session, and to an operator", async () => {
    expect((await downloadEpisode(get(`/episodes/${id}/export/csv`), String(id), "csv")).status).toBe(401);
    expect((await downloadEpisode(get(`/episodes/${id}/export/csv`, operatorCookie), String(id), "csv")).status).toBe(403);
    expect((await downloadEpisodeList(get("/episodes/export/csv"), "csv")).status).toBe(401);
    expect(await db().auditEvent.count({ where: { action: { startsWith: "export." } } })).toBe(0);
  });

  it("answers 404 for an unknown episode or format", async () => {
    expect((await downloadEpisode(get("/episodes/999/export/csv", engineerCookie), "999", "csv")).status).toBe(404);
    expect((await downloadEpisode(get(`/episodes/${id}/export/xls`, engineerCookie), String(id), "xls")).status).toBe(404);
    expect((await downloadEpisodeList(get("/episodes/export/pdf", engineerCookie), "pdf")).status).toBe(404);
  });

  it("serves each format as an attachment and records who exported what", async () => {
    const csv = await downloadEpisode(get(`/episodes/${id}/export/csv`, engineerCookie), String(id), "csv");
    expect(csv.status).toBe(200);
    expect(csv.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    expect(csv.headers.get("content-disposition")).toBe(`attachment; filename="linemix-episode-${id}.csv"`);
    const rows = parse(await csv.text(), { columns: true }) as Record<string, string>[];
    expect(rows.length % (PLANT.lines.length * PLANT.categories.length)).toBe(0);
    expect(rows.every((r) => r.episode_id === String(id))).toBe(true);

    const json = await downloadEpisode(get(`/episodes/${id}/export/json`, engineerCookie), String(id), "json");
    expect(json.headers.get("content-type")).toBe("application/json; charset=utf-8");
    const doc = (await json.json()) as { exportedBy: string; episodes: { id: number }[] };
    expect(doc.exportedBy).toBe("Erin Engineer");
    expect(doc.episodes.map((e) => e.id)).toEqual([id]);

    const pdf = await downloadEpisode(get(`/episodes/${id}/export/pdf`, engineerCookie), String(id), "pdf");
    expect(pdf.headers.get("content-type")).toBe("application/pdf");
    expect(Buffer.from(await pdf.arrayBuffer()).subarray(0, 5).toString("latin1")).toBe("%PDF-");

    const events = await db().auditEvent.findMany({ where: { action: { startsWith: "export.episodes." } }, orderBy: { id: "asc" } });
    expect(events.map((e) => [e.action, e.actorName, e.entity, e.entityId])).toEqual([
      ["export.episodes.csv", "Erin Engineer", "Episode", String(id)],
      ["export.episodes.json", "Erin Engineer", "Episode", String(id)],
      ["export.episodes.pdf", "Erin Engineer", "Episode", String(id)],
    ]);
    expect(events.every((e) => e.actorId !== null && e.at instanceof Date)).toBe(true);
  });

  it("exports the filtered list and records the filter", async () => {
    const none = await downloadEpisodeList(get("/episodes/export/csv?status=explained", engineerCookie), "csv");
    expect((await none.text()).trim().split("\r\n")).toHaveLength(1); // header only
    const open = await downloadEpisodeList(get(`/episodes/export/json?status=open&line=${PLANT.changeLine}`, engineerCookie), "json");
    const doc = (await open.json()) as { filter: Record<string, string>; episodes: { id: number }[] };
    expect(doc.filter).toEqual({ status: "open", line: PLANT.changeLine });
    expect(doc.episodes.map((e) => e.id)).toEqual([id]);
    expect((await downloadEpisodeList(get("/episodes/export/csv?from=yesterday", engineerCookie), "csv")).status).toBe(400);
    const last = await db().auditEvent.findFirst({ where: { action: "export.episodes.json", entity: "Episodes" }, orderBy: { id: "desc" } });
    expect(JSON.parse(last!.after!)).toMatchObject({ format: "json", episodeIds: [id], filter: { status: "open", line: PLANT.changeLine } });
  });
});
