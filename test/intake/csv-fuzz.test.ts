import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { readImportFile, type CodeLookup } from "@/lib/intake/csv-read";

/**
 * Property tests of the CSV reader: arbitrary and deliberately malformed input is
 * answered with problems (each tied to a file line or to the whole file) or with rows,
 * never with an exception, and never with both rows accepted and problems ignored.
 */

const lookup: CodeLookup = {
  line: new Map([["L1", 1], ["L2", 2]]),
  shift: new Map([["A", 1], ["N", 2]]),
  category: new Map([["scratch", 1], ["dent", 2]]),
  product: new Map([["PX", 1]]),
};

const lineCount = (text: string) => text.split("\n").length;

async function check(bytes: Uint8Array | string) {
  const result = await readImportFile(typeof bytes === "string" ? Buffer.from(bytes, "utf8") : Buffer.from(bytes), lookup);
  const text = typeof bytes === "string" ? bytes : Buffer.from(bytes).toString("utf8");
  for (const p of result.problems) {
    expect(p.message.length).toBeGreaterThan(0);
    if (p.line !== null) {
      expect(Number.isInteger(p.line)).toBe(true);
      expect(p.line).toBeGreaterThanOrEqual(1);
      expect(p.line).toBeLessThanOrEqual(lineCount(text) + 1);
    }
  }
  // A clean read has rows; a read with problems is refused by the importer.
  if (result.problems.length === 0) expect(result.rows).toBeGreaterThan(0);
  expect(result.contentHash).toMatch(/^[0-9a-f]{64}$/);
  return result;
}

const cell = fc.oneof(
  fc.constantFrom("2026-03-02", "2026-02-30", "L1", "L2", "A", "N", "scratch", "dent", "PX", "3", "-1", "2.5", "", " ", "1000001", "x y", "=1+1"),
  fc.string({ maxLength: 12 }),
  fc.constantFrom('"', '""', '"a,b"', '"unclosed', 'a"b', "\r", "\n", "\r\n", ",", "\uFEFF", "\u0000", "\uFFFD"),
);
const header = fc.oneof(
  fc.constant("date,shift,line,category,count"),
  fc.constant("date,shift,line,units"),
  fc.constant("DATE,Count,category,line,shift,note,product"),
  fc.array(fc.constantFrom("date", "shift", "line", "category", "count", "units", "note", "product", "extra", ""), { maxLength: 8 }).map((h) => h.join(",")),
);
const csv = fc
  .tuple(
    fc.boolean(),
    header,
    fc.array(fc.array(cell, { maxLength: 8 }).map((cells) => cells.join(",")), { maxLength: 12 }),
    fc.constantFrom("\n", "\r\n"),
  )
  .map(([bom, h, rows, eol]) => `${bom ? "\uFEFF" : ""}${[h, ...rows].join(eol)}`);

describe("CSV reader under malformed input", () => {
  it("never throws on structured but malformed CSV", async () => {
    await fc.assert(fc.asyncProperty(csv, async (text) => void (await check(text))), { numRuns: 400 });
  });

  it("never throws on arbitrary bytes (invalid UTF-8 included)", async () => {
    await fc.assert(fc.asyncProperty(fc.uint8Array({ maxLength: 300 }), async (bytes) => void (await check(bytes))), { numRuns: 300 });
  });

  it("never throws on arbitrary text after a valid header", async () => {
    await fc.assert(
      fc.asyncProperty(fc.string({ maxLength: 300 }), async (text) => void (await check(`date,shift,line,category,count\n${text}`))),
      { numRuns: 300 },
    );
  });

  it("accepts exactly the rows a generator of valid rows makes, and reports a bad count at its line", async () => {
    const row = fc.record({
      date: fc.constantFrom("2026-03-01", "2026-03-02", "2024-02-29"),
      shift: fc.constantFrom("A", "N"),
      line: fc.constantFrom("L1", "L2"),
      category: fc.constantFrom("scratch", "dent"),
      count: fc.integer({ min: 0, max: 1_000_000 }),
    });
    await fc.assert(
      fc.asyncProperty(fc.array(row, { minLength: 1, maxLength: 30 }), fc.nat(), async (rows, pick) => {
        const lines = rows.map((r) => `${r.date},${r.shift},${r.line},${r.category},${r.count}`);
        const good = await check(`date,shift,line,category,count\n${lines.join("\n")}\n`);
        expect(good.problems).toEqual([]);
        expect(good.rows).toBe(rows.length);
        expect(good.summary.total).toBe(rows.reduce((s, r) => s + r.count, 0));
        const broken = [...lines];
        const at = pick % broken.length;
        broken[at] = broken[at].replace(/,\d+$/, ",-3");
        const bad = await check(`date,shift,line,category,count\n${broken.join("\n")}\n`);
        expect(bad.problems).toEqual([{ line: at + 2, message: 'count "-3" is negative' }]);
      }),
      { numRuns: 200 },
    );
  });
});
