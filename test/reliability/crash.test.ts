import { build } from "esbuild";
import { spawn } from "node:child_process";
import { rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/client";
import { useTempDatabase } from "../helpers/temp-db";
import { seedPlant, type Plant } from "../intake/fixture";
import { REPO, checkFile, killHard, postUntil, seeded, startProcess, walBytes } from "./crash-helpers";

/**
 * Crash consistency with real processes and SIGKILL.
 *
 * 1. A server taking floor submissions is killed at a random moment while 8 clients post
 *    batches with unique idempotency keys, then restarted on the same file: every batch
 *    answered 2xx before the kill is stored with all its rows, an unanswered one wholly or
 *    not at all, and PRAGMA integrity_check says ok. The server is a small node:http
 *    process calling the very route handler Next serves (app/api/v1/tallies/route.ts, so
 *    the same lib/intake submitOnce transaction); `npm run bench:crash` kills `next start`
 *    itself, which boots too slowly for this suite.
 * 2. `npm run import` (lib/cli/import.ts) is killed at a random moment — half the runs at
 *    a random time over its life, half once its write-ahead log has grown past a random
 *    size (that is, while the commit is being written): the batch is wholly in or wholly
 *    out, and integrity_check says ok.
 *
 * Both programs are bundled once with esbuild so each of the runs starts in well under a
 * second (the code is the same; tsx would add 1–2 s of start-up per run).
 */

const RUNS = Number(process.env.LINEMIX_CRASH_RUNS ?? 20);
const SEED = Number(process.env.LINEMIX_CRASH_SEED ?? 20261201);
const IMPORT_ROWS = 10_000;
// Per process: several people's test runs share this working tree. Inside node_modules so
// the bundles' bare imports (better-sqlite3, @prisma/*) resolve.
const OUT = path.join(REPO, "node_modules", ".cache", "linemix-reliability", String(process.pid));

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
let dbFile: string;
const env = (): NodeJS.ProcessEnv => ({ ...process.env, DATABASE_URL: ctx.url, NODE_ENV: "production" });

beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
  await closeDb();
  dbFile = ctx.url.slice("file:".length);
  await build({
    entryPoints: { "crash-server": path.join(REPO, "test/reliability/crash-server.ts"), import: path.join(REPO, "lib/cli/import.ts") },
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    packages: "external",
    // next has no exports map: Node's ESM resolver needs the file name.
    alias: { "next/headers": "next/headers.js", "next/navigation": "next/navigation.js", "next/server": "next/server.js" },
    outdir: OUT,
    outExtension: { ".js": ".mjs" },
    tsconfig: path.join(REPO, "tsconfig.json"),
    logLevel: "warning",
  });
});
afterAll(async () => {
  rmSync(OUT, { recursive: true, force: true });
  await ctx.cleanup();
});

describe("kill -9 of the server taking floor submissions", () => {
  it(`loses no acknowledged batch and leaves no partial one over ${RUNS} kills at random moments`, async () => {
    const random = seeded(SEED);
    const totals = { acknowledged: 0, unanswered: 0, storedUnanswered: 0 };
    for (let run = 0; run < RUNS; run++) {
      const { child, port } = await startProcess(process.execPath, [path.join(OUT, "crash-server.mjs")], env(), "stdout", 30_000);
      const base = `http://127.0.0.1:${port}`;
      // One batch first, so the kill lands in steady work rather than in the first request's start-up.
      const warm = await postUntil(base, plant.tokens.write, 1, Promise.resolve(), {}, 1);
      const delay = 100 + Math.floor(random() * 800);
      const killed = new Promise<void>((resolve) => setTimeout(() => void killHard(child).then(resolve), delay));
      const log = await postUntil(base, plant.tokens.write, 8, killed);
      log.acknowledged.push(...warm.acknowledged);
      log.refused.push(...warm.refused);
      await killed;
      expect(log.refused, `run ${run}: refused answers`).toEqual([]);
      const check = checkFile(dbFile, log);
      expect(check.integrity, `run ${run}`).toBe("ok");
      expect(check.missingAcknowledged, `run ${run}: acknowledged but not stored`).toEqual([]);
      expect(check.partialUnanswered, `run ${run}: stored in part`).toEqual([]);
      totals.acknowledged += log.acknowledged.length;
      totals.unanswered += log.unanswered.length;
      totals.storedUnanswered += check.storedUnanswered;
    }
    expect(totals.acknowledged).toBeGreaterThan(RUNS);
    console.log(
      `server kills: ${RUNS} runs, ${totals.acknowledged} batches acknowledged and all stored; ` +
        `${totals.unanswered} unanswered at the kill (${totals.storedUnanswered} of them stored whole, the rest absent, none partial); integrity ok`,
    );
  }, 120_000);
});

describe("kill -9 of npm run import", () => {
  it(`leaves each import wholly in or wholly out over ${RUNS} kills at random moments`, async () => {
    const csv = path.join(ctx.dir, "tallies.csv");
    const lines = ["date,shift,line,category,count,note"];
    for (let i = 0; i < IMPORT_ROWS; i++) lines.push(`2026-06-${String(1 + (i % 28)).padStart(2, "0")},${["A", "B", "N"][i % 3]},L${1 + (i % 2)},${["scratch", "dent", "crack"][i % 3]},${i % 11},row ${i}`);
    writeFileSync(csv, lines.join("\n"));

    const runImport = () => spawn(process.execPath, [path.join(OUT, "import.mjs"), csv, "--force"], { env: env(), stdio: ["ignore", "pipe", "pipe"] });
    // One undisturbed import first: its duration bounds the kill times, and the WAL it
    // leaves bounds the size-triggered kills.
    const t0 = Date.now();
    const first = runImport();
    let firstOut = "";
    first.stdout.on("data", (d) => (firstOut += d));
    first.stderr.on("data", (d) => (firstOut += d));
    let firstDone = false;
    const firstExit = new Promise<number | null>((r) => first.once("exit", (c) => ((firstDone = true), r(c))));
    // The log is checkpointed away when the last connection closes: watch its peak.
    let fullWal = 0;
    while (!firstDone) {
      fullWal = Math.max(fullWal, walBytes(dbFile));
      await new Promise((r) => setTimeout(r, 2));
    }
    const code = await firstExit;
    expect(code, firstOut).toBe(0);
    const lifetime = Date.now() - t0;
    const base = checkFile(dbFile);
    expect(base.importBatches).toBe(1);

    const random = seeded(SEED + 1);
    const outcomes = { in: 0, out: 0, byTime: 0, byWal: 0, finished: 0 };
    for (let run = 0; run < RUNS; run++) {
      const before = checkFile(dbFile).importBatches;
      const child = runImport();
      child.stdout.resume();
      child.stderr.resume();
      const exited = new Promise<number | null>((r) => child.once("exit", (c) => r(c)));
      const startWal = walBytes(dbFile);
      let done = false;
      void exited.then(() => (done = true));
      if (run % 2 === 0) {
        outcomes.byTime++;
        await new Promise((r) => setTimeout(r, Math.floor(random() * lifetime * 1.1)));
      } else {
        outcomes.byWal++;
        // Kill once the log has grown by a random share of a whole import's log: the
        // commit is being written (the import keeps its pages in a large cache until then).
        const threshold = startWal + Math.floor(random() * Math.max(fullWal, 100_000) * 0.95);
        while (!done && walBytes(dbFile) <= threshold) await new Promise((r) => setTimeout(r, 1));
      }
      if (done) outcomes.finished++;
      else child.kill("SIGKILL");
      await exited;
      const check = checkFile(dbFile);
      expect(check.integrity, `run ${run}`).toBe("ok");
      expect(check.partialImports, `run ${run}: an import stored in part`).toEqual([]);
      const added = check.importBatches - before;
      expect([0, 1], `run ${run}`).toContain(added);
      if (added === 1) outcomes.in++;
      else outcomes.out++;
    }
    console.log(
      `import kills: ${RUNS} runs of a ${IMPORT_ROWS.toLocaleString("en")}-row import (${lifetime} ms undisturbed), ` +
        `${outcomes.byTime} killed at a random time, ${outcomes.byWal} while its log was being written` +
        `${outcomes.finished ? ` (${outcomes.finished} finished before the kill)` : ""}: ` +
        `${outcomes.in} wholly in, ${outcomes.out} wholly out, none partial; integrity ok`,
    );
  }, 120_000);
});
