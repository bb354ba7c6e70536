import { describe, expect, it } from "vitest";
import { scanHistory, scanWindows, type HistoryConfig } from "@/lib/monitor";
import { addDays } from "@/lib/monitor/dates";
import { codes, simulatePlant, type PlantSpec } from "./helpers/simulate";

const spec: PlantSpec = {
  start: "2026-01-05",
  days: 150,
  lines: ["L1", "L2"],
  shifts: ["A", "B", "C"],
  categories: codes("C", 8),
  weights: [9, 8, 7, 6, 5, 4, 3, 2],
  unitsPerShift: 2000,
  defectsPerUnit: 0.008,
};
const config: HistoryConfig = { line: "L2", windowDays: 7, stepDays: 1, historyWeeks: 4, alpha: 0.05, adjust: "bh", minEffect: 0 };

describe("scanHistory: a line against its own recent past", () => {
  it("starts once a full baseline exists and stacks current over baseline", () => {
    const { tallies } = simulatePlant(spec, 5);
    const { windows } = scanHistory(tallies, config);
    expect(windows[0].start).toBe(addDays(spec.start, 28));
    expect(windows[windows.length - 1].end).toBe(addDays(spec.start, spec.days - 1));
    expect(windows).toHaveLength(spec.days - 28 - 7 + 1);
    expect(windows[0].groups).toEqual(["current", "baseline"]);
    // The current row alone is the same window of a line scan restricted to L2, summed over categories.
    const line = scanWindows(tallies, { compare: "shift", lines: ["L2"], windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0 });
    const same = line.windows.find((w) => w.start === windows[0].start)!;
    const baseline = line.windows.filter((w) => w.start >= spec.start && w.start < windows[0].start && (Date.parse(w.start) - Date.parse(spec.start)) % (7 * 86400000) === 0);
    expect(windows[0].n).toBe(same.n + baseline.reduce((s, w) => s + w.n, 0));
  });

  it("flags a change in the line's mix, driven by the current window's excess of the category", () => {
    const change = { line: "L2", category: "C06", from: "2026-04-06", to: "2026-04-26", factor: 3 };
    const { tallies } = simulatePlant({ ...spec, changes: [change] }, 6);
    const result = scanHistory(tallies, config);
    const flagged = result.windows.filter((w) => w.flagged);
    expect(flagged.length).toBeGreaterThan(5);
    // Flags sit on the change, or on windows whose baseline still holds it (the change looks like its own undoing).
    for (const w of flagged) expect(w.end >= change.from && w.start <= addDays(change.to, 28)).toBe(true);
    const first = result.episodes[0];
    expect(first.start <= change.to).toBe(true);
    expect(first.drivers[0]).toMatchObject({ row: "current", category: "C06" });
    expect(first.drivers[0].adjustedResidual).toBeGreaterThan(0);
  });

  it("stays quiet on a quiet line and on a rate-only change of the line", () => {
    const quiet = scanHistory(simulatePlant(spec, 7).tallies, config);
    expect(quiet.windows.filter((w) => w.flagged)).toEqual([]);
    const rateOnly = { line: "L2", from: "2026-04-06", to: "2026-04-26", factor: 1.8 };
    const rate = scanHistory(simulatePlant({ ...spec, changes: [rateOnly] }, 7).tallies, config);
    expect(rate.windows.filter((w) => w.flagged)).toEqual([]);
  });

  it("with from, starts on it and takes the baseline from the days before it", () => {
    const { tallies } = simulatePlant(spec, 5);
    const from = addDays(spec.start, 40);
    const bounded = scanHistory(tallies, { ...config, from });
    expect(bounded.windows[0].start).toBe(from);
    const full = scanHistory(tallies, config);
    const same = full.windows.find((w) => w.start === from)!;
    expect(bounded.windows[0]).toMatchObject({ n: same.n, chiSquare: same.chiSquare, pValue: same.pValue });
  });

  it("ignores other lines", () => {
    const { tallies } = simulatePlant(spec, 8);
    const onlyL2 = tallies.filter((r) => r.line === "L2");
    expect(scanHistory(tallies, config)).toEqual(scanHistory(onlyL2, config));
  });
});
