import { describe, expect, it } from "vitest";
import type { ComparisonRecord } from "@/lib/db/comparisons";
import type { Episode, ScanWindow } from "@/lib/monitor/types";
import { analyzeTable } from "@/lib/stats/analyze-table";
import { namesOf } from "@/lib/review/names";
import { shapeOverview } from "@/lib/review/overview";
import { dayNumberOf, monthTicks, shapeTimeline, MINUS_LOG10_CAP } from "@/lib/review/timeline";
import { shapeWindow } from "@/lib/review/window";
import { addDays } from "@/lib/dates";

const names = namesOf({
  lines: { P1: "Press line 1", P2: "Press line 2", P3: "Press line 3" },
  categories: { A: "Short shot", B: "Flash", S: "Seal leak" },
});

function comparison(code: string, over: Partial<ComparisonRecord> = {}): ComparisonRecord {
  return {
    id: 1, code, name: code, compare: "line", lines: null, shifts: null, categories: null,
    windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0, sparse: "auto", historyWeeks: 8,
    active: true, displayOrder: 0, updatedAt: "2026-01-01T00:00:00.000Z", ...over,
  };
}

function window(start: string, over: Partial<ScanWindow> = {}): ScanWindow {
  return {
    start, end: addDays(start, 6), n: 1000, groups: ["P1", "P2", "P3"], categories: ["A", "B", "S"],
    droppedGroups: [], droppedCategories: [], testable: true, reason: null, chiSquare: 3, df: 4, pValue: 0.5,
    method: "asymptotic", monteCarlo: null, pooled: null, expectedCounts: null, adjustedPValue: 0.8,
    cramersVCorrected: 0.01, flagged: false, drivers: [], ...over,
  };
}

const driver = { row: "P3", category: "S", observed: 48, expected: 14, ratio: 48 / 14, adjustedResidual: 7.9, contribution: 0.41 };

function series(from: string, count: number, flaggedFrom: number | null): ScanWindow[] {
  return Array.from({ length: count }, (_, k) =>
    window(addDays(from, k), flaggedFrom !== null && k >= flaggedFrom ? { flagged: true, adjustedPValue: 1e-6, pValue: 1e-8, drivers: [driver] } : {}),
  );
}

function episodeOf(ws: ScanWindow[]): Episode {
  const f = ws.filter((w) => w.flagged);
  return { start: f[0].start, end: f[f.length - 1].end, windows: f.length, peak: f[0], drivers: [{ row: "P3", category: "S", windows: f.length, adjustedResidual: 7.9 }] };
}

describe("overview shaping", () => {
  const quiet = series("2026-10-01", 30, null);
  const open = series("2026-10-01", 30, 25);
  const untestable = [...series("2026-10-01", 29, null), window("2026-10-30", { testable: false, reason: "no defects recorded in the window", pValue: null, adjustedPValue: null })];
  const { rows, counts } = shapeOverview(
    [
      { comparison: comparison("quiet", { displayOrder: 0 }), windows: quiet, episodes: [] },
      { comparison: comparison("none", { displayOrder: 1 }), windows: untestable, episodes: [] },
      { comparison: comparison("open", { displayOrder: 2 }), windows: open, episodes: [episodeOf(open)], rateSignals: ["Press line 2"] },
    ],
    names,
  );

  it("puts open episodes first, then the rest in display order", () => {
    expect(rows.map((r) => r.code)).toEqual(["open", "quiet", "none"]);
    expect(counts).toEqual({ flagged: 1, quiet: 1, untestable: 1 });
  });

  it("states each comparison now from its latest window", () => {
    expect(rows.map((r) => r.state)).toEqual(["flagged", "quiet", "untestable"]);
    expect(rows[2].latest?.reason).toBe("no defects recorded in the window");
  });

  it("says how long the open episode has been flagged, from the end of its first flagged window", () => {
    const r = rows[0];
    expect(r.flaggedSince).toBe(addDays("2026-10-26", 6));
    expect(r.flaggedDays).toBe(5);
    expect(r.topDriver).toMatchObject({ rowName: "Press line 3", categoryName: "Seal leak", adjustedResidual: 7.9 });
    expect(r.rateSignals).toEqual(["Press line 2"]);
    expect(rows[1].flaggedDays).toBeNull();
  });
});

describe("timeline shaping", () => {
  const ws = series("2026-10-01", 30, 20);
  ws[3] = window(ws[3].start, { adjustedPValue: 0, pValue: 0 });
  ws[5] = window(ws[5].start, { testable: false, pValue: null, adjustedPValue: null, reason: "too few" });
  const t = shapeTimeline(comparison("lines"), ws, [episodeOf(ws)], names, null);

  it("plots −log10 adjusted p at each window's last day, capped, with the α line", () => {
    expect(t.points[0].x).toBe(dayNumberOf(ws[0].end));
    expect(t.points[0].evidence).toBeCloseTo(-Math.log10(0.8), 12);
    expect(t.points[3]).toMatchObject({ evidence: MINUS_LOG10_CAP, capped: true });
    expect(t.points[5]).toMatchObject({ evidence: null, state: "untestable" });
    expect(t.alphaLine).toBeCloseTo(-Math.log10(0.05), 12);
  });

  it("draws each episode as a band over its flagged windows", () => {
    expect(t.bands).toHaveLength(1);
    expect(t.bands[0].x1).toBe(t.points[20].x);
    expect(t.bands[0].x2).toBe(t.points[29].x);
    expect(t.summary).toBe("30 windows from 1 Oct 2026 to 5 Nov 2026; 29 testable, 10 flagged, in 1 episode.");
  });

  it("puts month ticks on month starts only", () => {
    const ticks = monthTicks("2026-01-15", "2026-04-02");
    expect(ticks.map((k) => k.label)).toEqual(["Feb", "Mar", "Apr"]);
    expect(monthTicks("2024-01-01", "2026-01-01").length).toBeLessThanOrEqual(13);
  });
});

describe("window shaping", () => {
  const observed = [
    [300, 200, 20],
    [280, 190, 18],
    [300, 200, 90],
  ];
  const analysis = analyzeTable(observed);
  const w = window("2026-10-20", { flagged: true, adjustedPValue: 1e-9, pValue: 1e-11, drivers: [{ ...driver, observed: 90, expected: analysis.expected[2][2], adjustedResidual: analysis.adjustedResiduals[2][2], contribution: analysis.contributions[2][2] }] });
  const view = shapeWindow(
    { comparison: comparison("lines"), window: w, rows: ["P1", "P2", "P3"], columns: ["A", "B", "S"], observed, analysis, critical: 2.77, rates: [{ row: "P3", defects: 590, units: 10_000 }], baseline: null },
    names,
  );

  it("marks the planted cell beyond the critical value in the heatmap", () => {
    const cell = view.heat[2][2];
    expect(cell.beyond).toBe(true);
    expect(cell.marker).toBe("▲");
    expect(view.heat[0][0].beyond).toBe(false);
  });

  it("ranks cells by their share of X², and the shares of each group's mix sum to 100%", () => {
    expect(view.contributions[0].key).toBe("P3|S");
    for (const bar of view.mix.bars) {
      const sum = view.mix.series.reduce((s, k) => s + Number(bar[k.key]), 0);
      expect(sum).toBeCloseTo(100, 9);
    }
  });

  it("builds a Pareto per group, largest first, ending at 100%", () => {
    const p3 = view.pareto[2];
    expect(p3.bars.map((b) => b.category)).toEqual(["Short shot", "Flash", "Seal leak"]);
    expect(p3.bars.at(-1)!.cumulative).toBeCloseTo(100, 9);
  });

  it("reads the driver in words and carries the test's numbers", () => {
    expect(view.reading.sentences[0]).toContain("Press line 3 recorded 90 “Seal leak” defects");
    expect(view.stats).toMatchObject({ df: 4, method: "asymptotic", adjustedPValue: 1e-9 });
    expect(view.stats.chiSquare).toBeCloseTo(analysis.chiSquare, 12);
    expect(view.rates[0].dpu).toBeCloseTo(0.059, 12);
  });
});

describe("the Monte Carlo method note", () => {
  const observed = [
    [3, 1, 0],
    [1, 3, 2],
    [0, 2, 4],
  ];
  const analysis = analyzeTable(observed);
  const note = (monteCarlo: ScanWindow["monteCarlo"], pValue: number) =>
    shapeWindow(
      {
        comparison: comparison("lines"),
        window: window("2026-10-20", { method: "monte-carlo", monteCarlo, pValue }),
        rows: ["P1", "P2", "P3"], columns: ["A", "B", "S"], observed, analysis, critical: 2.77, rates: [], baseline: null,
      },
      names,
    ).stats.methodNote;

  it("says a sequential run stopped after h tables at least as extreme among L drawn, and p = h/L", () => {
    const text = note({ replicates: 1234, seed: 42, standardError: 0.0077, hits: 100, stoppedEarly: true, stopAfterHits: 100, maxReplicates: 10_000 }, 100 / 1234);
    expect(text).toBe(
      "Sequential Monte Carlo: stopped after 100 random tables at least as extreme as the observed one among 1,234 drawn, so p = 100/1,234 " +
        "(random tables with the window's row and column totals; seed 42, standard error 7.7e-3). " +
        "Used because the expected counts failed Cochran's rule and the table was too large for the exact test.",
    );
  });

  it("gives the full count and p = (1 + hits)/(cap + 1) when the cap was drawn", () => {
    const text = note({ replicates: 10_000, seed: 42, standardError: 0.0006, hits: 37, stoppedEarly: false, stopAfterHits: 100, maxReplicates: 10_000 }, 38 / 10_001);
    expect(text).toContain("Monte Carlo: 37 of 10,000 random tables at least as extreme as the observed one, so p = (1 + 37)/10,001");
    expect(text).toContain("drawing stops early only at 100 such tables; seed 42, standard error 6.0e-4");
    expect(text).not.toContain("Sequential");
  });
});
