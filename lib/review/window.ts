import type { ComparisonRecord } from "@/lib/db/comparisons";
import type { ScanWindow } from "@/lib/monitor/types";
import type { TableAnalysis } from "@/lib/stats/analyze-table";
import { formatRange } from "./format";
import { heatCell, heatLegend, heatScale, type HeatCell } from "./heatmap";
import { describeMonteCarlo } from "./monte-carlo-note";
import type { Names } from "./names";
import { generateReading, type Reading, type ReadingRateSignal } from "./reading";

/** One window in full, shaped for the window screen (pure). */

export interface WindowTableInput {
  comparison: ComparisonRecord;
  window: ScanWindow;
  rows: string[];
  columns: string[];
  observed: number[][];
  analysis: TableAnalysis;
  critical: number;
  rates: { row: string; defects: number; units: number | null }[];
  baseline: { start: string; end: string } | null;
}

/** Series colours for category mixes: distinguishable under common colour-vision deficiencies; "Other" is grey. */
export const MIX_COLOURS = ["#0072b2", "#e69f00", "#009e73", "#cc79a7", "#56b4e9", "#d55e00", "#f0e442", "#000000"] as const;
export const OTHER_COLOUR = "#9a9a9a";
export const MIX_TOP = MIX_COLOURS.length;

export interface MixSeries {
  key: string;
  name: string;
  colour: string;
}

export interface WindowView {
  code: string;
  comparisonName: string;
  kind: ComparisonRecord["compare"];
  start: string;
  end: string;
  range: string;
  baselineRange: string | null;
  flagged: boolean;
  rows: { code: string; name: string; total: number }[];
  columns: { code: string; name: string; total: number }[];
  observed: number[][];
  expected: number[][];
  heat: HeatCell[][];
  legend: ReturnType<typeof heatLegend>;
  critical: number;
  /** Largest contributions to X², for the bar chart. */
  contributions: { key: string; label: string; share: number; residual: number; beyond: boolean }[];
  mix: { series: MixSeries[]; bars: Record<string, number | string>[] };
  pareto: { row: string; name: string; bars: { category: string; count: number; cumulative: number }[] }[];
  stats: {
    n: number;
    method: ScanWindow["method"];
    methodNote: string;
    monteCarlo: ScanWindow["monteCarlo"];
    pooled: { label: string; members: string[] }[];
    pooledWhy: string | null;
    dropped: { groups: string[]; categories: string[] };
    expected: { minExpected: number; fractionBelow5: number; cellsBelow1: number; cochran: boolean; allAtLeast5: boolean };
    df: number;
    chiSquare: number;
    gSquare: number;
    /** The window's p (exact or Monte Carlo when those were used). */
    pValue: number | null;
    /** The asymptotic χ² p of the same table, for comparison. */
    asymptoticP: number;
    adjustedPValue: number | null;
    adjust: ComparisonRecord["adjust"];
    alpha: number;
    cramersV: number | null;
  };
  rates: { row: string; name: string; defects: number; units: number | null; dpu: number | null }[];
  reading: Reading;
}

function methodNote(w: ScanWindow): string {
  if (w.method === "exact") return "Exact test (Fisher–Freeman–Halton): the expected counts failed Cochran's rule.";
  if (w.method === "monte-carlo") {
    const mc = w.monteCarlo;
    const how = mc ? describeMonteCarlo(mc) : "Monte Carlo";
    return `${how[0].toUpperCase()}${how.slice(1)}. Used because the expected counts failed Cochran's rule and the table was too large for the exact test.`;
  }
  return "Asymptotic chi-square test: the expected counts meet Cochran's rule.";
}

export function shapeWindow(t: WindowTableInput, names: Names, rateSignals: ReadingRateSignal[] = []): WindowView {
  const c = t.comparison;
  const a = t.analysis;
  const w = t.window;
  const rowName = (code: string) => names.row(c.compare, code, c.historyWeeks);
  const colName = (code: string) => names.category(code);
  const scale = heatScale(t.critical);
  const heat = a.adjustedResiduals.map((row) => row.map((r) => heatCell(scale, r)));

  const cells: WindowView["contributions"] = [];
  t.rows.forEach((r, i) =>
    t.columns.forEach((k, j) =>
      cells.push({
        key: `${r}|${k}`,
        label: `${rowName(r)} × ${colName(k)}`,
        share: a.contributions[i][j],
        residual: a.adjustedResiduals[i][j],
        beyond: Math.abs(a.adjustedResiduals[i][j]) > t.critical,
      }),
    ),
  );
  cells.sort((x, y) => y.share - x.share);

  // Mix: the categories largest overall get a colour each; the rest fold into "Other".
  const order = t.columns.map((k, j) => ({ k, j, total: a.columnTotals[j] })).sort((x, y) => y.total - x.total);
  const top = order.length > MIX_TOP + 1 ? order.slice(0, MIX_TOP) : order.slice(0, MIX_TOP + 1);
  const rest = order.slice(top.length);
  const series: MixSeries[] = top.map((o, s) => ({ key: `c${s}`, name: colName(o.k), colour: s < MIX_COLOURS.length ? MIX_COLOURS[s] : OTHER_COLOUR }));
  if (rest.length) series.push({ key: "other", name: `Other (${rest.length} categories)`, colour: OTHER_COLOUR });
  const bars = t.rows.map((r, i) => {
    const total = a.rowTotals[i];
    const bar: Record<string, number | string> = { row: rowName(r) };
    top.forEach((o, s) => (bar[`c${s}`] = (100 * t.observed[i][o.j]) / total));
    if (rest.length) bar.other = (100 * rest.reduce((sum, o) => sum + t.observed[i][o.j], 0)) / total;
    return bar;
  });

  const pareto = t.rows.map((r, i) => {
    const total = a.rowTotals[i];
    const sorted = t.columns.map((k, j) => ({ k, count: t.observed[i][j] })).filter((x) => x.count > 0).sort((x, y) => y.count - x.count);
    let running = 0;
    return {
      row: r,
      name: rowName(r),
      bars: sorted.map((x) => {
        running += x.count;
        return { category: colName(x.k), count: x.count, cumulative: (100 * running) / total };
      }),
    };
  });

  const drivers = w.flagged
    ? w.drivers.map((d) => ({
        rowName: rowName(d.row),
        categoryName: colName(d.category),
        observed: d.observed,
        expected: d.expected,
        adjustedResidual: d.adjustedResidual,
        contribution: d.contribution,
      }))
    : [];
  const pooled = w.pooled?.merged.map((m) => ({ label: m.label, members: m.members.map(colName) })) ?? [];
  const subject = c.lines && c.lines.length === 1 ? names.line(c.lines[0]) : null;
  const reading = generateReading({
    kind: c.compare,
    subject,
    historyWeeks: c.historyWeeks,
    start: w.start,
    end: w.end,
    testable: w.testable,
    reason: w.reason,
    flagged: w.flagged,
    n: w.n,
    pValue: w.pValue,
    adjustedPValue: w.adjustedPValue,
    adjust: c.adjust,
    alpha: c.alpha,
    minEffect: c.minEffect,
    cramersV: w.cramersVCorrected,
    method: w.method,
    drivers,
    critical: t.critical,
    rateSignals,
    pooled,
  });

  const check = a.expectedCountCheck;
  return {
    code: c.code,
    comparisonName: c.name,
    kind: c.compare,
    start: w.start,
    end: w.end,
    range: formatRange(w.start, w.end),
    baselineRange: t.baseline ? formatRange(t.baseline.start, t.baseline.end) : null,
    flagged: w.flagged,
    rows: t.rows.map((r, i) => ({ code: r, name: rowName(r), total: a.rowTotals[i] })),
    columns: t.columns.map((k, j) => ({ code: k, name: colName(k), total: a.columnTotals[j] })),
    observed: t.observed,
    expected: a.expected,
    heat,
    legend: heatLegend(scale),
    critical: t.critical,
    contributions: cells.slice(0, 12),
    mix: { series, bars },
    pareto,
    stats: {
      n: a.n,
      method: w.method,
      methodNote: methodNote(w),
      monteCarlo: w.monteCarlo,
      pooled,
      pooledWhy: pooled.length
        ? "Some categories had expected counts too small for the test, so they were merged (within their family first) before testing."
        : null,
      dropped: { groups: w.droppedGroups.map(rowName), categories: w.droppedCategories.map(colName) },
      expected: {
        minExpected: check.minExpected,
        fractionBelow5: check.fractionBelow5,
        cellsBelow1: check.cellsBelow1,
        cochran: check.cochran,
        allAtLeast5: check.allAtLeast5,
      },
      df: a.df,
      chiSquare: a.chiSquare,
      gSquare: a.gSquare,
      pValue: w.pValue,
      asymptoticP: a.pValue,
      adjustedPValue: w.adjustedPValue,
      adjust: c.adjust,
      alpha: c.alpha,
      cramersV: w.cramersVCorrected,
    },
    rates: t.rates.map((r) => ({
      row: r.row,
      name: rowName(r.row),
      defects: r.defects,
      units: r.units,
      dpu: r.units && r.units > 0 ? r.defects / r.units : null,
    })),
    reading,
  };
}
