/**
 * The scan service's scheduling against a real, migrated SQLite file (no mocks): the
 * warm-up builds in slices and answers other work between them, a request for a
 * comparison not yet built waits for that one alone, the sliced build equals the
 * one-shot scan, the refresh policy (fresh reads see a write; bounded reads say how far
 * behind they are and the background refresh catches up), and a comparison naming a
 * line that no longer exists is reported, not thrown.
 *
 * Expected scan values come from scanWindows / scanRates / scanHistory over the same
 * current rows (test/monitor/service.test.ts checks those against R); nothing here is a
 * statistical reference of its own.
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { rawDb } from "@/lib/db/client";
import { scanHistory, scanWindows, type ScanConfig, type TallyRow } from "@/lib/monitor";
import {
  forgetKeptResults,
  HARD_LAG_FACTOR,
  REFRESH_EVERY_MS,
  runAllComparisons,
  runComparison,
  runComparisonIfReady,
  scanProblem,
  startWarmUp,
  warmUpStatus,
  windowDetail,
} from "@/lib/monitor/service";
import { buildLiveScan, liveOutput, liveScanSteps } from "@/lib/monitor/service-build";
import { readComparison, readMasterData } from "@/lib/monitor/service-settings";
import { useTempDatabase } from "../helpers/temp-db";
import { codes, simulatePlant } from "./helpers/simulate";
import { insertComparison, insertMasterData, insertTallies, insertUnits, type Ids } from "./helpers/insert-plant";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let ids: Ids;
const lines = codes("L", 6);
const shifts = ["A", "B", "C"];
const categories = codes("C", 10);
const families = { C01: "surface", C02: "surface" };
const START = "2025-06-02";
const DAYS = 200;

beforeAll(async () => {
  ctx = await useTempDatabase();
  const db = rawDb();
  ids = insertMasterData(db, { lines, shifts, categories, families });
  const { tallies, units } = simulatePlant(
    {
      start: START,
      days: DAYS,
      lines,
      shifts,
      categories,
      weights: [10, 9, 8, 7, 6, 5, 4, 3, 2, 1],
      unitsPerShift: 1200,
      defectsPerUnit: 0.012,
      changes: [{ line: "L02", category: "C04", from: "2025-09-01", to: "2025-09-15", factor: 3 }],
    },
    20261202,
  );
  insertTallies(db, ids, tallies);
  insertUnits(db, ids, units);
  insertComparison(db, { code: "lines", compare: "line", windowDays: 7, stepDays: 1 });
  insertComparison(db, { code: "shifts", compare: "shift", windowDays: 7, stepDays: 1 });
  for (const line of lines) insertComparison(db, { code: `history-${line}`, compare: "history", lines: [line], windowDays: 7, stepDays: 1, historyWeeks: 4 });
});
afterAll(async () => {
  forgetKeptResults();
  await ctx.cleanup();
});
beforeEach(() => forgetKeptResults());

function currentRows(): TallyRow[] {
  return rawDb()
    .prepare(
      `SELECT e.productionDate AS date, l.code AS line, s.code AS shift, c.code AS category, e.count AS count
       FROM TallyEntry e JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId JOIN DefectCategory c ON c.id = e.categoryId
       WHERE NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)`,
    )
    .all() as TallyRow[];
}

const linesConfig: ScanConfig = { compare: "line", windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0, sparse: "auto", families };
const nextImmediate = () => new Promise<void>((r) => setImmediate(r));

/** One floor sheet (every category of one line and shift) for a date. */
function sheet(date: string, line: string, shift: string, count: number): TallyRow[] {
  return categories.map((category) => ({ date, line, shift, category, count }));
}

describe("warm-up", () => {
  it("builds every comparison in slices and serves other work between slices and between comparisons", async () => {
    expect(warmUpStatus().state).toBe("idle");
    let done = false;
    const warm = startWarmUp().then((s) => {
      done = true;
      return s;
    });
    // A stand-in for requests: one piece of work per turn of the event loop, noting what it saw.
    const seen: { ready: number; phase: string | null; code: string | null }[] = [];
    while (!done) {
      const s = warmUpStatus();
      seen.push({ ready: s.ready, phase: s.current?.step?.phase ?? null, code: s.current?.code ?? null });
      rawDb().prepare("SELECT 1").get();
      await nextImmediate();
    }
    const final = await warm;
    expect(final).toMatchObject({ state: "ready", total: 8, ready: 8, current: null });
    // Served during a build (one comparison part-way through its entries or windows) …
    expect(seen.some((x) => x.code === "lines" && (x.phase === "entries" || x.phase === "windows"))).toBe(true);
    // … and between comparisons, with some built and some not.
    const between = new Set(seen.map((x) => x.ready).filter((r) => r > 0 && r < 8));
    expect(between.size).toBeGreaterThanOrEqual(3);
    // Many turns: the builds did not hold the thread in a few long stretches.
    expect(seen.length).toBeGreaterThan(20);
    // Everything is kept now: the next read is answered from the kept result.
    expect((await runComparison("history-L06"))!.computed.how).toBe("built");
    expect((await runComparison("history-L06"))!.computed.how).toBe("kept");
  });

  it("a request for a comparison not yet built moves it to the front and waits for it alone", async () => {
    const warm = startWarmUp();
    await nextImmediate();
    const last = await runComparison("history-L06");
    const atAnswer = warmUpStatus();
    expect(last!.computed.how).toBe("built");
    expect(atAnswer.ready).toBeLessThan(atAnswer.total);
    // The same scan as the one-shot scan over the same rows.
    const reference = scanHistory(currentRows(), { line: "L06", windowDays: 7, stepDays: 1, historyWeeks: 4, alpha: 0.05, adjust: "bh", minEffect: 0, families });
    expect(last!.windows).toEqual(reference.windows);
    expect(last!.episodes).toEqual(reference.episodes);
    await warm;
    expect(warmUpStatus().state).toBe("ready");
  });

  it("runComparisonIfReady answers at once: the kept result when built, else null (never waits for a build)", async () => {
    const warm = startWarmUp();
    await nextImmediate();
    // Nothing built yet: null without waiting, for every comparison; an unknown code is undefined.
    expect(runComparisonIfReady("history-L06")).toBeNull();
    expect(runComparisonIfReady("lines")).toBeNull();
    expect(runComparisonIfReady("no-such-comparison")).toBeUndefined();
    // Part-way: some ready, some not, and what is ready equals what runComparison gives.
    while (warmUpStatus().ready < 2) await nextImmediate();
    const status = warmUpStatus();
    expect(status.state).toBe("warming");
    const answers = ["lines", "shifts", ...lines.map((l) => `history-${l}`)].map((code) => runComparisonIfReady(code));
    expect(answers.filter((a) => a !== null).length).toBeGreaterThanOrEqual(status.ready);
    expect(answers.some((a) => a === null)).toBe(true);
    const ready = answers.find((a) => a !== null)!;
    expect(ready.windows).toEqual((await runComparison(ready.comparison.code))!.windows);
    await warm;
    expect(runComparisonIfReady("history-L06")!.computed.pendingEntries).toBe(0);
  });

  it("runComparisonIfReady queues the build of a comparison nobody is building (no warm-up started)", async () => {
    expect(runComparisonIfReady("shifts")).toBeNull();
    // Its build was queued in the background: it turns up without any request waiting for it.
    for (let k = 0; k < 100_000 && !runComparisonIfReady("shifts"); k++) await nextImmediate();
    const run = runComparisonIfReady("shifts")!;
    expect(run.windows).toEqual((await runComparison("shifts"))!.windows);
  });

  it("a build in small slices equals the build in one go", () => {
    const db = rawDb();
    const master = readMasterData(db);
    for (const code of ["lines", "shifts", "history-L02"]) {
      const comparison = readComparison(db, code)!;
      const steps = liveScanSteps(db, comparison, master, 0.5);
      let slices = 0;
      let result;
      for (;;) {
        const next = steps.next();
        if (next.done) {
          result = next.value;
          break;
        }
        slices++;
      }
      expect(slices).toBeGreaterThan(10);
      expect(liveOutput(result)).toEqual(liveOutput(buildLiveScan(db, comparison, master)));
    }
  });

  it("entries committed while a build runs are in the first answer (the build's snapshot, then a patch)", async () => {
    const warm = startWarmUp();
    // Wait until "lines" is part-way through reading its entries, before the sheet's date (day 42).
    const early = () => {
      const c = warmUpStatus().current;
      return c?.code === "lines" && c.step?.phase === "entries" && c.step.done < 40;
    };
    while (!early()) await nextImmediate();
    insertTallies(rawDb(), ids, sheet("2025-07-14", "L03", "B", 9));
    const run = (await runComparison("lines"))!;
    // Built from the snapshot before the sheet, then patched with it: counted once, not twice or never.
    expect(run.computed).toMatchObject({ how: "patched", pendingEntries: 0 });
    expect(run.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
    await warm;
  });
});

describe("refresh policy", () => {
  it("a write followed by a fresh read (the default) sees the write", async () => {
    const before = (await runComparison("lines"))!;
    insertTallies(rawDb(), ids, sheet("2025-08-04", "L01", "A", 12));
    const after = (await runComparison("lines"))!;
    expect(after.computed).toMatchObject({ how: "patched", retestedWindows: 7, pendingEntries: 0 });
    expect(after.windows).not.toEqual(before.windows);
    expect(after.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  });

  it("a bounded read within the bound serves the kept result and says how far behind it is; the background refresh catches up", async () => {
    const before = (await runComparison("lines"))!;
    const asOfBefore = Date.parse(before.computed.asOf);
    insertTallies(rawDb(), ids, [...sheet("2025-08-11", "L04", "C", 7), ...sheet("2025-08-11", "L05", "C", 7)]);
    const stale = (await runComparison("lines", { maxLagMs: 60_000 }))!;
    expect(stale.computed.how).toBe("kept");
    expect(stale.computed.pendingEntries).toBe(2 * categories.length);
    expect(Date.parse(stale.computed.asOf)).toBeGreaterThanOrEqual(asOfBefore);
    expect(Date.parse(stale.computed.asOf)).toBeLessThanOrEqual(Date.parse(stale.computed.at));
    expect(stale.windows).toBe(before.windows);
    // Within REFRESH_EVERY_MS (plus the pass itself) the background pass has patched it.
    const until = Date.now() + REFRESH_EVERY_MS + 5_000;
    let caughtUp = stale;
    while (caughtUp.computed.pendingEntries > 0 && Date.now() < until) {
      await new Promise((r) => setTimeout(r, 100));
      caughtUp = (await runComparison("lines", { maxLagMs: 60_000 }))!;
    }
    expect(caughtUp.computed.pendingEntries).toBe(0);
    expect(caughtUp.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  }, 15_000);

  it("after a start, kept results follow the entries with no read asking", async () => {
    await startWarmUp();
    insertTallies(rawDb(), ids, sheet("2025-08-06", "L02", "C", 4));
    // The watcher looks every second and a pass follows at most REFRESH_EVERY_MS after the last.
    await new Promise((r) => setTimeout(r, REFRESH_EVERY_MS + 2_500));
    const run = (await runComparison("shifts", { maxLagMs: 60_000 }))!;
    expect(run.computed).toMatchObject({ how: "patched", pendingEntries: 0 });
    expect(run.windows).toEqual(scanWindows(currentRows(), { ...linesConfig, compare: "shift" }).windows);
    // The pass read the new entries once for both comparisons (they stood at the same ids): both are right.
    const lines = (await runComparison("lines", { maxLagMs: 60_000 }))!;
    expect(lines.computed).toMatchObject({ how: "patched", pendingEntries: 0 });
    expect(lines.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  }, 20_000);

  it("a bounded read just past the bound is served as it stands and starts the refresh at once", async () => {
    await runComparison("lines");
    insertTallies(rawDb(), ids, sheet("2025-08-13", "L06", "B", 6));
    await new Promise((r) => setTimeout(r, 300));
    // 300 ms behind: past a 100 ms bound, within HARD_LAG_FACTOR × 100 ms.
    const stale = (await runComparison("lines", { maxLagMs: 100 }))!;
    expect(stale.computed).toMatchObject({ how: "kept", pendingEntries: categories.length });
    // Started at once, not after REFRESH_EVERY_MS.
    await new Promise((r) => setTimeout(r, 500));
    expect(REFRESH_EVERY_MS).toBeGreaterThan(500);
    const after = (await runComparison("lines", { maxLagMs: 100_000 }))!;
    expect(after.computed.pendingEntries).toBe(0);
    expect(after.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  });

  it("a bounded read past HARD_LAG_FACTOR × the bound brings the result up to date itself", async () => {
    await runComparison("lines");
    insertTallies(rawDb(), ids, sheet("2025-08-18", "L06", "A", 5));
    await new Promise((r) => setTimeout(r, 30));
    expect(HARD_LAG_FACTOR * 5).toBeLessThan(30);
    const run = (await runComparison("lines", { maxLagMs: 5 }))!;
    expect(run.computed).toMatchObject({ how: "patched", pendingEntries: 0 });
    expect(run.windows).toEqual(scanWindows(currentRows(), linesConfig).windows);
  });

  it("a settings change is never served stale, whatever the bound", async () => {
    await runComparison("lines", { maxLagMs: 60_000 });
    rawDb().prepare("UPDATE Comparison SET windowDays = 14, updatedAt = CURRENT_TIMESTAMP WHERE code = 'lines'").run();
    try {
      const run = (await runComparison("lines", { maxLagMs: 60_000 }))!;
      expect(run.computed.how).toBe("built");
      expect(run.windows).toEqual(scanWindows(currentRows(), { ...linesConfig, windowDays: 14 }).windows);
    } finally {
      rawDb().prepare("UPDATE Comparison SET windowDays = 7, updatedAt = CURRENT_TIMESTAMP WHERE code = 'lines'").run();
    }
  });

  it("window details follow the same policy", async () => {
    const run = (await runComparison("lines"))!;
    const start = run.windows.find((w) => w.start >= "2025-08-20")!.start;
    const before = (await windowDetail("lines", start))!;
    insertUnits(rawDb(), ids, [{ date: start, line: "L01", shift: "A", units: 999 }]);
    const stale = (await windowDetail("lines", start, { maxLagMs: 60_000 }))!;
    expect(stale.rates).toEqual(before.rates);
    const fresh = (await windowDetail("lines", start))!;
    expect(fresh.rates!.groups.find((g) => g.group === "L01")!.units).toBe(before.rates!.groups.find((g) => g.group === "L01")!.units + 999);
  });
});

describe("a comparison naming a line that no longer exists", () => {
  it("is reported not testable with a plain reason; the others still scan", async () => {
    insertComparison(rawDb(), { code: "history-L99", compare: "history", lines: ["L99"], windowDays: 7, stepDays: 1, historyWeeks: 4 });
    try {
      const all = await runAllComparisons();
      const gone = all.find((r) => r.comparison.code === "history-L99")!;
      expect(gone.status).toBe("not-testable");
      expect(gone.windows).toEqual([]);
      expect(gone.problem).toBe('Comparison history-L99 names a line "L99" that does not exist (any more); change its settings to scan it.');
      expect(scanProblem("history-L99")).toBe(gone.problem);
      expect(scanProblem("lines")).toBeNull();
      expect(all.filter((r) => r.problem === null)).toHaveLength(8);
      expect(all.find((r) => r.comparison.code === "lines")!.windows.length).toBeGreaterThan(100);
      // Entries arriving do not turn it into an error either.
      insertTallies(rawDb(), ids, sheet("2025-08-25", "L01", "B", 3));
      expect((await runComparison("history-L99"))!.problem).toBe(gone.problem);
    } finally {
      rawDb().prepare("DELETE FROM Comparison WHERE code = 'history-L99'").run();
    }
  });
});
