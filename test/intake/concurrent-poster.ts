// Helper process for concurrency.test.ts: its own database connections, firing N
// concurrent POSTs of one batch under one idempotency key at a given instant.
import { POST } from "@/app/api/v1/tallies/route";

const [, , token, key, perProcess, startAt] = process.argv;
const body = JSON.stringify({
  rows: [
    { date: "2026-03-09", shift: "A", line: "L1", category: "scratch", count: 7 },
    { date: "2026-03-09", shift: "A", line: "L1", category: "dent", count: 2 },
  ],
});
const wait = Number(startAt) - Date.now();
if (wait > 0) await new Promise((r) => setTimeout(r, wait));
const statuses = await Promise.all(
  Array.from({ length: Number(perProcess) }, () =>
    POST(
      new Request("http://plant.example/api/v1/tallies", {
        method: "POST",
        headers: { "content-type": "application/json", authorization: `Bearer ${token}`, "idempotency-key": key },
        body,
      }),
    ).then(async (r) => ({ status: r.status, id: (await r.json()).submissionId as number })),
  ),
);
process.stdout.write(JSON.stringify(statuses));
process.exit(0);
