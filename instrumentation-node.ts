import { monitorEventLoopDelay } from "node:perf_hooks";

/**
 * Before the server takes requests: the default comparisons on a fresh database. Created
 * here rather than by the warm-up or the first page because each creation is a Prisma
 * transaction, and a floor POST writing on the raw connection while one is open waits on
 * the same thread for the busy timeout (5 s) and fails with SQLITE_BUSY — seen in
 * bench:load when the warm-up created them with the probes already posting.
 */
export async function prepareServer(): Promise<void> {
  if (process.env.LINEMIX_WARM_UP === "0") return;
  try {
    const { ensureDefaultComparisons } = await import("./lib/db/comparisons");
    await ensureDefaultComparisons();
  } catch (error) {
    // A read-only or unreadable database: the pages report it.
    console.error(`default comparisons not created at start: ${error instanceof Error ? error.message : String(error)}`);
  }
}

/**
 * Work a Node.js server starts beside answering requests (called from instrumentation.ts):
 *
 * - the scan warm-up: every saved comparison's scan is built in the background
 *   (lib/monitor/service startWarmUp: one comparison at a time, in slices of about 15 ms
 *   with requests served in between), so the first overview after a restart does not
 *   build 26 scans on its own request while the floor waits. LINEMIX_WARM_UP=0 turns it
 *   off (each comparison is then built when first asked for, still in slices).
 * - LINEMIX_STALL_LOG_MS=N (benchmarks, diagnosis): a line on stderr whenever the
 *   JavaScript thread did not come back to a 50 ms timer for N ms or more, and for scan
 *   work that long (lib/monitor/service), so a stall in a benchmark can be matched to
 *   what the server was doing.
 */
export function startServerWork(): void {
  const stallMs = Number(process.env.LINEMIX_STALL_LOG_MS ?? 0);
  if (stallMs > 0) watchStalls(stallMs);
  if (process.env.LINEMIX_WARM_UP === "0") return;
  // After the server is listening: the first requests (health checks) are not held up by the imports.
  setTimeout(() => void warmUp(), 100);
}

async function warmUp(): Promise<void> {
  const started = performance.now();
  const cpu = process.cpuUsage();
  // How long a request could have waited for the thread meanwhile: the figure the slicing is for.
  const delay = monitorEventLoopDelay({ resolution: 10 });
  delay.enable();
  try {
    const { startWarmUp } = await import("./lib/monitor/service");
    const status = await startWarmUp();
    const used = process.cpuUsage(cpu);
    console.log(
      `scan warm-up: ${status.ready} of ${status.total} comparisons built in ${((performance.now() - started) / 1000).toFixed(1)} s ` +
        `(CPU ${((used.user + used.system) / 1e6).toFixed(1)} s); event-loop delay meanwhile p50 ${(delay.percentile(50) / 1e6).toFixed(0)} ms, ` +
        `p99 ${(delay.percentile(99) / 1e6).toFixed(0)} ms, max ${(delay.max / 1e6).toFixed(0)} ms`,
    );
  } catch (error) {
    // Best effort: a page asking for a comparison builds it (and reports what went wrong).
    console.error(`scan warm-up stopped: ${error instanceof Error ? error.message : String(error)}`);
  } finally {
    delay.disable();
  }
}

function watchStalls(thresholdMs: number): void {
  let last = performance.now();
  setInterval(() => {
    const now = performance.now();
    const gap = now - last - 50;
    if (gap >= thresholdMs) console.warn(`[stall] ${new Date().toISOString()} the thread was busy or blocked for ${gap.toFixed(0)} ms`);
    last = now;
  }, 50).unref();
}
