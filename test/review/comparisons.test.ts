import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "@/lib/db/client";
import {
  checkSettingsAgainstPlant,
  ensureDefaultComparisons,
  getComparison,
  listComparisons,
  settingsOf,
  settingsSchema,
  updateComparisonSettings,
} from "@/lib/db/comparisons";
import { parseSettingsForm } from "@/lib/review/settings-form";
import { useTempDatabase } from "../helpers/temp-db";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
  await db().line.createMany({
    data: [
      { code: "P1", name: "Press line 1", displayOrder: 1 },
      { code: "P2", name: "Press line 2", displayOrder: 2 },
      { code: "OLD", name: "Retired line", active: false, displayOrder: 3 },
    ],
  });
});
afterAll(async () => ctx.cleanup());

describe("default comparisons", () => {
  it("are created lazily when none exist: across lines, across shifts, each active line across its shifts and against its past", async () => {
    expect(await db().comparison.count()).toBe(0);
    const list = await listComparisons();
    expect(list.map((c) => c.code)).toEqual(["lines", "shifts", "shifts-P1", "shifts-P2", "history-P1", "history-P2"]);
    const lines = list[0];
    expect(lines).toMatchObject({ compare: "line", lines: null, shifts: null, categories: null, windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0, sparse: "auto", historyWeeks: 8 });
    expect(list.find((c) => c.code === "shifts-P1")).toMatchObject({ compare: "shift", lines: ["P1"] });
    expect(list.find((c) => c.code === "history-P2")).toMatchObject({ compare: "history", lines: ["P2"] });
    expect(list.some((c) => c.code.endsWith("OLD"))).toBe(false);
  });

  it("are created once, even when asked twice at the same time, and each creation is audited", async () => {
    await db().comparison.deleteMany();
    await db().auditEvent.deleteMany();
    const [a, b] = await Promise.all([ensureDefaultComparisons(), ensureDefaultComparisons()]);
    expect(a + b).toBe(6);
    expect(await db().comparison.count()).toBe(6);
    expect(await ensureDefaultComparisons()).toBe(0);
    const audits = await db().auditEvent.findMany({ where: { action: "comparison.create" } });
    expect(audits).toHaveLength(6);
    expect(audits.every((e) => e.actorName === "system" && e.entity === "Comparison")).toBe(true);
  });
});

describe("settings changes", () => {
  it("save the new settings and write an AuditEvent with actor, before and after", async () => {
    const before = (await getComparison("lines"))!;
    const next = { ...settingsOf(before), windowDays: 14, stepDays: 7, alpha: 0.01, categories: ["seal-leak", "flash"] };
    const saved = await updateComparisonSettings("lines", next, { id: null, name: "Eng One" });
    expect(saved).toMatchObject({ windowDays: 14, stepDays: 7, alpha: 0.01, categories: ["seal-leak", "flash"] });
    const event = await db().auditEvent.findFirst({ where: { action: "comparison.update", entityId: "lines" } });
    expect(event).toMatchObject({ actorName: "Eng One", entity: "Comparison" });
    expect(JSON.parse(event!.before!)).toMatchObject({ windowDays: 7, alpha: 0.05, categories: null });
    expect(JSON.parse(event!.after!)).toMatchObject({ windowDays: 14, alpha: 0.01, categories: ["seal-leak", "flash"] });
  });

  it("return null for a comparison that does not exist, writing nothing", async () => {
    const count = await db().auditEvent.count();
    const s = settingsOf((await getComparison("lines"))!);
    expect(await updateComparisonSettings("nope", s, { id: null, name: "x" })).toBeNull();
    expect(await db().auditEvent.count()).toBe(count);
  });
});

describe("settings validation", () => {
  const form = (entries: [string, string][]) => {
    const f = new FormData();
    for (const [k, v] of entries) f.append(k, v);
    return f;
  };
  const base: [string, string][] = [
    ["name", "All lines"],
    ["windowDays", "7"],
    ["stepDays", "1"],
    ["alpha", "0.05"],
    ["adjust", "bh"],
    ["minEffect", "0"],
    ["sparse", "auto"],
    ["historyWeeks", "8"],
    ["lines-all", "on"],
    ["shifts-all", "on"],
    ["categories", "A"],
    ["categories", "B"],
  ];

  it("reads a form into settings: 'all' ticked means null, else the ticked codes", () => {
    const parsed = settingsSchema.parse(parseSettingsForm(form(base)));
    expect(parsed).toMatchObject({ name: "All lines", windowDays: 7, lines: null, shifts: null, categories: ["A", "B"] });
  });

  it("refuses a step longer than the window, an α above 0.2 and a non-number", () => {
    const bad = settingsSchema.safeParse(parseSettingsForm(form([...base.filter(([k]) => !["stepDays", "alpha", "minEffect"].includes(k)), ["stepDays", "9"], ["alpha", "0.5"], ["minEffect", "lots"]])));
    expect(bad.success).toBe(false);
    const paths = bad.error!.issues.map((i) => i.path[0]);
    expect(paths).toEqual(expect.arrayContaining(["alpha", "minEffect"]));
    const step = settingsSchema.safeParse(parseSettingsForm(form([...base.filter(([k]) => k !== "stepDays"), ["stepDays", "9"]])));
    expect(step.success).toBe(false);
    expect(step.error!.issues[0].path).toEqual(["stepDays"]);
  });

  it("checks codes against the plant and the kind of comparison", () => {
    const plant = { lines: ["P1", "P2"], shifts: ["E", "L"], categories: ["A", "B", "C"] };
    const s = settingsSchema.parse(parseSettingsForm(form(base)));
    expect(checkSettingsAgainstPlant("line", s, plant)).toEqual({});
    expect(checkSettingsAgainstPlant("history", s, plant).lines).toMatch(/exactly one line/);
    expect(checkSettingsAgainstPlant("history", { ...s, lines: ["P1"] }, plant)).toEqual({});
    expect(checkSettingsAgainstPlant("line", { ...s, lines: ["P1"] }, plant).lines).toMatch(/at least 2/);
    expect(checkSettingsAgainstPlant("line", { ...s, categories: ["A", "Z"] }, plant).categories).toBe("Unknown category codes: Z.");
  });
});
