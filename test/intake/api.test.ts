import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { z } from "zod";
import { rawDb } from "@/lib/db/client";
import { GET as getTalliesRoute, POST as postTalliesRoute } from "@/app/api/v1/tallies/route";
import { POST as postInspectionsRoute } from "@/app/api/v1/inspections/route";
import { GET as openApiRoute } from "@/app/api/v1/openapi.json/route";
import { FloorSheetSchema, InspectionBatchSchema, TallyBatchSchema } from "@/lib/intake/schemas";
import { useTempDatabase } from "../helpers/temp-db";
import { cellTotal, count, seedPlant, type Plant } from "./fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
});
afterAll(async () => ctx.cleanup());
beforeEach(() => rawDb().exec("DELETE FROM TallyEntry; DELETE FROM InspectionCount; DELETE FROM Submission;"));

const URL_BASE = "http://plant.example:3000";

function post(path: string, body: unknown, headers: Record<string, string> = {}, token = plant.tokens.write): Request {
  return new Request(`${URL_BASE}${path}`, {
    method: "POST",
    headers: { "content-type": "application/json", authorization: `Bearer ${token}`, ...headers },
    body: typeof body === "string" ? body : JSON.stringify(body),
  });
}

const rows = [
  { date: "2026-03-02", shift: "A", line: "L1", category: "scratch", count: 3 },
  { date: "2026-03-02", shift: "A", line: "L1", category: "dent", count: 1, product: "PX", note: "near gate" },
];

describe("POST /api/v1/tallies", () => {
  it("needs a token with tallies:write", async () => {
    const anonymous = new Request(`${URL_BASE}/api/v1/tallies`, { method: "POST", body: JSON.stringify({ rows }), headers: { "idempotency-key": "k-00000001" } });
    expect((await postTalliesRoute(anonymous)).status).toBe(401);
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows }, { "idempotency-key": "k-00000001" }, plant.tokens.read))).status).toBe(403);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);
  });

  it("stores a batch once: 201, then a replay of the same key and content answers 200 with the original result", async () => {
    const first = await postTalliesRoute(post("/api/v1/tallies", { rows }, { "idempotency-key": "batch-0001" }));
    expect(first.status).toBe(201);
    const a = await first.json();
    expect(a).toMatchObject({ replay: false, stored: { tallies: 2, inspections: 0, corrections: 0 }, totals: { defects: 4 } });
    const again = await postTalliesRoute(post("/api/v1/tallies", { rows }, { "idempotency-key": "batch-0001" }));
    expect(again.status).toBe(200);
    expect(again.headers.get("idempotent-replayed")).toBe("true");
    const b = await again.json();
    expect({ ...b, replay: false }).toEqual(a);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(2);
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(3);
    const stored = rawDb().prepare("SELECT source, enteredByName, note FROM TallyEntry WHERE count = 1").get();
    expect(stored).toEqual({ source: "api", enteredByName: 'API token "gateway"', note: "near gate" });
  });

  it("takes the key from the body too, and treats the same content in another key order as a replay", async () => {
    expect((await postTalliesRoute(post("/api/v1/tallies", { idempotencyKey: "body-key-01", rows }))).status).toBe(201);
    const reordered = { rows: rows.map((r) => Object.fromEntries(Object.entries(r).reverse())), idempotencyKey: "body-key-01" };
    expect((await postTalliesRoute(post("/api/v1/tallies", reordered))).status).toBe(200);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(2);
  });

  it("answers 409 when the key was used with different content, and stores nothing new", async () => {
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows }, { "idempotency-key": "reuse-0001" }))).status).toBe(201);
    const changed = [{ ...rows[0], count: 30 }, rows[1]];
    const response = await postTalliesRoute(post("/api/v1/tallies", { rows: changed }, { "idempotency-key": "reuse-0001" }));
    expect(response.status).toBe(409);
    expect(await response.json()).toMatchObject({ code: "key-reused" });
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(3);
  });

  it("answers 400 with a message per bad row and stores nothing", async () => {
    const bad = [
      rows[0],
      { date: "2026-02-30", shift: "A", line: "L1", category: "scratch", count: 1 },
      { date: "2026-03-02", shift: "A", line: "L1", category: "scratch", count: -2 },
      { date: "2026-03-02", shift: "A", line: "L 1", category: "scratch", count: 1.5 },
    ];
    const response = await postTalliesRoute(post("/api/v1/tallies", { rows: bad }, { "idempotency-key": "bad-rows-01" }));
    expect(response.status).toBe(400);
    const body = await response.json();
    expect(body.messages).toEqual([
      "row 1 date: not a real calendar date",
      "row 2 count: count must not be negative",
      "row 3 line: a code is 1–32 letters, digits, '-', '_' or '.'",
      "row 3 count: count must be a whole number",
    ]);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);
    // The key is not spent by a refused batch: the corrected batch goes through under it.
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows }, { "idempotency-key": "bad-rows-01" }))).status).toBe(201);
  });

  it("answers 400 per row for unknown and retired codes", async () => {
    const response = await postTalliesRoute(
      post("/api/v1/tallies", { rows: [rows[0], { ...rows[0], line: "L9" }, { ...rows[0], category: "old" }] }, { "idempotency-key": "codes-0001" }),
    );
    expect(response.status).toBe(400);
    expect((await response.json()).messages).toEqual(['row 1 line: unknown line "L9"', 'row 2 category: category "old" is retired; new counts cannot be recorded for it']);
  });

  it("refuses a missing or malformed key, bad JSON, unknown fields and a header/body key mismatch", async () => {
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows }))).status).toBe(400);
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows }, { "idempotency-key": "short" }))).status).toBe(400);
    expect((await postTalliesRoute(post("/api/v1/tallies", "{not json", { "idempotency-key": "json-00001" }))).status).toBe(400);
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows, extra: 1 }, { "idempotency-key": "json-00002" }))).status).toBe(400);
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows, idempotencyKey: "aaaaaaaa1" }, { "idempotency-key": "bbbbbbbb2" }))).status).toBe(400);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);
  });
});

describe("POST /api/v1/inspections", () => {
  it("stores units once per key and refuses a bad row", async () => {
    const body = { rows: [{ date: "2026-03-02", shift: "N", line: "L2", units: 8000 }] };
    expect((await postInspectionsRoute(post("/api/v1/inspections", body, { "idempotency-key": "units-0001" }))).status).toBe(201);
    expect((await postInspectionsRoute(post("/api/v1/inspections", body, { "idempotency-key": "units-0001" }))).status).toBe(200);
    expect(count("SELECT SUM(units) AS n FROM InspectionCount")).toBe(8000);
    const bad = await postInspectionsRoute(post("/api/v1/inspections", { rows: [{ date: "2026-03-02", shift: "N", line: "L2", units: "9" }] }, { "idempotency-key": "units-0002" }));
    expect(bad.status).toBe(400);
    // The same key on another endpoint is different content.
    expect((await postTalliesRoute(post("/api/v1/tallies", { rows }, { "idempotency-key": "units-0001" }))).status).toBe(409);
  });
});

describe("GET /api/v1/tallies", () => {
  it("returns current sums by date range and line, for analysis:read", async () => {
    await postTalliesRoute(post("/api/v1/tallies", { rows: [...rows, { ...rows[0], count: 2 }, { ...rows[0], line: "L2", date: "2026-03-03" }] }, { "idempotency-key": "get-00001" }));
    const get = (query: string, token = plant.tokens.read) =>
      getTalliesRoute(new Request(`${URL_BASE}/api/v1/tallies?${query}`, { headers: { authorization: `Bearer ${token}` } }));
    const all = await (await get("from=2026-03-01&to=2026-03-31")).json();
    expect(all.rows).toEqual([
      { date: "2026-03-02", shift: "A", line: "L1", category: "scratch", count: 5 },
      { date: "2026-03-02", shift: "A", line: "L1", category: "dent", count: 1 },
      { date: "2026-03-03", shift: "A", line: "L2", category: "scratch", count: 3 },
    ]);
    expect((await (await get("from=2026-03-01&to=2026-03-31&line=L2")).json()).rows).toHaveLength(1);
    expect((await (await get("from=2026-03-03&to=2026-03-03")).json()).rows).toHaveLength(1);
    expect((await get("from=2026-03-01&to=2026-03-31", plant.tokens.write)).status).toBe(403);
    expect((await get("from=2026-03-31&to=2026-03-01")).status).toBe(400);
    expect((await get("from=2026-03-01")).status).toBe(400);
    expect((await get("from=2026-03-01&to=2026-03-31&line=L9")).status).toBe(400);
    const csv = await get("from=2026-03-01&to=2026-03-31&format=csv");
    expect(csv.headers.get("content-type")).toMatch(/text\/csv/);
    expect(await csv.text()).toBe("date,shift,line,category,count\r\n2026-03-02,A,L1,scratch,5\r\n2026-03-02,A,L1,dent,1\r\n2026-03-03,A,L2,scratch,3\r\n");
  });
});

describe("GET /api/v1/openapi.json", () => {
  it("describes each request body with exactly the JSON Schema of the zod schema the handler validates with", async () => {
    const doc = await (await openApiRoute(new Request(`${URL_BASE}/api/v1/openapi.json`))).json();
    expect(doc.openapi).toBe("3.1.0");
    const expected = (schema: z.ZodType) => {
      const { $schema: _s, ...rest } = z.toJSONSchema(schema, { target: "draft-2020-12", io: "input", unrepresentable: "any" }) as Record<string, unknown>;
      return rest;
    };
    const bodies: [string, string, z.ZodType][] = [
      ["/api/v1/tallies", "post", TallyBatchSchema],
      ["/api/v1/inspections", "post", InspectionBatchSchema],
      ["/api/v1/floor-sheets", "post", FloorSheetSchema],
    ];
    for (const [path, method, schema] of bodies) {
      const ref: string = doc.paths[path][method].requestBody.content["application/json"].schema.$ref;
      const name = ref.replace("#/components/schemas/", "");
      expect(JSON.parse(JSON.stringify(doc.components.schemas[name]))).toEqual(JSON.parse(JSON.stringify(expected(schema))));
    }
    // The schema carries the rules that matter to a client.
    const row = doc.components.schemas.TallyBatch.properties.rows.items;
    expect(row.properties.count).toMatchObject({ type: "integer", minimum: 0, maximum: 1_000_000 });
    expect(row.properties.line.pattern).toBe("^[A-Za-z0-9._-]{1,32}$");
    expect(doc.paths["/api/v1/tallies"].get.parameters.map((p: { name: string }) => p.name)).toEqual(["from", "to", "line", "format"]);
  });
});
