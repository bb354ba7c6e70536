/**
 * The overview's page data against a real, migrated SQLite file (no mocks): during the
 * warm-up after a start it shows the comparisons already built and lists the others as
 * being computed (never kept, so the next view shows more); afterwards it has them all,
 * says how current they are (computed.asOf, pendingEntries) and carries a comparison's
 * problem when it names a line that no longer exists. Scan values themselves are checked
 * in test/monitor (against R); nothing statistical is asserted here.
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { rawDb } from "@/lib/db/client";
import { forgetKeptResults, startWarmUp, warmUpStatus } from "@/lib/monitor/service";
import { overviewData, timelineData } from "@/lib/review/pages";
import { listComparisons } from "@/lib/db/comparisons";
import { loadMasterData } from "@/lib/db/plant";
import { useTempDatabase } from "../helpers/temp-db";
import { codes, simulatePlant } from "../monitor/helpers/simulate";
import { insertComparison, insertMasterData, insertTallies, type Ids } from "../monitor/helpers/insert-plant";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let ids: Ids;
const lines = codes("L", 4);
const shifts = ["A", "B", "C"];
const categories = codes("C", 12);

beforeAll(async () => {
  ctx = await useTempDatabase();
  const db = rawDb();
  ids = insertMasterData(db, { lines, shifts, categories, families: {} });
  const { tallies } = simulatePlant(
    { start: "2025-09-01", days: 300, lines, shifts, categories, weights: [12, 11, 10, 9, 8, 7, 6, 5, 4, 3, 2, 1], unitsPerShift: 800, defectsPerUnit: 0.02, changes: [] },
    20261202,
  );
  insertTallies(db, ids, tallies);
  insertComparison(db, { code: "lines", compare: "line" });
  insertComparison(db, { code: "shifts", compare: "shift" });
  for (const line of lines) insertComparison(db, { code: `history-${line}`, compare: "history", lines: [line], historyWeeks: 4 });
  insertComparison(db, { code: "history-L99", compare: "history", lines: ["L99"], historyWeeks: 4 });
  // Opens Prisma's connection (reads only): its first use takes long enough for a small warm-up to finish meanwhile.
  await listComparisons();
  await loadMasterData();
});
afterAll(async () => {
  forgetKeptResults();
  await ctx.cleanup();
});
beforeEach(() => forgetKeptResults());

const nextImmediate = () => new Promise<void>((r) => setImmediate(r));

describe("overview during the warm-up", () => {
  it("shows what is built, lists the rest as being computed, and is shaped again as more come in", async () => {
    const warm = startWarmUp();
    await nextImmediate();
    expect(warmUpStatus().state).toBe("warming");
    const early = await overviewData();
    expect(early.warmUp).not.toBeNull();
    expect(early.warmUp!.total).toBe(7);
    expect(early.rows.length + early.warmUp!.waiting.length).toBe(7);
    expect(early.warmUp!.ready).toBe(early.rows.length);
    await warm;
    const done = await overviewData();
    // The shaped part is kept while its scans are the same: these are not.
    expect(done.kept).not.toBe(early.kept);
    expect((await overviewData()).kept).toBe(done.kept);
    expect(done.warmUp).toBeNull();
    expect(done.rows).toHaveLength(7);
    expect(done.freshness.pendingEntries).toBe(0);
    expect(Date.parse(done.freshness.asOf!)).toBeGreaterThan(Date.now() - 60_000);
  });
});

describe("overview freshness and problems", () => {
  it("says how many entries a kept scan has not taken in yet (the same entries, not counted once per comparison)", async () => {
    await startWarmUp();
    const before = await overviewData();
    expect(before.freshness.pendingEntries).toBe(0);
    insertTallies(rawDb(), ids, categories.map((category) => ({ date: "2026-05-04", line: "L02", shift: "A", category, count: 3 })));
    const after = await overviewData();
    // Within the page bound (15 s) the kept scans are served as they stood, and say so.
    expect(after.freshness.pendingEntries).toBe(categories.length);
    // A floor sheet alone does not make the page shape again: same scans, same records.
    expect(after.kept).toBe(before.kept);
    expect(Date.parse(after.freshness.asOf!)).toBeLessThanOrEqual(Date.now());
  });

  it("carries the plain reason of a comparison naming a line that no longer exists", async () => {
    await startWarmUp();
    const data = await overviewData();
    const gone = data.rows.find((r) => r.code === "history-L99")!;
    expect(gone.state).toBe("untestable");
    expect(gone.problem).toBe('Comparison history-L99 names a line "L99" that does not exist (any more); change its settings to scan it.');
    expect(data.rows.filter((r) => r.problem !== null).map((r) => r.code)).toEqual(["history-L99"]);
    const timeline = (await timelineData("history-L99"))!;
    expect(timeline.problem).toBe(gone.problem);
  });
});
