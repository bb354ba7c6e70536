// npm run bench:pages — server render time of the review pages and time to an
// interactive chart in Chromium, on a plant of 2 years × 12 lines × 25 categories × 3
// shifts. Not a timed test: it prints figures beside the targets.
//
// Needs the production build in .next-review (LINEMIX_DIST_DIR=.next-review npx next build)
// and Chromium at /usr/bin/chromium (CHROMIUM_PATH to override).
import { spawn, type ChildProcess } from "node:child_process";
import { request } from "node:http";
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { chromium } from "playwright-core";

const DIST = process.env.LINEMIX_DIST_DIR ?? ".next-review";
const PORT = Number(process.env.BENCH_PORT ?? 3251);
const N = Number(process.env.BENCH_REQUESTS ?? 20);
const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
const { buildPlant, PLANT } = await import("./plant");
const { days: DAYS, lines: LINES, shifts: SHIFTS, categories: CATEGORIES } = PLANT;
const SERVER_TARGET_MS = 300;
const CHART_TARGET_MS = 1000;

if (!existsSync(path.join(DIST, "BUILD_ID"))) {
  console.error(`No build in ${DIST}: run LINEMIX_DIST_DIR=${DIST} npx next build first.`);
  process.exit(1);
}

const dir = mkdtempSync(path.join(tmpdir(), "linemix-bench-pages-"));
const url = `file:${path.join(dir, "bench.db")}`;
process.env.DATABASE_URL = url;

const { applyPendingMigrations } = await import("../../lib/db/migrate");
const { openSqlite, closeDb } = await import("../../lib/db/client");
const { addDays } = await import("../../lib/dates");
const { seedDemoAccounts } = await import("../../lib/auth/demo-accounts");
const { createSession } = await import("../../lib/auth/sessions");
const { SESSION_COOKIE } = await import("../../lib/auth/constants");

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

function p95(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil(0.95 * s.length) - 1)];
}

async function waitForHealth(base: string, server: ChildProcess): Promise<void> {
  const until = Date.now() + 120_000;
  while (Date.now() < until) {
    if (server.exitCode !== null) throw new Error(`server exited with ${server.exitCode}`);
    try {
      const r = await fetch(`${base}/api/health`);
      if (r.ok) return;
    } catch {
      // not up yet
    }
    await new Promise((r) => setTimeout(r, 300));
  }
  throw new Error("server did not come up within 120 s");
}

// node:http rather than fetch: a cold first request may take minutes, past fetch's header timeout.
function timeGet(base: string, route: string, cookie: string): Promise<number> {
  return new Promise((resolve, reject) => {
    const t = performance.now();
    const req = request(`${base}${route}`, { headers: { cookie } }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => {
        const ms = performance.now() - t;
        if (res.statusCode !== 200) reject(new Error(`${route}: HTTP ${res.statusCode} ${Buffer.concat(chunks).toString().slice(0, 200)}`));
        else resolve(ms);
      });
    });
    req.on("error", reject);
    req.end();
  });
}

let server: ChildProcess | null = null;
try {
  await applyPendingMigrations(url);
  const t0 = performance.now();
  const { lastDay, tallies } = buildPlant(url);
  console.log(`plant: ${DAYS} days × ${LINES} lines × ${SHIFTS} shifts × ${CATEGORIES} categories = ${tallies.toLocaleString("en")} tallies, built in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

  const sqlite = openSqlite(url);
  await seedDemoAccounts(sqlite);
  const engineer = sqlite.prepare("SELECT id FROM User WHERE username = 'engineer'").get() as { id: number };
  sqlite.close();
  const { token } = await createSession(engineer.id, "password");
  await closeDb();
  const cookie = `${SESSION_COOKIE}=${token}`;

  server = spawn("npx", ["tsx", "lib/cli/start.ts"], {
    env: { ...process.env, DATABASE_URL: url, PORT: String(PORT), LINEMIX_DIST_DIR: DIST, NEXT_TELEMETRY_DISABLED: "1" },
    stdio: ["ignore", "ignore", "inherit"],
    detached: true,
  });
  const base = `http://127.0.0.1:${PORT}`;
  await waitForHealth(base, server);

  const windowStart = addDays(lastDay, -35);
  const routes = [
    { name: "overview", route: "/", target: SERVER_TARGET_MS },
    { name: "window", route: `/comparisons/lines/windows/${windowStart}`, target: SERVER_TARGET_MS },
    { name: "timeline", route: "/comparisons/lines", target: null },
    { name: "weekly review", route: "/week", target: null },
  ];
  console.log(`\nserver render (fetch of the full HTML), ${N} requests each after one warm-up`);
  console.log("page            cold ms   median ms   p95 ms   target");
  for (const r of routes) {
    const cold = await timeGet(base, r.route, cookie);
    const times: number[] = [];
    for (let i = 0; i < N; i++) times.push(await timeGet(base, r.route, cookie));
    const ok = r.target === null ? "" : median(times) <= r.target ? `≤ ${r.target} ✓` : `≤ ${r.target} ✗`;
    console.log(`${r.name.padEnd(15)} ${cold.toFixed(0).padStart(7)} ${median(times).toFixed(0).padStart(11)} ${p95(times).toFixed(0).padStart(8)}   ${ok}`);
  }

  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
  });
  try {
    const context = await browser.newContext({ viewport: { width: 1366, height: 900 } });
    await context.addCookies([{ name: SESSION_COOKIE, value: token, url: base }]);
    const page = await context.newPage();
    console.log(`\nChromium: navigation start → first chart SVG drawn (5 loads each, after one warm-up)`);
    console.log("page            median ms   max ms   target");
    for (const r of [routes[2], routes[1]]) {
      const times: number[] = [];
      for (let i = 0; i < 6; i++) {
        const t = Date.now();
        await page.goto(`${base}${r.route}`, { waitUntil: "commit" });
        await page.waitForSelector("[data-chart] svg.recharts-surface", { state: "attached", timeout: 30_000 });
        if (i > 0) times.push(Date.now() - t);
      }
      const ok = median(times) <= CHART_TARGET_MS ? `≤ ${CHART_TARGET_MS} ✓` : `≤ ${CHART_TARGET_MS} ✗`;
      console.log(`${r.name.padEnd(15)} ${median(times).toFixed(0).padStart(9)} ${Math.max(...times).toFixed(0).padStart(8)}   ${ok}`);
    }
  } finally {
    await browser.close();
  }
} finally {
  if (server?.pid) {
    try {
      process.kill(-server.pid, "SIGTERM");
    } catch {
      // already gone
    }
  }
  rmSync(dir, { recursive: true, force: true });
}
