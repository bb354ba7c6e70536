// npm run bench:import [-- --rows N --runs K]
// Imports a generated tally CSV of 1,000,000 rows (≈15 years × 5 lines × 3 shifts × 12
// categories) through the real importer, and in the same run inserts the very same rows
// with a bare better-sqlite3 prepared statement in one transaction (the physical limit
// of this table, its indexes and this disk). Each measurement runs in a child process on
// a fresh database, so peak RSS is the importer's own. Prints medians, the ratio and
// peak RSS beside the targets (≤ 20 s, ≤ 500 MB for 1 M rows).
import { spawnSync } from "node:child_process";
import { createReadStream, existsSync, mkdtempSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";

const TARGET_SECONDS = 20;
const TARGET_MB = 500;
const LINES = ["P1", "P2", "P3", "P4", "P5"];
const SHIFTS = ["EARLY", "LATE", "NIGHT"];
const CATEGORIES = ["short-shot", "flash", "sink-mark", "warp", "burn-mark", "contamination", "colour-streak", "scratch", "dim-oot", "seal-leak", "liner-missing", "band-broken"];

const args = process.argv.slice(2);
const option = (name: string, fallback: number) => {
  const i = args.indexOf(name);
  return i >= 0 ? Number(args[i + 1]) : fallback;
};

function dateOf(dayIndex: number): string {
  return new Date(Date.UTC(2011, 0, 1) + dayIndex * 86_400_000).toISOString().slice(0, 10);
}

/** Row i of the benchmark file, deterministic: (date, shift, line, category, count). */
function row(i: number): [string, string, string, string, number] {
  const perDay = LINES.length * SHIFTS.length * CATEGORIES.length;
  const day = Math.floor(i / perDay);
  const r = i % perDay;
  const line = LINES[Math.floor(r / (SHIFTS.length * CATEGORIES.length))];
  const shift = SHIFTS[Math.floor(r / CATEGORIES.length) % SHIFTS.length];
  const category = CATEGORIES[r % CATEGORIES.length];
  const count = (i * 7919) % 23;
  return [dateOf(day), shift, line, category, count];
}

function writeFile(file: string, rows: number): void {
  const chunks: string[] = ["date,shift,line,category,count\n"];
  let buffer = "";
  for (let i = 0; i < rows; i += 1) {
    const [d, s, l, c, n] = row(i);
    buffer += `${d},${s},${l},${c},${n}\n`;
    if (buffer.length > 1 << 20) {
      chunks.push(buffer);
      buffer = "";
    }
  }
  chunks.push(buffer);
  writeFileSync(file, chunks.join(""));
}

async function freshDatabase(dir: string, name: string): Promise<string> {
  const file = path.join(dir, `${name}.db`);
  for (const suffix of ["", "-wal", "-shm"]) rmSync(file + suffix, { force: true });
  const url = `file:${file}`;
  process.env.DATABASE_URL = url;
  const { applyPendingMigrations } = await import("../../lib/db/migrate");
  await applyPendingMigrations(url);
  const { openSqlite } = await import("../../lib/db/client");
  const sqlite = openSqlite(url);
  LINES.forEach((c, i) => sqlite.prepare("INSERT INTO Line (code, name, displayOrder) VALUES (?, ?, ?)").run(c, c, i));
  SHIFTS.forEach((c, i) => sqlite.prepare("INSERT INTO Shift (code, name, startTime, endTime, displayOrder) VALUES (?, ?, '06:00', '14:00', ?)").run(c, c, i));
  CATEGORIES.forEach((c, i) => sqlite.prepare("INSERT INTO DefectCategory (code, name, displayOrder) VALUES (?, ?, ?)").run(c, c, i));
  sqlite.close();
  return url;
}

type Measurement = { seconds: number; readSeconds?: number; writeSeconds?: number; rows: number; peakMB: number };

/** Child: one measurement on a fresh database, printed as JSON on the last line. */
async function child(kind: "import" | "bare", file: string, dir: string, rows: number): Promise<void> {
  const url = await freshDatabase(dir, `${kind}-${process.pid}`);
  const { rawDb, closeDb } = await import("../../lib/db/client");
  if (kind === "import") {
    const { importCsv } = await import("../../lib/intake/import");
    const t0 = performance.now();
    const outcome = await importCsv(createReadStream(file), { actor: { userId: null, name: "bench", role: "system" }, fileName: path.basename(file), sqlite: rawDb() });
    const seconds = (performance.now() - t0) / 1000;
    if (outcome.status !== "imported") throw new Error(`import refused: ${outcome.problems.slice(0, 3).map((p) => p.message).join("; ")}`);
    const stored = (rawDb().prepare("SELECT COUNT(*) AS n FROM TallyEntry").get() as { n: number }).n;
    await closeDb();
    console.log(JSON.stringify({ seconds, readSeconds: outcome.elapsedMs.read / 1000, writeSeconds: outcome.elapsedMs.write / 1000, rows: stored, peakMB: process.resourceUsage().maxRSS / 1024 }));
    return;
  }
  // Bare: the same rows, already in memory as ids, one prepared INSERT, one transaction.
  const sqlite = rawDb();
  const ids = (table: string) => new Map((sqlite.prepare(`SELECT code, id FROM ${table}`).all() as { code: string; id: number }[]).map((r) => [r.code, r.id]));
  const [lines, shifts, categories] = [ids("Line"), ids("Shift"), ids("DefectCategory")];
  const dates: string[] = [];
  const cols = { date: new Int32Array(rows), shift: new Int32Array(rows), line: new Int32Array(rows), category: new Int32Array(rows), count: new Int32Array(rows) };
  const dateIndex = new Map<string, number>();
  for (let i = 0; i < rows; i += 1) {
    const [d, s, l, c, n] = row(i);
    let di = dateIndex.get(d);
    if (di === undefined) {
      di = dates.length;
      dates.push(d);
      dateIndex.set(d, di);
    }
    cols.date[i] = di;
    cols.shift[i] = shifts.get(s)!;
    cols.line[i] = lines.get(l)!;
    cols.category[i] = categories.get(c)!;
    cols.count[i] = n;
  }
  const batch = Number(sqlite.prepare("INSERT INTO ImportBatch (contentHash, kind, rows, userName) VALUES ('bare', 'tallies', ?, 'bench')").run(rows).lastInsertRowid);
  const insert = sqlite.prepare(
    `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, productId, count, source, note, enteredById, enteredByName, createdAt, idempotencyKey, importBatchId)
     VALUES (?, ?, ?, ?, ?, ?, 'import', ?, ?, ?, ?, ?, ?)`,
  );
  const stamp = new Date().toISOString();
  const t0 = performance.now();
  sqlite.transaction(() => {
    for (let i = 0; i < rows; i += 1) {
      insert.run(dates[cols.date[i]], cols.shift[i], cols.line[i], cols.category[i], null, cols.count[i], null, null, "bench", stamp, `import:${batch}:${String(i + 2).padStart(10, "0")}`, batch);
    }
  })();
  const seconds = (performance.now() - t0) / 1000;
  await closeDb();
  void url;
  console.log(JSON.stringify({ seconds, rows, peakMB: process.resourceUsage().maxRSS / 1024 }));
}

function runChild(kind: "import" | "bare", file: string, dir: string, rows: number): Measurement {
  const result = spawnSync(process.execPath, ["--import", "tsx", path.resolve("test/bench/import.ts"), "--child", kind, file, dir, String(rows)], {
    encoding: "utf8",
    maxBuffer: 16 * 1024 * 1024,
    env: { ...process.env, NODE_OPTIONS: "" },
  });
  if (result.status !== 0) throw new Error(`${kind} run failed:\n${result.stderr}`);
  const last = result.stdout.trim().split("\n").pop()!;
  return JSON.parse(last) as Measurement;
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

async function main(): Promise<void> {
  if (args[0] === "--child") {
    await child(args[1] as "import" | "bare", args[2], args[3], Number(args[4]));
    return;
  }
  const rows = option("--rows", 1_000_000);
  const runs = option("--runs", 3);
  const dir = mkdtempSync(path.join(tmpdir(), "linemix-bench-import-"));
  try {
    const file = path.join(dir, "tallies.csv");
    writeFile(file, rows);
    const mb = statSync(file).size / 1024 / 1024;
    console.log(`bench:import — ${rows.toLocaleString("en")} tally rows (${mb.toFixed(1)} MB CSV), ${runs} runs each, fresh database per run`);
    const imports: Measurement[] = [];
    const bares: Measurement[] = [];
    for (let r = 0; r < runs; r += 1) {
      // Interleaved so both see the same machine load.
      const imp = runChild("import", file, dir, rows);
      const bare = runChild("bare", file, dir, rows);
      if (imp.rows !== rows || bare.rows !== rows) throw new Error(`stored ${imp.rows} / ${bare.rows} rows, expected ${rows}`);
      imports.push(imp);
      bares.push(bare);
      console.log(
        `  run ${r + 1}: import ${imp.seconds.toFixed(2)} s (read+check ${imp.readSeconds!.toFixed(2)} s, write ${imp.writeSeconds!.toFixed(2)} s, peak RSS ${imp.peakMB.toFixed(0)} MB)` +
          ` · bare insert ${bare.seconds.toFixed(2)} s`,
      );
    }
    const importMedian = median(imports.map((m) => m.seconds));
    const bareMedian = median(bares.map((m) => m.seconds));
    const peak = Math.max(...imports.map((m) => m.peakMB));
    const scale = rows / 1_000_000;
    const okTime = importMedian <= TARGET_SECONDS * Math.max(scale, 1e-9);
    const okMem = peak <= TARGET_MB;
    console.log("");
    console.log(`  import (read, check every row, write in one transaction): median ${importMedian.toFixed(2)} s   target ≤ ${(TARGET_SECONDS * scale).toFixed(1)} s   ${okTime ? "ok" : "OVER"}`);
    console.log(`  bare better-sqlite3 insert of the same rows:              median ${bareMedian.toFixed(2)} s   (physical limit)`);
    console.log(`  ratio import / bare:                                      ${(importMedian / bareMedian).toFixed(2)}×`);
    console.log(`  import peak RSS:                                          ${peak.toFixed(0)} MB   target ≤ ${TARGET_MB} MB   ${okMem ? "ok" : "OVER"}`);
    console.log(`  throughput:                                               ${Math.round(rows / importMedian).toLocaleString("en")} rows/s`);
    if (!okTime || !okMem) process.exitCode = 1;
  } finally {
    if (existsSync(dir)) rmSync(dir, { recursive: true, force: true });
  }
}

await main();
