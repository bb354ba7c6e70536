import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { POST } from "@/app/api/v1/imports/route";
import { rawDb } from "@/lib/db/client";
import { createSession } from "@/lib/auth/sessions";
import { useTempDatabase } from "../helpers/temp-db";
import { cellTotal, count, seedPlant, type Plant } from "./fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
const cookies: Record<string, string> = {};
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
  for (const [name, user, kind] of [
    ["operator", plant.users.operator, "password"],
    ["badge", plant.users.operator, "badge"],
    ["engineer", plant.users.engineer, "password"],
    ["admin", plant.users.admin, "password"],
  ] as const) {
    cookies[name] = (await createSession(user.userId!, kind)).token;
  }
});
afterAll(async () => ctx.cleanup());

const HOST = "plant.example:3000";
function upload(query: string, body: string, who: string): Request {
  return new Request(`http://${HOST}/api/v1/imports?${query}`, {
    method: "POST",
    headers: { host: HOST, origin: `http://${HOST}`, cookie: `linemix_session=${cookies[who]}`, "content-type": "text/csv", "x-file-name": "week%2010.csv" },
    body,
  });
}

const FILE = "date,shift,line,category,count\n2026-03-02,A,L1,scratch,2\n2026-03-02,A,L2,dent,1\n";

describe("POST /api/v1/imports (the import page's upload)", () => {
  it("is refused for operators and badge sessions, and creating codes needs an admin", async () => {
    expect((await POST(upload("dryRun=1", FILE, "operator"))).status).toBe(403);
    expect((await POST(upload("dryRun=1", FILE, "badge"))).status).toBe(403);
    expect((await POST(upload("dryRun=1&addMissing=1", FILE, "engineer"))).status).toBe(403);
    expect((await POST(upload("dryRun=1&addMissing=1", FILE, "admin"))).status).toBe(200);
    // Machines send rows to /api/v1/tallies; a token (either scope) cannot import files.
    for (const token of [plant.tokens.write, plant.tokens.read, plant.tokens.both]) {
      const r = await POST(new Request(`http://${HOST}/api/v1/imports?dryRun=1`, { method: "POST", headers: { authorization: `Bearer ${token}` }, body: FILE }));
      expect(r.status).toBe(403);
    }
  });

  it("previews without writing, imports only the previewed bytes, then refuses the same file", async () => {
    const preview = await POST(upload("dryRun=1", FILE, "engineer"));
    expect(preview.status).toBe(200);
    const p = await preview.json();
    expect(p).toMatchObject({ status: "checked", kind: "tallies", rows: 2, fileName: "week 10.csv", summary: { total: 3 } });
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);

    const changed = await POST(upload(`expect=${p.contentHash}`, FILE.replace(",2\n", ",20\n"), "engineer"));
    expect(changed.status).toBe(422);
    expect((await changed.json()).problems).toEqual(["the file changed since it was checked; check it again before importing"]);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);

    const imported = await POST(upload(`expect=${p.contentHash}`, FILE, "engineer"));
    expect(imported.status).toBe(201);
    expect((await imported.json()).status).toBe("imported");
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(2);
    expect(rawName()).toBe("week 10.csv");

    const again = await POST(upload("dryRun=1", FILE, "engineer"));
    expect(again.status).toBe(422);
    expect((await again.json()).problems[0]).toMatch(/already imported/);
  });

  it("answers a bad file with every problem as 'line N: …'", async () => {
    const response = await POST(upload("dryRun=1", "date,shift,line,category,count\n2026-02-30,A,L1,scratch,1\n2026-03-02,A,L1,scratch,x\n", "engineer"));
    expect(response.status).toBe(422);
    expect((await response.json()).problems).toEqual(['line 2: date "2026-02-30" is not a real calendar date', 'line 3: count "x" is not a number']);
  });
});

function rawName(): string {
  return (rawDb().prepare("SELECT fileName FROM ImportBatch ORDER BY id DESC LIMIT 1").get() as { fileName: string }).fileName;
}
