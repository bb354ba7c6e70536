import { spawnSync } from "node:child_process";
import { writeFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, rawDb } from "@/lib/db/client";
import { applyPendingMigrations } from "@/lib/db/migrate";
import { importCsv } from "@/lib/intake/import";
import { correctEntry } from "@/lib/intake/corrections";
import { parseExportArgs } from "@/lib/cli/export";
import { useTempDatabase } from "../helpers/temp-db";
import { seedPlant, system, type Plant } from "./fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
  // A line whose code starts with '-' (allowed by the code pattern) to see neutralisation end to end.
  rawDb().prepare("INSERT INTO Line (code, name, displayOrder) VALUES ('-L3', '=cmd line', 9)").run();
  const outcome = await importCsv(
    Buffer.from(
      "date,shift,line,category,count\n" +
        "2026-03-01,A,L1,scratch,2\n2026-03-01,A,L1,scratch,3\n2026-03-01,A,L1,dent,0\n" +
        "2026-03-02,N,L2,crack,4\n2026-03-03,B,-L3,dent,6\n2026-03-04,A,L1,dent,1\n",
    ),
    { actor: system, fileName: "seed.csv" },
  );
  expect(outcome.status).toBe("imported");
  await importCsv(Buffer.from("date,shift,line,units\n2026-03-01,A,L1,900\n2026-03-02,N,L2,800\n"), { actor: system });
  // Correct one of the two scratch entries (3 → 1): the export must show the current sum 2 + 1.
  const id = (rawDb().prepare("SELECT id FROM TallyEntry WHERE count = 3").get() as { id: number }).id;
  const corrected = await correctEntry(plant.users.engineer, { idempotencyKey: "corr-key-0001", kind: "tally", entryId: id, value: 1, reason: "miscount" });
  expect(corrected.status).toBe("created");
});
afterAll(async () => ctx.cleanup());

function exportCli(...args: string[]) {
  const result = spawnSync(process.execPath, ["--import", "tsx", "lib/cli/export.ts", ...args], {
    env: { ...process.env, DATABASE_URL: ctx.url },
    encoding: "utf8",
  });
  return { code: result.status, out: result.stdout, err: result.stderr };
}

describe("npm run export", () => {
  it("prints the import's columns, one row per date, shift, line and category with the current summed count", () => {
    const { code, out, err } = exportCli();
    expect(code).toBe(0);
    expect(err).toMatch(/exported 5 rows/);
    expect(out).toBe(
      [
        "date,shift,line,category,count",
        "2026-03-01,A,L1,scratch,3",
        "2026-03-01,A,L1,dent,0",
        "2026-03-02,N,L2,crack,4",
        "2026-03-03,B,'-L3,dent,6",
        "2026-03-04,A,L1,dent,1",
        "",
      ].join("\r\n"),
    );
  });

  it("filters by dates and lines", () => {
    expect(exportCli("--from", "2026-03-02", "--to", "2026-03-03").out.trim().split("\r\n")).toEqual([
      "date,shift,line,category,count",
      "2026-03-02,N,L2,crack,4",
      "2026-03-03,B,'-L3,dent,6",
    ]);
    expect(exportCli("--line", "L2").out.trim().split("\r\n")).toEqual(["date,shift,line,category,count", "2026-03-02,N,L2,crack,4"]);
    expect(exportCli("--line", "L1", "L2", "--to", "2026-03-01").out.trim().split("\r\n")).toHaveLength(3);
  });

  it("exports inspected units with --units", () => {
    expect(exportCli("--units").out).toBe("date,shift,line,units\r\n2026-03-01,A,L1,900\r\n2026-03-02,N,L2,800\r\n");
  });

  it("refuses bad arguments with a message and no stack trace", () => {
    for (const args of [["--from", "2026-02-30"], ["--line", "NOPE"], ["--bogus"], ["--from", "2026-03-05", "--to", "2026-03-01"]]) {
      const { code, err } = exportCli(...args);
      expect(code).not.toBe(0);
      expect(err).not.toMatch(/\n\s+at /);
    }
  });

  it("dispatches by flag (one exporter per kind)", () => {
    expect(parseExportArgs(["--units"]).exporter.flag).toBe("--units");
    expect(parseExportArgs([]).exporter.flag).toBeNull();
    expect(() => parseExportArgs(["--units", "--units"])).toThrow(/one kind/);
  });

  it("round-trips: the export imports into an empty plant with the same totals", async () => {
    const exported = exportCli().out;
    const file = path.join(ctx.dir, "export.csv");
    writeFileSync(file, exported);
    const before = rawDb().prepare("SELECT code FROM Line").all();
    await closeDb();
    const otherUrl = `file:${path.join(ctx.dir, "other.db")}`;
    process.env.DATABASE_URL = otherUrl;
    await applyPendingMigrations(otherUrl);
    try {
      await seedPlant();
      rawDb().prepare("INSERT INTO Line (code, name) VALUES ('-L3', 'x')").run();
      const outcome = await importCsv(Buffer.from(exported), { actor: system });
      expect(outcome.problems).toEqual([]);
      expect(outcome.rows).toBe(5);
      const again = spawnSync(process.execPath, ["--import", "tsx", "lib/cli/export.ts"], { env: { ...process.env, DATABASE_URL: otherUrl }, encoding: "utf8" });
      expect(again.stdout).toBe(exported);
    } finally {
      await closeDb();
      process.env.DATABASE_URL = ctx.url;
    }
    expect(rawDb().prepare("SELECT code FROM Line").all()).toEqual(before);
  });
});

describe("npm run import (command line)", () => {
  function importCli(...args: string[]) {
    const result = spawnSync(process.execPath, ["--import", "tsx", "lib/cli/import.ts", ...args], {
      env: { ...process.env, DATABASE_URL: ctx.url },
      encoding: "utf8",
    });
    return { code: result.status, out: result.stdout, err: result.stderr };
  }
  const tallyCount = () => (rawDb().prepare("SELECT COUNT(*) AS n FROM TallyEntry").get() as { n: number }).n;

  it("refuses a bad file: non-zero exit, every problem as 'line N: …', no stack trace, nothing written", () => {
    const file = path.join(ctx.dir, "bad.csv");
    writeFileSync(file, "date,shift,line,category,count\n2026-03-05,A,L1,scratch,1\n2026-02-30,A,L1,scratch,1\n2026-03-05,A,L1,scratch,-2\n");
    const before = tallyCount();
    const { code, err } = importCli(file);
    expect(code).toBe(1);
    expect(err).toContain('line 3: date "2026-02-30" is not a real calendar date');
    expect(err).toContain('line 4: count "-2" is negative');
    expect(err).toMatch(/refused, nothing written — 2 problems/);
    expect(err).not.toMatch(/\n\s+at /);
    expect(tallyCount()).toBe(before);
  });

  it("--dry-run writes nothing; a real run imports; the same file again is refused; --force imports it", () => {
    const file = path.join(ctx.dir, "good.csv");
    writeFileSync(file, "date,shift,line,category,count\n2026-03-06,A,L1,scratch,1\n2026-03-06,A,L2,dent,2\n");
    const before = tallyCount();
    const dry = importCli(file, "--dry-run");
    expect(dry.code).toBe(0);
    expect(dry.out).toMatch(/2 tally rows.*nothing written \(dry run\)/);
    expect(tallyCount()).toBe(before);
    const real = importCli(file);
    expect(real.code).toBe(0);
    expect(real.out).toMatch(/imported 2 tally rows,.* as batch #\d+/);
    expect(tallyCount()).toBe(before + 2);
    const again = importCli(file);
    expect(again.code).toBe(1);
    expect(again.err).toMatch(/already imported/);
    expect(tallyCount()).toBe(before + 2);
    const forced = importCli(file, "--force");
    expect(forced.code).toBe(0);
    expect(tallyCount()).toBe(before + 4);
  });

  it("answers a missing file or unknown option without a stack trace", () => {
    const missing = importCli(path.join(ctx.dir, "nope.csv"));
    expect(missing.code).toBe(1);
    expect(missing.err).toMatch(/no such file/);
    const unknown = importCli("x.csv", "--delete-everything");
    expect(unknown.code).toBe(2);
    expect(unknown.err).toMatch(/unknown option/);
  });
});
