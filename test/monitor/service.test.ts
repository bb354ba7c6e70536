/**
 * The scan service against a real, migrated SQLite file (no mocks): results equal the
 * one-shot scans over the same current rows; repeated requests are served from the kept
 * result; late corrections retest exactly the windows covering their dates.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { rawDb } from "@/lib/db/client";
import { scanHistory, scanRates, scanWindows, type ScanConfig, type TallyRow, type UnitsRow } from "@/lib/monitor";
import { addDays, dayNumber } from "@/lib/monitor/dates";
import { forgetKeptResults, runAllComparisons, runComparison, windowDetail } from "@/lib/monitor/service";
import { useTempDatabase } from "../helpers/temp-db";
import { codes, simulatePlant } from "./helpers/simulate";
import { insertComparison, insertMasterData, insertTallies, insertUnits, type Ids } from "./helpers/insert-plant";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let ids: Ids;
const lines = codes("L", 5);
const shifts = ["A", "B", "C"];
const categories = codes("C", 8);
const families = { C01: "surface", C02: "surface", C07: "seal", C08: "seal" };

beforeAll(async () => {
  ctx = await useTempDatabase();
  forgetKeptResults();
  const db = rawDb();
  ids = insertMasterData(db, { lines: [...lines, "L06"], shifts, categories, families });
  const { tallies, units } = simulatePlant(
    {
      start: "2026-01-05",
      days: 80,
      lines,
      shifts,
      categories,
      weights: [9, 8, 7, 6, 5, 4, 3, 2],
      unitsPerShift: 1500,
      defectsPerUnit: 0.01,
      changes: [{ line: "L03", category: "C07", from: "2026-02-20", to: "2026-03-05", factor: 3 }],
    },
    77,
  );
  insertTallies(db, ids, tallies);
  insertUnits(db, ids, units);
  insertComparison(db, { code: "lines", compare: "line", windowDays: 7, stepDays: 1 });
  insertComparison(db, { code: "l1-shifts", compare: "shift", lines: ["L01"], windowDays: 7, stepDays: 2 });
  insertComparison(db, { code: "l3-history", compare: "history", lines: ["L03"], windowDays: 7, stepDays: 1, historyWeeks: 3 });
});
afterAll(async () => ctx.cleanup());

/** Current tallies straight from SQL, the reference the service must agree with. */
function currentRows(): TallyRow[] {
  return rawDb()
    .prepare(
      `SELECT e.productionDate AS date, l.code AS line, s.code AS shift, c.code AS category, e.count AS count
       FROM TallyEntry e JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId JOIN DefectCategory c ON c.id = e.categoryId
       WHERE NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)`,
    )
    .all() as TallyRow[];
}

function currentUnits(): UnitsRow[] {
  return rawDb()
    .prepare(
      `SELECT e.productionDate AS date, l.code AS line, s.code AS shift, e.units AS units
       FROM InspectionCount e JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId
       WHERE NOT EXISTS (SELECT 1 FROM InspectionCount x WHERE x.supersedesId = e.id)`,
    )
    .all() as UnitsRow[];
}

const linesConfig: ScanConfig = { compare: "line", windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0, sparse: "auto", families };

/** Supersedes the entry of one cell (date, line, shift, category) with a new count. */
function correct(date: string, line: string, shift: string, category: string, count: number): void {
  const old = rawDb()
    .prepare(
      `SELECT e.id FROM TallyEntry e WHERE e.productionDate = ? AND e.lineId = ? AND e.shiftId = ? AND e.categoryId = ?
       AND NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)`,
    )
    .pluck()
    .get(date, ids.line.get(line), ids.shift.get(shift), ids.category.get(category)) as number | undefined;
  insertTallies(rawDb(), ids, [{ date, line, shift, category, count }], [old ?? null]);
}

/** The newest inspected-units entry of one sheet (date, line, shift), to supersede it. */
function latestUnitsId(date: string, line: string, shift: string): number {
  return rawDb()
    .prepare(`SELECT id FROM InspectionCount WHERE productionDate = ? AND lineId = ? AND shiftId = ? ORDER BY id DESC LIMIT 1`)
    .pluck()
    .get(date, ids.line.get(line), ids.shift.get(shift)) as number;
}

describe("runComparison", () => {
  it("equals scanWindows and scanRates over the same current rows", async () => {
    const run = (await runComparison("lines"))!;
    expect(run.computed.how).toBe("built");
    const reference = scanWindows(currentRows(), linesConfig);
    expect(run.windows).toEqual(reference.windows);
    expect(run.episodes).toEqual(reference.episodes);
    expect(run.rates).toEqual(scanRates(currentRows(), currentUnits(), linesConfig));
    expect(run.episodes.length).toBeGreaterThan(0);
    expect(run.episodes[0].drivers[0]).toMatchObject({ row: "L03", category: "C07" });
    expect(run.labels.rows.L03).toBe("Line L03");
    expect(run.labels.categories.C07).toEqual({ name: "Category C07", family: "seal" });
    expect(run.firstDate).toBe("2026-01-05");
    expect(run.lastDate).toBe(addDays("2026-01-05", 79));
  });

  it("answers by id as by code, and serves a repeated request from the kept result", async () => {
    const byCode = (await runComparison("lines"))!;
    const byId = (await runComparison(byCode.comparison.id))!;
    expect(byId.computed.how).toBe("kept");
    expect(byId.windows).toBe(byCode.windows);
    expect(await runComparison("no-such-comparison")).toBeNull();
  });

  it("equals scanWindows for shifts within a line, and scanHistory for a line against its past", async () => {
    const shiftsRun = (await runComparison("l1-shifts"))!;
    expect(shiftsRun.windows).toEqual(scanWindows(currentRows(), { ...linesConfig, compare: "shift", lines: ["L01"], stepDays: 2 }).windows);
    const history = (await runComparison("l3-history"))!;
    const reference = scanHistory(currentRows(), { line: "L03", windowDays: 7, stepDays: 1, historyWeeks: 3, alpha: 0.05, adjust: "bh", minEffect: 0, families });
    expect(history.windows).toEqual(reference.windows);
    expect(history.episodes).toEqual(reference.episodes);
    expect(history.windows[0].start).toBe(addDays("2026-01-05", 21));
    expect(history.episodes[0].drivers[0]).toMatchObject({ row: "current", category: "C07" });
    expect(history.rates.windows[0].groups.map((g) => g.group)).toEqual(["current", "baseline"]);
  });

  it("lists every active comparison for the overview", async () => {
    const all = await runAllComparisons();
    expect(all.map((r) => r.comparison.code)).toEqual(["l1-shifts", "l3-history", "lines"]);
    expect(all.every((r) => ["flagged", "quiet", "not-testable"].includes(r.status))).toBe(true);
  });
});

describe("late and corrected data", () => {
  it("a late correction retests exactly the windows covering its date, and matches a fresh scan", async () => {
    const before = (await runComparison("lines"))!;
    const date = "2026-01-20";
    correct(date, "L02", "B", "C05", 60);
    const after = (await runComparison("lines"))!;
    expect(after.computed).toMatchObject({ how: "patched", retestedWindows: 7 });
    const d = dayNumber(date);
    const covers = (w: { start: string; end: string }) => dayNumber(w.start) <= d && d <= dayNumber(w.end);
    const changed = after.windows.filter((w, i) => w.n !== before.windows[i].n || w.chiSquare !== before.windows[i].chiSquare);
    expect(changed.map((w) => w.start)).toEqual(before.windows.filter(covers).map((w) => w.start));
    expect(changed).toHaveLength(7);
    // Windows not covering the date keep their raw statistics; adjusted p may move (BH is across windows).
    after.windows.forEach((w, i) => {
      if (!covers(w)) expect([w.n, w.chiSquare, w.pValue]).toEqual([before.windows[i].n, before.windows[i].chiSquare, before.windows[i].pValue]);
    });
    expect(after.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
    // The result handed out before the correction did not change under its holder.
    expect(before.windows.find(covers)!.n).not.toBe(after.windows.find(covers)!.n);
  });

  it("a correction that moves a count to another date touches both dates' windows", async () => {
    const old = rawDb()
      .prepare(`SELECT id, count FROM TallyEntry WHERE productionDate = '2026-02-02' AND lineId = ? AND shiftId = ? AND categoryId = ? ORDER BY id DESC LIMIT 1`)
      .get(ids.line.get("L04"), ids.shift.get("A"), ids.category.get("C01")) as { id: number; count: number };
    insertTallies(rawDb(), ids, [{ date: "2026-02-10", line: "L04", shift: "A", category: "C01", count: old.count + 5 }], [old.id]);
    const after = (await runComparison("lines"))!;
    expect(after.computed).toMatchObject({ how: "patched", retestedWindows: 14 });
    expect(after.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  });

  it("data for a new last day extend the plan with the new windows", async () => {
    const before = (await runComparison("lines"))!;
    const next = addDays(before.lastDate!, 1);
    const rows = lines.flatMap((line) => categories.map((category) => ({ date: next, line, shift: "A", category, count: 3 })));
    insertTallies(rawDb(), ids, rows);
    const after = (await runComparison("lines"))!;
    expect(after.computed.how).toBe("patched");
    expect(after.lastDate).toBe(next);
    expect(after.windows).toHaveLength(before.windows.length + 1);
    expect(after.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
    expect(after.rates).toEqual(scanRates(currentRows(), currentUnits(), linesConfig));
  });

  it("a units correction changes only the rate windows covering its date", async () => {
    const before = (await runComparison("lines"))!;
    insertUnits(rawDb(), ids, [{ date: "2026-01-30", line: "L01", shift: "C", units: 100 }], [latestUnitsId("2026-01-30", "L01", "C")]);
    const after = (await runComparison("lines"))!;
    expect(after.computed).toMatchObject({ how: "patched", retestedWindows: 7 });
    expect(after.windows.map((w) => w.chiSquare)).toEqual(before.windows.map((w) => w.chiSquare));
    const changed = after.rates.windows.filter((w, i) => w.statistic !== before.rates.windows[i].statistic).map((w) => w.start);
    expect(changed).toEqual(after.rates.windows.filter((w) => w.start <= "2026-01-30" && w.end >= "2026-01-30").map((w) => w.start));
    expect(after.rates).toEqual(scanRates(currentRows(), currentUnits(), linesConfig));
  });

  it("added entries, a correction of one of them and a units change within one patch match fresh scans of all three kinds", async () => {
    for (const code of ["lines", "l1-shifts", "l3-history"]) await runComparison(code);
    // A second sheet for cells that already have entries: the current sum is both entries.
    insertTallies(rawDb(), ids, [
      { date: "2026-02-24", line: "L01", shift: "B", category: "C03", count: 4 },
      { date: "2026-02-24", line: "L03", shift: "A", category: "C07", count: 9 },
    ]);
    // Corrected before any read: the new entry and its supersession arrive in one change set.
    const fresh = rawDb().prepare("SELECT MAX(id) FROM TallyEntry").pluck().get() as number;
    insertTallies(rawDb(), ids, [{ date: "2026-02-25", line: "L03", shift: "A", category: "C07", count: 2 }], [fresh]);
    correct("2026-02-26", "L01", "A", "C01", 0);
    insertUnits(rawDb(), ids, [{ date: "2026-02-24", line: "L01", shift: "B", units: 900 }], [latestUnitsId("2026-02-24", "L01", "B")]);
    const lineRun = (await runComparison("lines"))!;
    expect(lineRun.computed.how).toBe("patched");
    expect(lineRun.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
    expect(lineRun.rates).toEqual(scanRates(currentRows(), currentUnits(), linesConfig));
    const shiftConfig: ScanConfig = { ...linesConfig, compare: "shift", lines: ["L01"], stepDays: 2 };
    const shiftRun = (await runComparison("l1-shifts"))!;
    expect(shiftRun.computed.how).toBe("patched");
    expect(shiftRun.windows).toEqual(scanWindows(currentRows(), shiftConfig).windows);
    expect(shiftRun.rates).toEqual(scanRates(currentRows(), currentUnits(), shiftConfig));
    const history = (await runComparison("l3-history"))!;
    expect(history.computed.how).toBe("patched");
    const reference = scanHistory(currentRows(), { line: "L03", windowDays: 7, stepDays: 1, historyWeeks: 3, alpha: 0.05, adjust: "bh", minEffect: 0, families });
    expect(history.windows).toEqual(reference.windows);
  });

  it("entries for a line the scan has not seen yet rebuild it (new group), and match a fresh scan", async () => {
    const before = (await runComparison("lines"))!;
    expect(before.windows[0].groups).not.toContain("L06");
    insertTallies(rawDb(), ids, [{ date: "2026-02-03", line: "L06", shift: "A", category: "C01", count: 4 }]);
    const after = (await runComparison("lines"))!;
    expect(after.computed.how).toBe("built");
    expect(after.windows.find((w) => w.start === "2026-02-01")!.groups).toContain("L06");
    expect(after.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  });

  it("an entry deleted in place (outside the correction scheme) is caught with the next entry and rebuilds", async () => {
    await runComparison("lines");
    const victim = rawDb().prepare("SELECT id FROM TallyEntry WHERE productionDate = '2026-01-12' ORDER BY id LIMIT 1").pluck().get() as number;
    rawDb().prepare("DELETE FROM TallyEntry WHERE id = ? AND NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = ?)").run(victim, victim);
    insertTallies(rawDb(), ids, [{ date: "2026-01-13", line: "L01", shift: "A", category: "C02", count: 1 }]);
    const after = (await runComparison("lines"))!;
    expect(after.computed.how).toBe("built");
    expect(after.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  });

  it("a change of the comparison's settings rebuilds", async () => {
    rawDb().prepare("UPDATE Comparison SET windowDays = 14, updatedAt = CURRENT_TIMESTAMP WHERE code = 'lines'").run();
    const run = (await runComparison("lines"))!;
    expect(run.computed.how).toBe("built");
    expect(run.windows).toEqual(scanWindows(currentRows(), { ...linesConfig, windowDays: 14 }).windows);
    rawDb().prepare("UPDATE Comparison SET windowDays = 7, updatedAt = CURRENT_TIMESTAMP WHERE code = 'lines'").run();
  });
});

describe("windowDetail", () => {
  it("gives the full table analysis, drivers and defects per unit of one window", async () => {
    const run = (await runComparison("lines"))!;
    const peak = run.episodes[0].peak;
    const detail = (await windowDetail("lines", peak.start))!;
    expect(detail.window).toEqual(peak);
    expect(detail.rows).toEqual(peak.groups);
    expect(detail.columns).toEqual(peak.categories);
    expect(detail.observed.flat().reduce((a, b) => a + b, 0)).toBe(peak.n);
    expect(detail.analysis!.chiSquare).toBeCloseTo(peak.chiSquare!, 9);
    expect(detail.analysis!.cramersVCorrected).toBeCloseTo(peak.cramersVCorrected!, 12);
    expect(detail.drivers).toEqual(peak.drivers);
    expect(detail.rates!.start).toBe(peak.start);
    const inspected = detail.rates!.groups.filter((g) => g.units > 0);
    expect(inspected.map((g) => g.group)).toEqual(lines);
    expect(inspected.every((g) => g.defectsPerUnit! > 0 && g.lower !== null && g.upper! > g.lower!)).toBe(true);
    // L06 (one tally, no inspected units) is left out of the rate test and says so.
    expect(detail.rates!.droppedGroups).toEqual(["L06"]);
    expect(await windowDetail("lines", "1999-01-01")).toBeNull();
  });

  it("gives a history window's current-versus-baseline table", async () => {
    const run = (await runComparison("l3-history"))!;
    const w = run.windows[10];
    const detail = (await windowDetail("l3-history", w.start))!;
    expect(detail.rows).toEqual(["current", "baseline"]);
    expect(detail.observed.flat().reduce((a, b) => a + b, 0)).toBe(w.n);
    expect(detail.rates!.groups.map((g) => g.group)).toEqual(["current", "baseline"]);
    expect(detail.labels.rows.baseline).toMatch(/3 weeks/);
  });
});
