// npm run bench:crash [-- --server-runs N --import-runs N --import-rows N]
// The long variant of crash.test.ts: SIGKILL to the real production server (`npm start`
// = lib/cli/start.ts → next start, the whole process group) at random moments while 8
// clients post floor batches with unique idempotency keys, and to `npm run import`
// (tsx lib/cli/import.ts, unbundled) at random moments during a large import. After each
// kill: PRAGMA integrity_check, every batch answered 2xx is stored with all its rows,
// unanswered ones wholly or not at all, and every import batch is wholly in or out.
//
// Needs a production build: LINEMIX_DIST_DIR=.next-load npx next build (or set
// LINEMIX_DIST_DIR to another build folder). Not part of npm test: next start takes
// seconds to boot, so 20 kills take minutes.
import { spawn } from "node:child_process";
import { existsSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { checkFile, killHard, postUntil, seeded, startProcess } from "./crash-helpers";

const args = process.argv.slice(2);
const option = (name: string, fallback: number) => {
  const i = args.indexOf(name);
  return i >= 0 ? Number(args[i + 1]) : fallback;
};
const SERVER_RUNS = option("--server-runs", 20);
const IMPORT_RUNS = option("--import-runs", 20);
const IMPORT_ROWS = option("--import-rows", 200_000);
const DIST = process.env.LINEMIX_DIST_DIR ?? ".next-load";
const PORT = Number(process.env.BENCH_PORT ?? 3361);
const random = seeded(Number(process.env.LINEMIX_CRASH_SEED ?? 20261202));

if (SERVER_RUNS > 0 && !existsSync(path.join(DIST, "BUILD_ID"))) {
  console.error(`No build in ${DIST}: run LINEMIX_DIST_DIR=${DIST} npx next build first (or --server-runs 0).`);
  process.exit(1);
}

const dir = mkdtempSync(path.join(tmpdir(), "linemix-crash-"));
const file = path.join(dir, "crash.db");
const url = `file:${file}`;
process.env.DATABASE_URL = url;
const { applyPendingMigrations } = await import("../../lib/db/migrate");
const { closeDb } = await import("../../lib/db/client");
const { seedPlant } = await import("../intake/fixture");

const failures: string[] = [];
const fail = (what: string) => {
  failures.push(what);
  console.error(`FAIL ${what}`);
};

try {
  await applyPendingMigrations(url);
  const plant = await seedPlant();
  await closeDb();
  const env = { ...process.env, DATABASE_URL: url, PORT: String(PORT), LINEMIX_DIST_DIR: DIST, NEXT_TELEMETRY_DISABLED: "1" };

  if (SERVER_RUNS > 0) {
    const totals = { acknowledged: 0, unanswered: 0, storedUnanswered: 0, bootMs: [] as number[] };
    for (let run = 0; run < SERVER_RUNS; run++) {
      const t = Date.now();
      const { child } = await startProcess("npx", ["tsx", "lib/cli/start.ts"], env, { health: `http://127.0.0.1:${PORT}/api/health` });
      totals.bootMs.push(Date.now() - t);
      const base = `http://127.0.0.1:${PORT}`;
      const warm = await postUntil(base, plant.tokens.write, 1, Promise.resolve(), {}, 1);
      const delay = 200 + Math.floor(random() * 1800);
      const killed = new Promise<void>((resolve) => setTimeout(() => void killHard(child).then(resolve), delay));
      const log = await postUntil(base, plant.tokens.write, 8, killed);
      await killed;
      log.acknowledged.push(...warm.acknowledged);
      log.refused.push(...warm.refused);
      const check = checkFile(file, log);
      if (log.refused.length) fail(`server run ${run}: refused answers ${JSON.stringify(log.refused.slice(0, 3))}`);
      if (check.integrity !== "ok") fail(`server run ${run}: integrity ${check.integrity}`);
      if (check.missingAcknowledged.length) fail(`server run ${run}: ${check.missingAcknowledged.length} acknowledged batches missing`);
      if (check.partialUnanswered.length) fail(`server run ${run}: ${check.partialUnanswered.length} batches stored in part`);
      totals.acknowledged += log.acknowledged.length;
      totals.unanswered += log.unanswered.length;
      totals.storedUnanswered += check.storedUnanswered;
      process.stdout.write(`server run ${run + 1}/${SERVER_RUNS}: killed after ${delay} ms, ${log.acknowledged.length} acknowledged, ${log.unanswered.length} unanswered\n`);
    }
    const boot = [...totals.bootMs].sort((a, b) => a - b)[Math.floor(totals.bootMs.length / 2)];
    console.log(
      `\nnext start killed ${SERVER_RUNS} times (median boot ${(boot / 1000).toFixed(1)} s): ${totals.acknowledged} batches acknowledged, all stored whole; ` +
        `${totals.unanswered} unanswered at the kill (${totals.storedUnanswered} stored whole, the rest absent, none partial); integrity ok after every kill`,
    );
  }

  if (IMPORT_RUNS > 0) {
    const csv = path.join(dir, "import.csv");
    const lines = ["date,shift,line,category,count,note"];
    for (let i = 0; i < IMPORT_ROWS; i++) lines.push(`2026-07-${String(1 + (i % 28)).padStart(2, "0")},${["A", "B", "N"][i % 3]},L${1 + (i % 2)},${["scratch", "dent", "crack"][i % 3]},${i % 13},bench ${i}`);
    writeFileSync(csv, lines.join("\n"));
    const run = () => spawn("npx", ["tsx", "lib/cli/import.ts", csv, "--force"], { env, stdio: ["ignore", "ignore", "ignore"], detached: true });
    const t0 = Date.now();
    const first = run();
    await new Promise((r) => first.once("exit", r));
    const lifetime = Date.now() - t0;
    const outcomes = { in: 0, out: 0 };
    for (let k = 0; k < IMPORT_RUNS; k++) {
      const before = checkFile(file).importBatches;
      const child = run();
      let done = false;
      const exited = new Promise<void>((r) => child.once("exit", () => ((done = true), r())));
      const delay = Math.floor(random() * lifetime * 1.05);
      await new Promise((r) => setTimeout(r, delay));
      if (!done) await killHard(child);
      await exited;
      const check = checkFile(file);
      if (check.integrity !== "ok") fail(`import run ${k}: integrity ${check.integrity}`);
      if (check.partialImports.length) fail(`import run ${k}: partial import ${JSON.stringify(check.partialImports)}`);
      const added = check.importBatches - before;
      if (added === 1) outcomes.in++;
      else if (added === 0) outcomes.out++;
      else fail(`import run ${k}: ${added} batches added`);
      process.stdout.write(`import run ${k + 1}/${IMPORT_RUNS}: killed at ${delay} ms of ~${lifetime} ms → ${added ? "wholly in" : "wholly out"}\n`);
    }
    console.log(
      `\nnpm run import of ${IMPORT_ROWS.toLocaleString("en")} rows (${(lifetime / 1000).toFixed(1)} s undisturbed) killed ${IMPORT_RUNS} times at random moments: ` +
        `${outcomes.in} wholly in, ${outcomes.out} wholly out, none partial; integrity ok after every kill`,
    );
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
if (failures.length) {
  console.error(`\n${failures.length} failures`);
  process.exit(1);
}
