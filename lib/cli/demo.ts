// npm run demo : migrate, seed the invented demo plant when the database is empty,
// build the app, and serve it on PORT (default 3000).
//   --no-build   serve the existing build (the browser tests build once beforehand)
//   --fresh      delete the database at DATABASE_URL first (test runners only)
import { existsSync, rmSync } from "node:fs";
import path from "node:path";
import { openSqlite } from "../db/client";
import { applyPendingMigrations } from "../db/migrate";
import { databaseFile, databaseUrl } from "../db/url";
import { localToday, addDays } from "../dates";
import { isEmptyPlant, seedDemoPlant } from "../demo/seed";
import { DEMO_PLANT_NAME } from "../demo/plant";
import { seedDemoExtras } from "../demo/extras";
import { port, runNext } from "./serve";

const skipBuild = process.argv.includes("--no-build");
const fresh = process.argv.includes("--fresh");
const distDir = process.env.LINEMIX_DIST_DIR ?? ".next";

if (fresh) {
  // --fresh (test runners): start from an empty database at DATABASE_URL.
  for (const suffix of ["", "-wal", "-shm"]) rmSync(databaseFile() + suffix, { force: true });
}

await applyPendingMigrations();
const sqlite = openSqlite(databaseUrl());
let extras: { lines: string[] } = { lines: [] };
if (isEmptyPlant(sqlite)) {
  const lastDay = addDays(localToday(), -1);
  const { tallies, days } = seedDemoPlant(sqlite, lastDay);
  console.log(`seeded ${DEMO_PLANT_NAME}: ${days} days, ${tallies.toLocaleString("en")} tally rows up to ${lastDay}`);
}
extras = await seedDemoExtras(sqlite);
sqlite.close();
console.log(`database: ${databaseFile()}`);

if (!skipBuild || !existsSync(path.join(distDir, "BUILD_ID"))) {
  const code = await runNext(["build"]);
  if (code !== 0) process.exit(code);
}
const p = port();
console.log(`\nLinemix is starting on http://localhost:${p}`);
for (const line of extras.lines) console.log(line);
process.exit(await runNext(["start", "-p", String(p)]));
