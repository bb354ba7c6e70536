import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { rawDb } from "@/lib/db/client";
import { cellHistory } from "@/lib/db/tallies";
import { correctEntry } from "@/lib/intake/corrections";
import { postFloorSheet } from "@/lib/intake/http";
import { EMPTY_BASIS, minimalCorrection, sheetBasis } from "@/lib/intake/plans";
import { loadSheet } from "@/lib/intake/sheet";
import type { Actor } from "@/lib/intake/actor";
import { useTempDatabase } from "../helpers/temp-db";
import { cellTotal, count, seedPlant, type Plant } from "./fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
});
afterAll(async () => ctx.cleanup());
beforeEach(() => rawDb().exec("DELETE FROM AuditEvent; DELETE FROM TallyEntry; DELETE FROM InspectionCount; DELETE FROM Submission;"));

/** Local clock time on a date (the plant's time zone is the process's). */
const at = (date: string, hhmm: string) => new Date(Number(date.slice(0, 4)), Number(date.slice(5, 7)) - 1, Number(date.slice(8, 10)), Number(hhmm.slice(0, 2)), Number(hhmm.slice(3, 5)));

let keyNo = 0;
const key = () => `test-key-${String(++keyNo).padStart(6, "0")}`;

function sheetRequest(body: Record<string, unknown>): Request {
  return new Request("http://plant.example/api/v1/floor-sheets", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
}

async function submitSheet(actor: Actor, now: Date, sheet: Record<string, unknown>) {
  const response = await postFloorSheet(sheetRequest({ idempotencyKey: key(), basis: EMPTY_BASIS, ...sheet }), actor, now);
  return { status: response.status, body: await response.json() };
}

const sheetA = { date: "2026-03-02", shift: "A", line: "L1" };
const counts = (scratch: number, dent: number, crack: number) => [
  { category: "scratch", count: scratch },
  { category: "dent", count: dent },
  { category: "crack", count: crack },
];
const basisOf = (date: string, shift: string, line: string) => sheetBasis(rawDb(), { date, shiftId: plant.shifts[shift], lineId: plant.lines[line] });

describe("floor sheet", () => {
  it("stores every category of a new sheet, zeros too, with the units, and answers with the sheet totals", async () => {
    const r = await submitSheet(plant.users.operator, at("2026-03-02", "13:50"), { ...sheetA, mode: "new", counts: counts(3, 0, 1), units: 900, note: "end of shift" });
    expect(r.status).toBe(201);
    expect(r.body.sheet).toEqual({ defects: 4, units: 900, counts: { scratch: 3, dent: 0, crack: 1 } });
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry WHERE source = 'floor'")).toBe(3);
    const view = loadSheet("2026-03-02", plant.shifts.A, plant.lines.L1)!;
    expect(view.categories.map((c) => [c.code, c.recorded])).toEqual([["scratch", 3], ["dent", 0], ["crack", 1]]);
    expect(view.recordedUnits).toBe(900);
    expect(view.recordedBy[0].name).toBe("op1 (test)");
  });

  it("refuses a 'new' sheet that someone recorded meanwhile (409 sheet-changed); 'add' adds to it", async () => {
    const now = at("2026-03-02", "10:00");
    expect((await submitSheet(plant.users.operator, now, { ...sheetA, mode: "new", counts: counts(1, 1, 1) })).status).toBe(201);
    const late = await submitSheet(plant.users.operator2, now, { ...sheetA, mode: "new", counts: counts(2, 0, 0) });
    expect(late.status).toBe(409);
    expect(late.body.code).toBe("sheet-changed");
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(1);
    const add = await submitSheet(plant.users.operator2, now, { ...sheetA, mode: "add", counts: counts(2, 0, 0), units: 100 });
    expect(add.status).toBe(201);
    expect(add.body.stored).toEqual({ tallies: 1, inspections: 1, corrections: 0 });
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(3);
  });

  it("retries of one sheet (same key) count once", async () => {
    const body = { idempotencyKey: "sheet-retry-01", basis: EMPTY_BASIS, ...sheetA, mode: "new", counts: counts(5, 0, 0) };
    const now = at("2026-03-02", "10:00");
    const statuses = [];
    for (let i = 0; i < 3; i += 1) statuses.push((await postFloorSheet(sheetRequest(body), plant.users.operator, now)).status);
    expect(statuses).toEqual([201, 200, 200]);
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(5);
  });

  it("refuses a future date and retired categories for new counts", async () => {
    const r = await submitSheet(plant.users.operator, at("2026-03-02", "10:00"), { ...sheetA, date: "2026-03-03", mode: "new", counts: [{ category: "old", count: 1 }] });
    expect(r.status).toBe(400);
    expect(r.body.messages).toEqual(["date: 2026-03-03 is in the future", 'row 0 category: category "old" is retired; new counts cannot be recorded for it']);
  });

  it("'correct' sets the totals by superseding entries (newest first), with the reason, audited", async () => {
    const now = at("2026-03-02", "11:00");
    await submitSheet(plant.users.operator, now, { ...sheetA, mode: "new", counts: counts(4, 2, 0), units: 500 });
    await submitSheet(plant.users.operator, now, { ...sheetA, mode: "add", counts: counts(3, 0, 0) });
    const r = await submitSheet(plant.users.operator, now, {
      ...sheetA,
      mode: "correct",
      basis: basisOf("2026-03-02", "A", "L1"),
      counts: counts(5, 2, 1),
      units: 450,
      reason: "recounted the bin",
    });
    expect(r.status).toBe(201);
    expect(r.body.sheet).toEqual({ defects: 8, units: 450, counts: { scratch: 5, dent: 2, crack: 1 } });
    // scratch 4 + 3 → 5: only the newer entry (3) is superseded, by 1. crack had a 0 entry → superseded by 1.
    const corrections = rawDb().prepare("SELECT count, supersedesId, correctionReason, source FROM TallyEntry WHERE supersedesId IS NOT NULL ORDER BY id").all();
    expect(corrections).toHaveLength(2);
    expect(corrections.every((c) => (c as { correctionReason: string }).correctionReason === "recounted the bin")).toBe(true);
    expect(count("SELECT COUNT(*) AS n FROM AuditEvent WHERE action = 'tally.correct'")).toBe(2);
    expect(count("SELECT COUNT(*) AS n FROM AuditEvent WHERE action = 'units.correct'")).toBe(1);
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry")).toBe(6); // nothing deleted
  });

  it("'correct' needs a reason and refuses when the sheet changed since it was opened", async () => {
    const now = at("2026-03-02", "11:00");
    await submitSheet(plant.users.operator, now, { ...sheetA, mode: "new", counts: counts(1, 0, 0) });
    const noReason = await submitSheet(plant.users.operator, now, { ...sheetA, mode: "correct", basis: basisOf("2026-03-02", "A", "L1"), counts: counts(2, 0, 0) });
    expect(noReason.status).toBe(400);
    expect(noReason.body.messages).toEqual(["reason: a correction needs a reason"]);
    const stale = await submitSheet(plant.users.operator, now, { ...sheetA, mode: "correct", basis: EMPTY_BASIS, counts: counts(2, 0, 0), reason: "x" });
    expect(stale.status).toBe(409);
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(1);
  });
});

describe("minimalCorrection", () => {
  it("supersedes as few of the newest entries as needed", () => {
    const e = [
      { id: 1, value: 5 },
      { id: 2, value: 3 },
    ];
    expect(minimalCorrection(e, 8)).toEqual([]);
    expect(minimalCorrection(e, 6)).toEqual([{ id: 2, from: 3, to: 1 }]);
    expect(minimalCorrection(e, 10)).toEqual([{ id: 2, from: 3, to: 5 }]);
    expect(minimalCorrection(e, 2)).toEqual([
      { id: 2, from: 3, to: 0 },
      { id: 1, from: 5, to: 2 },
    ]);
    expect(minimalCorrection(e, 0)).toEqual([
      { id: 2, from: 3, to: 0 },
      { id: 1, from: 5, to: 0 },
    ]);
  });
});

describe("corrections of single entries and the cell history", () => {
  async function recordOne(actor: Actor, now: Date, sheet = sheetA, n = 4) {
    await submitSheet(actor, now, { ...sheet, mode: "add", counts: [{ category: "scratch", count: n }] });
    return (rawDb().prepare("SELECT id FROM TallyEntry ORDER BY id DESC LIMIT 1").get() as { id: number }).id;
  }
  const correct = (actor: Actor, entryId: number, value: number, now: Date, reason = "miscount") =>
    correctEntry(actor, { idempotencyKey: key(), kind: "tally", entryId, value, reason }, now);

  it("supersede the entry (never change it), and the history shows every entry with who, when and why", async () => {
    const id = await recordOne(plant.users.operator, at("2026-03-02", "09:00"));
    const outcome = await correct(plant.users.engineer, id, 2, at("2026-03-05", "09:00"));
    expect(outcome.status).toBe("created");
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(2);
    expect(rawDb().prepare("SELECT count FROM TallyEntry WHERE id = ?").get(id)).toEqual({ count: 4 });
    const history = cellHistory({ date: "2026-03-02", shiftId: plant.shifts.A, lineId: plant.lines.L1, categoryId: plant.categories.scratch });
    expect(history.map((h) => ({ count: h.count, source: h.source, by: h.enteredByName, reason: h.correctionReason, current: h.supersededById === null }))).toEqual([
      { count: 4, source: "floor", by: "op1 (test)", reason: null, current: false },
      { count: 2, source: "correction", by: "eng (test)", reason: "miscount", current: true },
    ]);
    expect(history[1].supersedesId).toBe(id);
    const audit = rawDb().prepare("SELECT actorName, before, after, reason FROM AuditEvent WHERE action = 'tally.correct'").get() as Record<string, string>;
    expect(audit.actorName).toBe("eng (test)");
    expect(JSON.parse(audit.before)).toEqual({ entryId: id, count: 4 });
    expect(JSON.parse(audit.after)).toMatchObject({ entryId: history[1].id, count: 2 });
    expect(audit.reason).toBe("miscount");
  });

  it("cannot correct an entry twice: the second correction of the same entry is refused", async () => {
    const id = await recordOne(plant.users.operator, at("2026-03-02", "09:00"));
    expect((await correct(plant.users.engineer, id, 3, at("2026-03-02", "09:30"))).status).toBe("created");
    const second = await correct(plant.users.engineer, id, 1, at("2026-03-02", "09:31"));
    expect(second.status).toBe("stale");
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(3);
  });

  it("refuses a correction without a reason, or to the same value", async () => {
    expect((await correctEntry(plant.users.engineer, { idempotencyKey: key(), kind: "tally", entryId: 1, value: 1, reason: "  " })).status).toBe("invalid");
  });

  it("a double-submitted correction form (same key) stores one correction", async () => {
    const id = await recordOne(plant.users.operator, at("2026-03-02", "09:00"));
    const input = { idempotencyKey: "corr-form-01", kind: "tally", entryId: id, value: 1, reason: "typo" };
    expect((await correctEntry(plant.users.engineer, input, at("2026-03-02", "09:10"))).status).toBe("created");
    expect((await correctEntry(plant.users.engineer, input, at("2026-03-02", "09:10"))).status).toBe("replay");
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry WHERE supersedesId = ?", id)).toBe(1);
  });
});

describe("operator correction window: own entries, from shift start until 30 minutes after its end", () => {
  const correct = (actor: Actor, entryId: number, now: Date) => correctEntry(actor, { idempotencyKey: key(), kind: "tally", entryId, value: 1, reason: "typo" }, now);
  async function entryOf(actor: Actor, sheet: { date: string; shift: string; line: string }, now: Date) {
    await submitSheet(actor, now, { ...sheet, mode: "add", counts: [{ category: "scratch", count: 4 }] });
    return (rawDb().prepare("SELECT id FROM TallyEntry ORDER BY id DESC LIMIT 1").get() as { id: number }).id;
  }

  it("day shift A 06:00–14:00: allowed during the shift and until 14:29, refused at 14:30", async () => {
    const op = plant.users.operator;
    const id1 = await entryOf(op, sheetA, at("2026-03-02", "08:00"));
    expect((await correct(op, id1, at("2026-03-02", "13:59"))).status).toBe("created");
    const id2 = await entryOf(op, sheetA, at("2026-03-02", "08:00"));
    expect((await correct(op, id2, at("2026-03-02", "14:29"))).status).toBe("created");
    const id3 = await entryOf(op, sheetA, at("2026-03-02", "08:00"));
    const late = await correct(op, id3, at("2026-03-02", "14:30"));
    expect(late.status).toBe("forbidden");
    expect("message" in late && late.message).toMatch(/from 06:00 until 14:30/);
    // An engineer may correct it at any time.
    expect((await correct(plant.users.engineer, id3, at("2026-03-09", "10:00"))).status).toBe("created");
  });

  it("refused before the shift has started (an early entry for a later shift)", async () => {
    const id = await entryOf(plant.users.operator, { ...sheetA, shift: "B" }, at("2026-03-02", "13:00"));
    expect((await correct(plant.users.operator, id, at("2026-03-02", "13:59"))).status).toBe("forbidden");
    expect((await correct(plant.users.operator, id, at("2026-03-02", "14:00"))).status).toBe("created");
  });

  it("night shift N 22:00–06:00 of 2026-03-02 runs into 03-03: allowed at 03-03 05:00 and 06:29, refused at 06:30", async () => {
    const op = plant.users.operator;
    const night = { date: "2026-03-02", shift: "N", line: "L1" };
    const id1 = await entryOf(op, night, at("2026-03-03", "02:00"));
    expect((await correct(op, id1, at("2026-03-03", "05:00"))).status).toBe("created");
    const id2 = await entryOf(op, night, at("2026-03-03", "02:00"));
    expect((await correct(op, id2, at("2026-03-03", "06:29"))).status).toBe("created");
    const id3 = await entryOf(op, night, at("2026-03-03", "02:00"));
    expect((await correct(op, id3, at("2026-03-03", "06:30"))).status).toBe("forbidden");
  });

  it("refuses API tokens (they add counts; people correct them)", async () => {
    const id = await entryOf(plant.users.operator, sheetA, at("2026-03-02", "08:00"));
    const outcome = await correct({ userId: null, name: 'API token "gateway"', role: "system" }, id, at("2026-03-02", "09:00"));
    expect(outcome.status).toBe("forbidden");
  });

  it("refuses another operator's entry even inside the window", async () => {
    const id = await entryOf(plant.users.operator, sheetA, at("2026-03-02", "08:00"));
    const outcome = await correct(plant.users.operator2, id, at("2026-03-02", "09:00"));
    expect(outcome.status).toBe("forbidden");
    expect("message" in outcome && outcome.message).toMatch(/recorded by op1 \(test\)/);
  });

  it("applies to sheet corrections too: an operator cannot correct the sheet over someone else's counts", async () => {
    await submitSheet(plant.users.operator, at("2026-03-02", "08:00"), { ...sheetA, mode: "new", counts: counts(2, 0, 0) });
    const r = await submitSheet(plant.users.operator2, at("2026-03-02", "09:00"), {
      ...sheetA,
      mode: "correct",
      basis: basisOf("2026-03-02", "A", "L1"),
      counts: counts(1, 0, 0),
      reason: "x",
    });
    expect(r.status).toBe(403);
    expect(cellTotal("2026-03-02", "A", "L1", "scratch")).toBe(2);
  });
});
