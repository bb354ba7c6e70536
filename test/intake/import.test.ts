import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { rawDb } from "@/lib/db/client";
import { formatProblem } from "@/lib/intake/csv-read";
import { importCsv, type ImportOutcome } from "@/lib/intake/import";
import { useTempDatabase } from "../helpers/temp-db";
import { cellTotal, count, seedPlant, system } from "./fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
  await seedPlant();
});
afterAll(async () => ctx.cleanup());

function clearData() {
  const s = rawDb();
  s.exec("DELETE FROM TallyEntry; DELETE FROM InspectionCount; DELETE FROM ImportBatch;");
}
beforeEach(clearData);

const messages = (o: ImportOutcome) => o.problems.map(formatProblem);
const run = (text: string | Buffer, options: Partial<Parameters<typeof importCsv>[1]> = {}) =>
  importCsv(typeof text === "string" ? Buffer.from(text, "utf8") : text, { actor: system, fileName: "t.csv", ...options });

const HEADER = "date,shift,line,category,count\n";

describe("CSV import refuses a bad row with its file line number (header is line 1)", () => {
  const cases: [string, string, string][] = [
    ["an impossible date", "2026-02-30,A,L1,scratch,1", 'line 3: date "2026-02-30" is not a real calendar date'],
    ["a date in another form", "02/03/2026,A,L1,scratch,1", 'line 3: date "02/03/2026" is not in YYYY-MM-DD form'],
    ["a negative count", "2026-03-02,A,L1,scratch,-4", 'line 3: count "-4" is negative'],
    ["a fractional count", "2026-03-02,A,L1,scratch,2.5", 'line 3: count "2.5" is not a whole number'],
    ["an empty count", "2026-03-02,A,L1,scratch,", "line 3: count is empty"],
    ["a non-numeric count", "2026-03-02,A,L1,scratch,seven", 'line 3: count "seven" is not a number'],
    ["a count above 1,000,000", "2026-03-02,A,L1,scratch,1000001", "line 3: count 1000001 is above the limit of 1,000,000 in one row"],
    ["an unknown line", "2026-03-02,A,L9,scratch,1", 'line 3: unknown line "L9" (add it in Setup first, or import with --add-missing)'],
    ["an unknown category", "2026-03-02,A,L1,bubble,1", 'line 3: unknown category "bubble" (add it in Setup first, or import with --add-missing)'],
    ["an unknown shift", "2026-03-02,Z,L1,scratch,1", 'line 3: unknown shift "Z" (add it in Setup first, or import with --add-missing)'],
    ["a code outside the pattern", "2026-03-02,A,L 1,scratch,1", `line 3: line "L 1" is not a valid code (1–32 letters, digits, '-', '_' or '.')`],
    ["a code too long", `2026-03-02,A,L1,${"x".repeat(33)},1`, `line 3: category "${"x".repeat(33)}" is not a valid code (1–32 letters, digits, '-', '_' or '.')`],
    ["a short row", "2026-03-02,A,L1", "line 3: short row: 3 fields, the header has 5"],
    ["a long row", "2026-03-02,A,L1,scratch,1,extra", "line 3: 6 fields, the header has 5"],
  ];
  for (const [what, row, expected] of cases) {
    it(`${what}`, async () => {
      const outcome = await run(`${HEADER}2026-03-02,A,L1,dent,2\n${row}\n2026-03-02,B,L2,crack,3\n`);
      expect(outcome.status).toBe("refused");
      expect(messages(outcome)).toEqual([expected]);
      expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);
    });
  }

  it("names a missing column on line 1", async () => {
    const outcome = await run("date,shift,line,count\n2026-03-02,A,L1,2\n");
    expect(outcome.status).toBe("refused");
    expect(messages(outcome)[0]).toMatch(/^line 1: missing column "category"/);
  });

  it("names an unknown and a duplicated column", async () => {
    const outcome = await run("date,shift,line,category,count,colour,Count\n");
    expect(messages(outcome)).toEqual(
      expect.arrayContaining([expect.stringMatching(/^line 1: column "Count" appears twice/), expect.stringMatching(/^line 1: unknown column "colour"/)]),
    );
  });

  it("lists every problem of every row, not only the first", async () => {
    const outcome = await run(`${HEADER}2026-02-30,A,L1,scratch,-1\n2026-03-02,A,L1,scratch,1\n2026-03-02,A,L1\n2026-03-02,A,L1,nope,x\n`);
    expect(messages(outcome)).toEqual([
      'line 2: date "2026-02-30" is not a real calendar date',
      'line 2: count "-1" is negative',
      "line 4: short row: 3 fields, the header has 5",
      'line 5: unknown category "nope" (add it in Setup first, or import with --add-missing)',
      'line 5: count "x" is not a number',
    ]);
  });

  it("counts lines inside a quoted multi-line note, and skips blank lines without losing count", async () => {
    const text = 'date,shift,line,category,count,note\n2026-03-02,A,L1,scratch,1,"two\nlines"\n\n2026-03-02,A,L1,dent,-1,\n';
    const outcome = await run(text);
    expect(messages(outcome)).toEqual(['line 5: count "-1" is negative']);
  });

  it("reports a broken quote with its line and writes nothing", async () => {
    const outcome = await run(`${HEADER}2026-03-02,A,L1,scratch,1\n2026-03-02,A,"L1,dent,2\n2026-03-02,A,L1,crack,3\n`);
    expect(outcome.status).toBe("refused");
    expect(messages(outcome)).toEqual([expect.stringMatching(/^line 3: a quoted field starts here and is never closed/)]);
  });

  it("refuses an empty file and a header without rows", async () => {
    expect(messages(await run(""))).toEqual(["the file is empty: no header and no rows"]);
    expect(messages(await run(HEADER))).toEqual(["the file has a header but no rows"]);
  });
});

describe("CSV import is all or nothing", () => {
  it("writes no row, batch or master data when one row of many is bad", async () => {
    const rows = Array.from({ length: 500 }, (_, i) => `2026-03-${String((i % 28) + 1).padStart(2, "0")},A,L1,scratch,${i}`);
    rows[321] = "2026-03-05,A,L1,scratch,1.5";
    const outcome = await run(HEADER + rows.join("\n") + "\n", { addMissing: true });
    expect(outcome.status).toBe("refused");
    expect(messages(outcome)).toEqual(['line 323: count "1.5" is not a whole number']);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);
    expect(count("SELECT COUNT(*) AS n FROM ImportBatch")).toBe(0);
  });

  it("rolls back every row when the write itself fails half-way", async () => {
    // A trigger makes the 3rd insert fail inside the transaction.
    rawDb().exec(`CREATE TRIGGER fail_third BEFORE INSERT ON TallyEntry WHEN (SELECT COUNT(*) FROM TallyEntry) >= 2
                  BEGIN SELECT RAISE(ABORT, 'disk full (simulated)'); END;`);
    try {
      await expect(run(`${HEADER}2026-03-02,A,L1,scratch,1\n2026-03-02,A,L1,dent,2\n2026-03-02,A,L1,crack,3\n`)).rejects.toThrow(/simulated/);
      expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);
      expect(count("SELECT COUNT(*) AS n FROM ImportBatch")).toBe(0);
    } finally {
      rawDb().exec("DROP TRIGGER fail_third");
    }
  });
});

describe("CSV import reads real-world files", () => {
  it("takes columns in any order, any header case, a BOM and CRLF line ends", async () => {
    const text = "\uFEFFCount,Category,LINE,Date,Shift,Note\r\n5,scratch,L1,2026-03-02,A,\"first, quoted\"\r\n7,dent,L2,2026-03-02,N,\r\n";
    const outcome = await run(Buffer.from(text, "utf8"));
    expect(outcome.problems).toEqual([]);
    expect(outcome.status).toBe("imported");
    expect(outcome.kind).toBe("tallies");
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(5);
    expect(cellTotal("2026-03-02", "N", "L2", "dent")).toBe(7);
    const note = rawDb().prepare("SELECT note, source FROM TallyEntry WHERE count = 5").get() as { note: string; source: string };
    expect(note).toEqual({ note: "first, quoted", source: "import" });
  });

  it("imports a file without a trailing newline, with padded cells, products and retired categories (history)", async () => {
    const outcome = await run("date,shift,line,category,count,product\n 2026-03-02 , A , L1 , old , 3 , PX");
    expect(outcome.problems).toEqual([]);
    expect(cellTotal("2026-03-02", "A", "L1", "old")).toBe(3);
  });

  it("tells an inspected-units file by its header", async () => {
    const outcome = await run("units,line,shift,date,product\n9000,L1,A,2026-03-02,PX\n8000,L2,B,2026-03-02,\n");
    expect(outcome.status).toBe("imported");
    expect(outcome.kind).toBe("units");
    expect(count("SELECT SUM(units) AS n FROM InspectionCount")).toBe(17000);
    const bad = await run("date,shift,line,units\n2026-03-02,A,L1,-5\n");
    expect(messages(bad)).toEqual(['line 2: units "-5" is negative']);
  });

  it("dry run checks everything and writes nothing", async () => {
    const outcome = await run(`${HEADER}2026-03-02,A,L1,scratch,1\n`, { dryRun: true });
    expect(outcome.status).toBe("checked");
    expect(outcome.rows).toBe(1);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(0);
  });
});

describe("the same content twice", () => {
  it("is refused the second time (SHA-256 of the bytes) unless forced", async () => {
    const text = `${HEADER}2026-03-02,A,L1,scratch,4\n`;
    const first = await run(text);
    expect(first.status).toBe("imported");
    const again = await run(text, { fileName: "renamed.csv" });
    expect(again.status).toBe("refused");
    expect(again.duplicateOf?.batchId).toBe(first.batchId);
    expect(messages(again)[0]).toMatch(/already imported \(batch #\d+/);
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(4);

    const forced = await run(text, { force: true });
    expect(forced.status).toBe("imported");
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(8);
    expect(count("SELECT forced AS n FROM ImportBatch WHERE id = ?", forced.batchId)).toBe(1);
    expect(count("SELECT COUNT(*) AS n FROM AuditEvent WHERE action = 'import.forced' AND entityId = ?", String(forced.batchId))).toBe(1);
  });

  it("treats a one-byte difference as different content", async () => {
    expect((await run(`${HEADER}2026-03-02,A,L1,scratch,4\n`)).status).toBe("imported");
    expect((await run(`${HEADER}2026-03-02,A,L1,scratch,4\r\n`)).status).toBe("imported");
  });
});

describe("--add-missing", () => {
  it("creates unknown lines, categories, products (and a retired shift until its times are set), each audited", async () => {
    const outcome = await run(`date,shift,line,category,count,product\n2026-03-02,Z9,L7,bubble,2,PNEW\n2026-03-03,Z9,L7,bubble,1,\n`, {
      addMissing: true,
      fileName: "history.csv",
    });
    expect(outcome.problems).toEqual([]);
    expect(outcome.created).toEqual({ line: ["L7"], shift: ["Z9"], category: ["bubble"], product: ["PNEW"] });
    expect(rawDb().prepare("SELECT code, name, active FROM Line WHERE code = 'L7'").get()).toEqual({ code: "L7", name: "L7", active: 1 });
    expect(rawDb().prepare("SELECT active FROM Shift WHERE code = 'Z9'").get()).toEqual({ active: 0 });
    expect(cellTotal("2026-03-02", "Z9", "L7", "bubble")).toBe(2);
    const audits = rawDb().prepare("SELECT action, reason FROM AuditEvent WHERE action LIKE '%.create' ORDER BY id").all() as { action: string; reason: string }[];
    expect(audits.map((a) => a.action)).toEqual(["line.create", "shift.create", "category.create", "product.create"]);
    expect(audits[0].reason).toMatch(/history\.csv/);
  });

  it("still refuses a code outside the pattern", async () => {
    const outcome = await run(`${HEADER}2026-03-02,A,L/1,scratch,2\n`, { addMissing: true });
    expect(messages(outcome)).toEqual([`line 2: line "L/1" is not a valid code (1–32 letters, digits, '-', '_' or '.')`]);
  });
});
