import fc from "fast-check";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { POST as postTallies } from "@/app/api/v1/tallies/route";
import { POST as postInspections } from "@/app/api/v1/inspections/route";
import { POST as postFloorSheet } from "@/app/api/v1/floor-sheets/route";
import { useTempDatabase } from "../helpers/temp-db";
import { count, seedPlant, type Plant } from "../intake/fixture";

/**
 * The JSON API's write routes under hostile bodies: malformed JSON, wrong types, huge and
 * non-finite numbers, unicode, missing and extra fields, deep nesting, oversized bodies,
 * wrong content types. Each answer is a 4xx with a plain JSON message — never a 500 —
 * and nothing is stored unless the answer is 201 (a fuzzed body can be valid; then it is
 * stored once, with exactly its rows). The route handlers are called directly, on a real
 * SQLite file, with a real API token.
 */

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
});
afterAll(async () => ctx.cleanup());

type Route = { name: string; handler: (request: Request) => Promise<Response>; path: string };
const ROUTES: Route[] = [
  { name: "tallies", handler: postTallies, path: "/api/v1/tallies" },
  { name: "inspections", handler: postInspections, path: "/api/v1/inspections" },
  { name: "floor-sheets", handler: postFloorSheet, path: "/api/v1/floor-sheets" },
];

let keyCounter = 0;

function stored() {
  return {
    submissions: count("SELECT COUNT(*) AS n FROM Submission"),
    tallies: count("SELECT COUNT(*) AS n FROM TallyEntry"),
    units: count("SELECT COUNT(*) AS n FROM InspectionCount"),
    audit: count("SELECT COUNT(*) AS n FROM AuditEvent"),
  };
}

async function send(route: Route, body: string | Uint8Array, headers: Record<string, string> = {}) {
  const before = stored();
  const response = await route.handler(
    new Request(`http://plant.example:3000${route.path}`, {
      method: "POST",
      headers: { "content-type": "application/json", authorization: `Bearer ${plant.tokens.write}`, "idempotency-key": `fuzz-${++keyCounter}-key`, ...headers },
      body: body as BodyInit,
    }),
  );
  const text = await response.text();
  const after = stored();
  return { status: response.status, text, before, after };
}

/** Every answer: not a 5xx; JSON; a refusal names its problem plainly and stores nothing. */
function expectHandled(result: Awaited<ReturnType<typeof send>>, sent: string): void {
  const context = `${result.status} ${result.text.slice(0, 300)} for ${sent.slice(0, 200)}`;
  expect(result.status, context).toBeLessThan(500);
  const body = JSON.parse(result.text) as { error?: unknown; messages?: unknown };
  if (result.status >= 400) {
    expect(typeof body.error, context).toBe("string");
    expect((body.error as string).length).toBeGreaterThan(5);
    expect(result.text, context).not.toMatch(/\bat \w+ \(|SQLITE|TypeError|ReferenceError|undefined is not/);
    expect(result.after, context).toEqual(result.before);
  } else {
    expect([200, 201], context).toContain(result.status);
  }
}

const codeLike = fc.oneof(
  fc.constantFrom("A", "B", "N", "L1", "L2", "scratch", "dent", "crack", "old", "PX", "", " ", "l1", "L1 ", "Ł1", "L\u0000", "🚀", "a".repeat(300)),
  fc.string({ maxLength: 10, unit: "grapheme" }),
);
const numberLike = fc.oneof(
  fc.integer({ min: -5, max: 2_000_000 }),
  fc.constantFrom(0, -0, 0.5, 1e21, 1e308, Number.MAX_SAFE_INTEGER, 2 ** 53 + 1, -1),
  fc.double(),
);
const anyScalar = fc.oneof(numberLike, codeLike, fc.boolean(), fc.constant(null));
const dateLike = fc.oneof(
  fc.constantFrom("2026-03-02", "2026-02-30", "2026-13-01", "26-03-02", "2026-3-2", "2026-03-02T00:00:00Z", "", "0000-00-00", "9999-12-31"),
  fc.date({ noInvalidDate: true }).map((d) => d.toISOString().slice(0, 10)),
);
const field = <T>(arb: fc.Arbitrary<T>) => fc.oneof({ weight: 4, arbitrary: arb }, { weight: 1, arbitrary: anyScalar }, { weight: 1, arbitrary: fc.constant(undefined) });

const tallyRow = fc.record(
  { date: field(dateLike), shift: field(codeLike), line: field(codeLike), category: field(codeLike), count: field(numberLike), product: field(codeLike), note: field(fc.string({ maxLength: 60, unit: "grapheme" })) },
  { requiredKeys: [] },
);
const unitsRow = fc.record({ date: field(dateLike), shift: field(codeLike), line: field(codeLike), units: field(numberLike), product: field(codeLike) }, { requiredKeys: [] });
const withExtra = <T extends object>(arb: fc.Arbitrary<T>) =>
  fc.tuple(arb, fc.option(fc.dictionary(fc.string({ maxLength: 6 }), anyScalar, { maxKeys: 2 }), { nil: undefined })).map(([o, extra]) => ({ ...extra, ...o }));

const batch = (row: fc.Arbitrary<object>) =>
  fc.oneof(
    fc.record({ rows: fc.array(withExtra(row), { maxLength: 6 }) }),
    fc.record({ rows: fc.oneof(anyScalar, fc.dictionary(fc.string({ maxLength: 4 }), anyScalar)) }),
    fc.record({ rows: fc.array(anyScalar, { maxLength: 4 }), idempotencyKey: anyScalar }),
    withExtra(fc.record({ rows: fc.array(row, { maxLength: 3 }) })),
    fc.jsonValue({ maxDepth: 4 }),
  );
const floorSheet = withExtra(
  fc.record(
    {
      idempotencyKey: field(fc.constantFrom("sheet-key-0001", "short", "x".repeat(200))),
      date: field(dateLike),
      shift: field(codeLike),
      line: field(codeLike),
      product: field(codeLike),
      note: field(fc.string({ maxLength: 40 })),
      units: field(numberLike),
      counts: field(fc.array(fc.record({ category: field(codeLike), count: field(numberLike) }, { requiredKeys: [] }), { maxLength: 5 })),
      mode: field(fc.constantFrom("new", "add", "correct", "replace", "")),
      reason: field(fc.string({ maxLength: 30 })),
      basis: field(fc.string({ maxLength: 70 })),
    },
    { requiredKeys: [] },
  ),
);

/** JSON text that is not valid JSON, or is JSON of the wrong shape at the top level. */
const brokenText = fc.oneof(
  fc.string({ maxLength: 200, unit: "binary" }),
  fc.constantFrom("", "{", "}", "[", "{\"rows\":", "{\"rows\": [}", "{'rows': []}", "null", "true", "0", "\"rows\"", "NaN", "{\"rows\": [NaN]}", "\uFEFF{\"rows\": []}", "{\"rows\": []}garbage", "{\"__proto__\": {\"x\": 1}, \"rows\": []}", "{\"rows\":[{\"count\":1e400}]}"),
  fc.jsonValue({ maxDepth: 3 }).map((v) => JSON.stringify(v).slice(0, -1)),
);

describe("JSON API write routes under hostile bodies", () => {
  it("structured but wrong batches: a 4xx with a message and nothing stored, or stored exactly as sent", async () => {
    for (const [route, arb] of [
      [ROUTES[0], batch(tallyRow)],
      [ROUTES[1], batch(unitsRow)],
      [ROUTES[2], floorSheet],
    ] as const) {
      await fc.assert(
        fc.asyncProperty(arb, async (value) => {
          const sent = JSON.stringify(value) ?? "null";
          const result = await send(route, sent);
          expectHandled(result, sent);
          if (result.status === 201) {
            expect(result.after.submissions).toBe(result.before.submissions + 1);
            const rows = (JSON.parse(result.text) as { stored: { tallies: number; inspections: number } }).stored;
            expect(result.after.tallies - result.before.tallies).toBe(rows.tallies);
            expect(result.after.units - result.before.units).toBe(rows.inspections);
          }
        }),
        { numRuns: 250 },
      );
    }
  }, 60_000);

  it("malformed JSON text and arbitrary bytes: 400 with a message, nothing stored", async () => {
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...ROUTES), fc.oneof(brokenText, fc.uint8Array({ maxLength: 200 })), async (route, body) => {
        const sent = typeof body === "string" ? body : Buffer.from(body).toString("latin1");
        expectHandled(await send(route, body), sent);
      }),
      { numRuns: 300 },
    );
  });

  it("deep nesting, huge arrays, huge numbers and an oversized body are refused plainly", async () => {
    const deep = (n: number) => `${"[".repeat(n)}${"]".repeat(n)}`;
    const deepObject = (n: number) => `${'{"rows":'.repeat(n)}[]${"}".repeat(n)}`;
    const cases: [string, string][] = [
      ["deep array", `{"rows": ${deep(100_000)}}`],
      ["deep object", deepObject(50_000)],
      ["many rows", JSON.stringify({ rows: Array.from({ length: 10_001 }, () => ({ date: "2026-03-02", shift: "A", line: "L1", category: "dent", count: 1 })) })],
      ["huge count", '{"rows":[{"date":"2026-03-02","shift":"A","line":"L1","category":"dent","count":1e400}]}'],
      ["long note", JSON.stringify({ rows: [{ date: "2026-03-02", shift: "A", line: "L1", category: "dent", count: 1, note: "n".repeat(100_000) }] })],
      ["oversized", JSON.stringify({ rows: [], pad: "x".repeat(5 * 1024 * 1024) })],
    ];
    for (const route of ROUTES) {
      for (const [name, body] of cases) {
        const result = await send(route, body);
        expectHandled(result, name);
        expect(result.status, `${route.name}: ${name}`).toBeGreaterThanOrEqual(400);
      }
      // The size limit holds without a Content-Length too (a streamed body).
      const stream = new ReadableStream<Uint8Array>({
        start(controller) {
          for (let i = 0; i < 6; i++) controller.enqueue(new Uint8Array(1024 * 1024).fill(32));
          controller.close();
        },
      });
      const before = stored();
      const response = await route.handler(
        new Request(`http://plant.example:3000${route.path}`, {
          method: "POST",
          headers: { "content-type": "application/json", authorization: `Bearer ${plant.tokens.write}`, "idempotency-key": "streamed-oversize" },
          body: stream,
          duplex: "half",
        } as RequestInit),
      );
      expect(response.status).toBe(413);
      expect(stored()).toEqual(before);
    }
  }, 60_000);

  it("a wrong content type or a bad idempotency key is refused before the body is used", async () => {
    const valid = JSON.stringify({ rows: [{ date: "2026-03-02", shift: "A", line: "L1", category: "dent", count: 1 }] });
    const keys = fc.oneof(fc.string({ maxLength: 140, unit: "grapheme" }), fc.constantFrom("", "short", "has space here", "ключ-ключ-ключ", "k".repeat(129)));
    await fc.assert(
      fc.asyncProperty(keys, fc.constantFrom("text/plain", "application/x-www-form-urlencoded", "multipart/form-data", "application/json"), async (key, type) => {
        let result: Awaited<ReturnType<typeof send>>;
        try {
          result = await send(ROUTES[0], valid, { "idempotency-key": key, "content-type": type });
        } catch (error) {
          // Headers that HTTP itself cannot carry (control characters) never reach a handler.
          expect(error).toBeInstanceOf(TypeError);
          return;
        }
        expectHandled(result, `${type} ${key}`);
      }),
      { numRuns: 200 },
    );
  });
});
