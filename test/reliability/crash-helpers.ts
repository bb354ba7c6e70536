// Shared by the crash test (crash.test.ts) and its long variant against `next start`
// (crash-next.ts): fire floor submissions at a server until it dies, then check the
// database file it left behind.
import Database from "better-sqlite3";
import { spawn, type ChildProcess } from "node:child_process";
import { randomUUID } from "node:crypto";
import { existsSync, statSync } from "node:fs";
import path from "node:path";

export const ROWS_PER_BATCH = 5;
const CATEGORIES = ["scratch", "dent", "crack"];

/** One floor batch: ROWS_PER_BATCH rows, unique content per key. */
export function batchBody(n: number, lines: string[] = ["L1", "L2"], categories: string[] = CATEGORIES): string {
  const rows = Array.from({ length: ROWS_PER_BATCH }, (_, i) => ({
    date: "2026-05-04",
    shift: "A",
    line: lines[(n + i) % lines.length],
    category: categories[i % categories.length],
    count: (n % 9) + 1,
    note: `crash run batch ${n}`,
  }));
  return JSON.stringify({ rows });
}

export type PostLog = {
  /** Keys answered 2xx: the server said they are stored. */
  acknowledged: string[];
  /** Keys sent whose answer never came (the server died first): stored wholly or not at all. */
  unanswered: string[];
  /** Any other answer (4xx/5xx) with its status; a crash test expects none. */
  refused: { key: string; status: number; body: string }[];
};

/**
 * `clients` loops posting unique-key batches to `${base}/api/v1/tallies` until `stop`
 * resolves and the in-flight requests settle (a dead server ends them with an error).
 */
export async function postUntil(
  base: string,
  token: string,
  clients: number,
  stop: Promise<unknown>,
  extraHeaders: Record<string, string> = {},
  /** Each client sends at least this many batches before it looks at `stop`. */
  atLeast = 0,
): Promise<PostLog> {
  const log: PostLog = { acknowledged: [], unanswered: [], refused: [] };
  let stopped = false;
  void stop.then(() => (stopped = true));
  let n = 0;
  const loop = async () => {
    for (let sent = 0; sent < atLeast || !stopped; sent++) {
      const key = `crash-${randomUUID()}`;
      const body = batchBody(n++);
      try {
        const r = await fetch(`${base}/api/v1/tallies`, {
          method: "POST",
          headers: { "content-type": "application/json", authorization: `Bearer ${token}`, "idempotency-key": key, ...extraHeaders },
          body,
          signal: AbortSignal.timeout(20_000),
        });
        const text = await r.text();
        if (r.status === 201 || r.status === 200) log.acknowledged.push(key);
        else log.refused.push({ key, status: r.status, body: text.slice(0, 200) });
      } catch {
        log.unanswered.push(key);
        // The server is gone (or going): back off a little instead of spinning.
        await new Promise((r) => setTimeout(r, 20));
      }
    }
  };
  await Promise.all(Array.from({ length: clients }, loop));
  return log;
}

export type FileCheck = {
  integrity: string;
  /** Acknowledged keys with no Submission or not all their rows. */
  missingAcknowledged: string[];
  /** Unanswered keys stored with some but not all of their rows. */
  partialUnanswered: string[];
  /** Unanswered keys that were stored (the answer was lost, the data was not). */
  storedUnanswered: number;
  /** Import batches whose stored rows differ from the batch's row count, or rows without a batch. */
  partialImports: { batchId: number | null; expected: number; stored: number }[];
  importBatches: number;
};

/** PRAGMA integrity_check and the stored-once checks on the file a killed process left. */
export function checkFile(file: string, log: Pick<PostLog, "acknowledged" | "unanswered"> = { acknowledged: [], unanswered: [] }): FileCheck {
  const db = new Database(file, { timeout: 5_000 });
  try {
    const integrity = (db.pragma("integrity_check") as { integrity_check: string }[]).map((r) => r.integrity_check).join("; ");
    const rowsOf = db.prepare("SELECT COUNT(*) AS n FROM TallyEntry WHERE idempotencyKey >= ? AND idempotencyKey < ?");
    const submission = db.prepare("SELECT rows FROM Submission WHERE idempotencyKey = ?");
    const stored = (key: string) => {
      const s = submission.get(key) as { rows: number } | undefined;
      const n = (rowsOf.get(`sub:${key}:`, `sub:${key};`) as { n: number }).n;
      return { submitted: s !== undefined, rows: n };
    };
    const missingAcknowledged = log.acknowledged.filter((k) => {
      const s = stored(k);
      return !s.submitted || s.rows !== ROWS_PER_BATCH;
    });
    let storedUnanswered = 0;
    const partialUnanswered: string[] = [];
    for (const k of log.unanswered) {
      const s = stored(k);
      if (s.submitted && s.rows === ROWS_PER_BATCH) storedUnanswered++;
      else if (s.submitted || s.rows !== 0) partialUnanswered.push(k);
    }
    const partialImports = (
      db
        .prepare(
          `SELECT b.id AS batchId, b.rows AS expected, (SELECT COUNT(*) FROM TallyEntry e WHERE e.importBatchId = b.id) AS stored FROM ImportBatch b
           UNION ALL
           SELECT NULL, 0, COUNT(*) FROM TallyEntry e WHERE e.source = 'import' AND (e.importBatchId IS NULL OR NOT EXISTS (SELECT 1 FROM ImportBatch b WHERE b.id = e.importBatchId))`,
        )
        .all() as { batchId: number | null; expected: number; stored: number }[]
    ).filter((r) => r.expected !== r.stored);
    const importBatches = (db.prepare("SELECT COUNT(*) AS n FROM ImportBatch").get() as { n: number }).n;
    return { integrity, missingAcknowledged, partialUnanswered, storedUnanswered, partialImports, importBatches };
  } finally {
    db.close();
  }
}

/** Starts a server process and resolves once it prints `ready <port>` (crash-server) or answers /api/health (next start). */
export function startProcess(command: string, args: string[], env: NodeJS.ProcessEnv, readiness: "stdout" | { health: string }, timeoutMs = 120_000): Promise<{ child: ChildProcess; port: number }> {
  const child = spawn(command, args, { env, stdio: ["ignore", "pipe", "pipe"], detached: true });
  let err = "";
  child.stderr?.on("data", (d) => (err = (err + d).slice(-4000)));
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server not ready in ${timeoutMs} ms: ${err}`)), timeoutMs);
    child.once("exit", (code, signal) => {
      clearTimeout(timer);
      reject(new Error(`server exited (${code ?? signal}) before it was ready: ${err}`));
    });
    if (readiness === "stdout") {
      let out = "";
      child.stdout?.on("data", (d) => {
        out += d;
        const m = /ready (\d+)/.exec(out);
        if (m) {
          clearTimeout(timer);
          child.removeAllListeners("exit");
          resolve({ child, port: Number(m[1]) });
        }
      });
    } else {
      child.stdout?.resume();
      const port = Number(new URL(readiness.health).port);
      const poll = async () => {
        while (child.exitCode === null) {
          try {
            if ((await fetch(readiness.health, { signal: AbortSignal.timeout(2_000) })).ok) {
              clearTimeout(timer);
              child.removeAllListeners("exit");
              resolve({ child, port });
              return;
            }
          } catch {
            // not up yet
          }
          await new Promise((r) => setTimeout(r, 100));
        }
      };
      void poll();
    }
  });
}

/** SIGKILL to the process group (the server and any child it started); resolves once it is gone. */
export async function killHard(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return;
  const gone = new Promise<void>((r) => child.once("exit", () => r()));
  try {
    process.kill(-child.pid!, "SIGKILL");
  } catch {
    child.kill("SIGKILL");
  }
  await gone;
}

/** Bytes in the database's write-ahead log (0 when there is none). */
export function walBytes(dbFile: string): number {
  const wal = `${dbFile}-wal`;
  return existsSync(wal) ? statSync(wal).size : 0;
}

/** Deterministic pseudo-random numbers in [0, 1) (mulberry32), so a failing run can be repeated by its seed. */
export function seeded(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export const REPO = path.resolve(import.meta.dirname ?? path.dirname(new URL(import.meta.url).pathname), "../..");
