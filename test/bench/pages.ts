// npm run bench:pages — server render time of the review pages and time to an
// interactive chart in Chromium, on a plant of 2 years × 12 lines × 25 categories × 3
// shifts. Not a timed test: it prints figures beside the targets.
//
// Needs the production build in .next-review (LINEMIX_DIST_DIR=.next-review npx next build)
// and Chromium at /usr/bin/chromium (CHROMIUM_PATH to override).
//
// Besides wall time it prints the server's CPU time per warm page (user + system time of
// the server's process tree, from /proc, over the warm requests) and the page's size (the
// HTML, and the RSC payload a client-side navigation fetches), since a shared machine
// makes wall times noisy and CPU per page is what limits throughput.
//
// Options (environment): BENCH_REQUESTS (20 warm requests per page), BENCH_PORT (3251),
// BENCH_DAYS and BENCH_LINES (a smaller plant while trying things out; the targets are
// for the full one), BENCH_PROFILE=DIR (writes a V8 CPU profile of the server over the
// warm requests of each page into DIR, for chrome://inspect or speedscope).
import { spawn, type ChildProcess } from "node:child_process";
import { request } from "node:http";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { chromium } from "playwright-core";

const DIST = process.env.LINEMIX_DIST_DIR ?? ".next-review";
const PORT = Number(process.env.BENCH_PORT ?? 3251);
const N = Number(process.env.BENCH_REQUESTS ?? 20);
const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
const { buildPlant, PLANT } = await import("./plant");
const SIZE = {
  ...PLANT,
  days: Number(process.env.BENCH_DAYS ?? PLANT.days),
  lines: Number(process.env.BENCH_LINES ?? PLANT.lines),
};
const { days: DAYS, lines: LINES, shifts: SHIFTS, categories: CATEGORIES } = SIZE;
const PROFILE_DIR = process.env.BENCH_PROFILE ? path.resolve(process.env.BENCH_PROFILE) : null;
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

/** Polls /api/health until its scans are ready (the warm-up is done). */
async function waitForScans(base: string): Promise<{ ready: number; total: number }> {
  const until = Date.now() + 15 * 60_000;
  while (Date.now() < until) {
    const body = (await (await fetch(`${base}/api/health`)).json()) as { scans?: { state: string; ready: number; total: number } };
    if (!body.scans || body.scans.state !== "warming") return { ready: body.scans?.ready ?? 0, total: body.scans?.total ?? 0 };
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error("scan warm-up did not finish within 15 minutes");
}

// node:http rather than fetch: a cold first request may take minutes, past fetch's header timeout.
function get(base: string, route: string, cookie: string, rsc = false): Promise<{ ms: number; bytes: number }> {
  return new Promise((resolve, reject) => {
    const t = performance.now();
    // RSC: 1 asks for the payload a client-side navigation fetches instead of the HTML.
    const headers: Record<string, string> = rsc ? { cookie, RSC: "1" } : { cookie };
    const req = request(`${base}${route}`, { headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => {
        const ms = performance.now() - t;
        const body = Buffer.concat(chunks);
        // Next adds a cache-busting _rsc query to RSC requests by a redirect: follow it once.
        if (rsc && res.statusCode === 307 && res.headers.location && !route.includes("_rsc")) {
          get(base, res.headers.location, cookie, true).then(resolve, reject);
          return;
        }
        if (res.statusCode !== 200) reject(new Error(`${route}${rsc ? " (RSC)" : ""}: HTTP ${res.statusCode} ${res.headers.location ?? ""} ${body.toString().slice(0, 200)}`));
        else resolve({ ms, bytes: body.length });
      });
    });
    req.on("error", reject);
    req.end();
  });
}

const TICK = 100; // USER_HZ: /proc reports times in 1/100 s on Linux

/** The process ids of `root` and everything below it (the server is npx → tsx → next). */
function processTree(root: number): number[] {
  const parent = new Map<number, number[]>();
  for (const entry of readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    try {
      const stat = readFileSync(`/proc/${entry}/stat`, "utf8");
      const ppid = Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[1]);
      if (!parent.has(ppid)) parent.set(ppid, []);
      parent.get(ppid)!.push(Number(entry));
    } catch {
      // exited meanwhile
    }
  }
  const out: number[] = [];
  const todo = [root];
  while (todo.length) {
    const pid = todo.pop()!;
    out.push(pid);
    todo.push(...(parent.get(pid) ?? []));
  }
  return out;
}

/** User + system CPU milliseconds of the process tree so far. */
function treeCpuMs(root: number): number {
  let ticks = 0;
  for (const pid of processTree(root)) {
    try {
      const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
      const f = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
      ticks += Number(f[11]) + Number(f[12]); // utime, stime (fields 14 and 15 of proc(5))
    } catch {
      // exited meanwhile
    }
  }
  return (ticks * 1000) / TICK;
}

// Preloaded into the server with BENCH_PROFILE: SIGUSR2 starts a CPU profile, the next SIGUSR2 writes it.
const PROFILE_HOOK = `
const inspector = require("node:inspector");
const fs = require("node:fs");
let session = null;
process.on("SIGUSR2", () => {
  if (!session) {
    session = new inspector.Session();
    session.connect();
    session.post("Profiler.setSamplingInterval", { interval: 200 }, () => session.post("Profiler.enable", () => session.post("Profiler.start")));
    return;
  }
  const s = session;
  session = null;
  s.post("Profiler.stop", (err, res) => {
    if (!err) fs.writeFileSync(process.env.LINEMIX_PROFILE_OUT + "/" + Date.now() + ".cpuprofile", JSON.stringify(res.profile));
    s.disconnect();
  });
});
`;

/** The one process of the tree that listens (next start's server), found through its argv. */
function serverPid(root: number): number {
  const pids = processTree(root).filter((pid) => {
    try {
      return readFileSync(`/proc/${pid}/cmdline`, "utf8").includes("next");
    } catch {
      return false;
    }
  });
  return pids[pids.length - 1] ?? root;
}

let server: ChildProcess | null = null;
try {
  await applyPendingMigrations(url);
  const t0 = performance.now();
  const { lastDay, tallies } = buildPlant(url, SIZE);
  console.log(`plant: ${DAYS} days × ${LINES} lines × ${SHIFTS} shifts × ${CATEGORIES} categories = ${tallies.toLocaleString("en")} tallies, built in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

  const sqlite = openSqlite(url);
  await seedDemoAccounts(sqlite);
  const engineer = sqlite.prepare("SELECT id FROM User WHERE username = 'engineer'").get() as { id: number };
  sqlite.close();
  const { token } = await createSession(engineer.id, "password");
  await closeDb();
  const cookie = `${SESSION_COOKIE}=${token}`;

  const profileEnv: Record<string, string> = {};
  if (PROFILE_DIR) {
    mkdirSync(PROFILE_DIR, { recursive: true });
    writeFileSync(path.join(dir, "profile-hook.cjs"), PROFILE_HOOK);
    profileEnv.NODE_OPTIONS = `${process.env.NODE_OPTIONS ?? ""} --require ${path.join(dir, "profile-hook.cjs")}`.trim();
    profileEnv.LINEMIX_PROFILE_OUT = PROFILE_DIR;
  }
  server = spawn("npx", ["tsx", "lib/cli/start.ts"], {
    env: { ...process.env, ...profileEnv, DATABASE_URL: url, PORT: String(PORT), LINEMIX_DIST_DIR: DIST, NEXT_TELEMETRY_DISABLED: "1" },
    stdio: ["ignore", "ignore", "inherit"],
    detached: true,
  });
  const base = `http://127.0.0.1:${PORT}`;
  await waitForHealth(base, server);
  // Warm figures mean warm: the start-up scan warm-up runs in the background (see
  // instrumentation-node.ts) and its CPU would land on whatever request it overlaps.
  const warmT0 = performance.now();
  const warm = await waitForScans(base);
  console.log(`scan warm-up: ${warm.ready} of ${warm.total} comparisons built ${((performance.now() - warmT0) / 1000).toFixed(1)} s after health answered`);

  const windowStart = addDays(lastDay, -35);
  const routes = [
    { name: "overview", route: "/", target: SERVER_TARGET_MS },
    { name: "window", route: `/comparisons/lines/windows/${windowStart}`, target: SERVER_TARGET_MS },
    { name: "timeline", route: "/comparisons/lines", target: null },
    { name: "weekly review", route: "/week", target: null },
    // What every page pays before its own content: proxy, session check, layout and header.
    { name: "(near-empty)", route: "/forbidden", target: null },
  ];
  console.log(`\nserver render (fetch of the full HTML), ${N} requests each after one warm-up; CPU: the server's user + system time per warm request`);
  console.log("page            cold ms   median ms   p95 ms   CPU ms/page   HTML kB   RSC kB   target");
  const root = server.pid!;
  for (const r of routes) {
    const cold = await get(base, r.route, cookie);
    const rsc = await get(base, r.route, cookie, true);
    if (PROFILE_DIR) process.kill(serverPid(root), "SIGUSR2");
    const cpu0 = treeCpuMs(root);
    const times: number[] = [];
    for (let i = 0; i < N; i++) times.push((await get(base, r.route, cookie)).ms);
    const cpu = (treeCpuMs(root) - cpu0) / N;
    if (PROFILE_DIR) {
      process.kill(serverPid(root), "SIGUSR2");
      await new Promise((res) => setTimeout(res, 1500));
    }
    const ok = r.target === null ? "" : median(times) <= r.target ? `≤ ${r.target} ✓` : `≤ ${r.target} ✗`;
    console.log(
      `${r.name.padEnd(15)} ${cold.ms.toFixed(0).padStart(7)} ${median(times).toFixed(0).padStart(11)} ${p95(times).toFixed(0).padStart(8)} ` +
        `${cpu.toFixed(1).padStart(13)} ${(cold.bytes / 1024).toFixed(0).padStart(9)} ${(rsc.bytes / 1024).toFixed(0).padStart(8)}   ${ok}`,
    );
  }

  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
  });
  try {
    const context = await browser.newContext({ viewport: { width: 1366, height: 900 } });
    await context.addCookies([{ name: SESSION_COOKIE, value: token, url: base }]);
    // Times taken in the page against its own navigation start: the first SVG inside a
    // chart (server-drawn or client-drawn) and the first interactive chart (the client
    // chart library's surface, present only once its component has hydrated and drawn).
    // (A string: tsx's name helpers would not exist in the page.)
    await context.addInitScript(`
      window.__chartAt = {};
      const seen = window.__chartAt;
      const observer = new MutationObserver(() => {
        if (seen.drawn === undefined && document.querySelector("[data-chart] svg")) seen.drawn = performance.now();
        if (seen.interactive === undefined && document.querySelector("[data-chart] svg.recharts-surface")) seen.interactive = performance.now();
        if (seen.drawn !== undefined && seen.interactive !== undefined) observer.disconnect();
      });
      observer.observe(document, { childList: true, subtree: true });
    `);
    const page = await context.newPage();
    console.log(
      `\nChromium: navigation start → first chart SVG drawn (server-drawn or client-drawn) and → first interactive (recharts) chart drawn; 5 loads each after one warm-up`,
    );
    console.log("page            drawn median   drawn max   interactive median   interactive max   target");
    // The window screen's charts are static SVG drawn on the server (nothing to wait for
    // beyond the HTML); the timeline's chart becomes interactive when recharts has drawn it.
    for (const r of [
      { ...routes[2], interactive: true },
      { ...routes[1], interactive: false },
    ]) {
      const drawn: number[] = [];
      const interactive: number[] = [];
      for (let i = 0; i < 6; i++) {
        await page.goto(`${base}${r.route}`, { waitUntil: "commit" });
        await page.waitForSelector(r.interactive ? "[data-chart] svg.recharts-surface" : "[data-chart] svg", { state: "attached", timeout: 30_000 });
        const at = (await page.evaluate(() => (window as unknown as { __chartAt: Record<string, number> }).__chartAt)) as Record<string, number>;
        if (i > 0) {
          drawn.push(at.drawn);
          if (r.interactive) interactive.push(at.interactive);
        }
      }
      const judged = r.interactive ? interactive : drawn;
      const ok = median(judged) <= CHART_TARGET_MS ? `≤ ${CHART_TARGET_MS} ✓` : `≤ ${CHART_TARGET_MS} ✗`;
      console.log(
        `${r.name.padEnd(15)} ${median(drawn).toFixed(0).padStart(12)} ${Math.max(...drawn).toFixed(0).padStart(11)} ` +
          (r.interactive
            ? `${median(interactive).toFixed(0).padStart(20)} ${Math.max(...interactive).toFixed(0).padStart(17)}`
            : `${"—".padStart(20)} ${"—".padStart(17)}`) +
          `   ${ok}${r.interactive ? "" : " (static charts: drawn)"}`,
      );
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
