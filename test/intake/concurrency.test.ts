import { spawn } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { POST } from "@/app/api/v1/tallies/route";
import { useTempDatabase } from "../helpers/temp-db";
import { cellTotal, count, seedPlant, type Plant } from "./fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
});
afterAll(async () => ctx.cleanup());

const body = JSON.stringify({
  rows: [
    { date: "2026-03-09", shift: "A", line: "L1", category: "scratch", count: 7 },
    { date: "2026-03-09", shift: "A", line: "L1", category: "dent", count: 2 },
  ],
});

describe("200 concurrent POSTs of one batch under one idempotency key", () => {
  it("store it once within one server process: one 201, 199 replays with the same submission", async () => {
    const responses = await Promise.all(
      Array.from({ length: 200 }, () =>
        POST(
          new Request("http://plant.example/api/v1/tallies", {
            method: "POST",
            headers: { "content-type": "application/json", authorization: `Bearer ${plant.tokens.write}`, "idempotency-key": "same-key-in-process" },
            body,
          }),
        ),
      ),
    );
    const statuses = responses.map((r) => r.status).sort();
    expect(statuses.filter((s) => s === 201)).toHaveLength(1);
    expect(statuses.filter((s) => s === 200)).toHaveLength(199);
    const ids = new Set(await Promise.all(responses.map(async (r) => (await r.json()).submissionId)));
    expect(ids.size).toBe(1);
    expect(count("SELECT COUNT(*) AS n FROM Submission WHERE idempotencyKey = 'same-key-in-process'")).toBe(1);
    expect(cellTotal("2026-03-09", "A", "L1", "scratch")).toBe(7);
    expect(cellTotal("2026-03-09", "A", "L1", "dent")).toBe(2);
  });

  it("store it once across 4 processes with their own connections (50 each, started at the same instant)", async () => {
    const startAt = Date.now() + 6000;
    const runs = Array.from(
      { length: 4 },
      () =>
        new Promise<{ status: number; id: number }[]>((resolve, reject) => {
          const child = spawn(process.execPath, ["--import", "tsx", "test/intake/concurrent-poster.ts", plant.tokens.write, "same-key-across-processes", "50", String(startAt)], {
            env: { ...process.env, DATABASE_URL: ctx.url },
          });
          let out = "";
          let err = "";
          child.stdout.on("data", (d) => (out += d));
          child.stderr.on("data", (d) => (err += d));
          child.on("exit", (code) => (code === 0 ? resolve(JSON.parse(out)) : reject(new Error(`poster exited ${code}: ${err}`))));
        }),
    );
    const results = (await Promise.all(runs)).flat();
    expect(results).toHaveLength(200);
    expect(results.filter((r) => r.status === 201)).toHaveLength(1);
    expect(results.filter((r) => r.status === 200)).toHaveLength(199);
    expect(new Set(results.map((r) => r.id)).size).toBe(1);
    expect(count("SELECT COUNT(*) AS n FROM Submission WHERE idempotencyKey = 'same-key-across-processes'")).toBe(1);
    // 7 + 2 from the first test, and exactly one more batch from this one.
    expect(cellTotal("2026-03-09", "A", "L1", "scratch")).toBe(14);
  }, 90_000);
});
