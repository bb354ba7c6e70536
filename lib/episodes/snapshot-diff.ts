import type { EpisodeAnalysis, WindowAnalysis } from "./types";

/**
 * Where the live result differs from what was seen when a snapshot was taken: the
 * episode's range, the peak window's p, adjusted p, V, X² and size, and every cell
 * that was or now is a driver, or whose count changed (a late entry or correction).
 * The same window is compared (the snapshot's peak window), so a change is a change
 * of data or configuration, not of which window is looked at.
 */

export interface CellState {
  observed: number;
  expected: number;
  ratio: number;
  adjustedResidual: number;
  contribution: number;
  driver: boolean;
}

export interface CellDiff {
  row: string;
  category: string;
  then: CellState | null;
  now: CellState | null;
  changed: boolean;
}

export interface MeasureDiff {
  key: "n" | "chiSquare" | "pValue" | "adjustedPValue" | "cramersVCorrected" | "method";
  label: string;
  then: number | string | null;
  now: number | string | null;
  changed: boolean;
}

export interface SnapshotDiff {
  window: { start: string; end: string };
  range: {
    then: { start: string; end: string; windows: number };
    now: { start: string; end: string; windows: number } | null;
    changed: boolean;
  };
  /** Why there is no live window to compare with, else null. */
  liveMissing: string | null;
  measures: MeasureDiff[];
  cells: CellDiff[];
  anyChange: boolean;
}

/** Equal up to floating-point noise (relative 1e-9); null equals only null. */
export function sameNumber(a: number | null, b: number | null): boolean {
  if (a === null || b === null) return a === b;
  if (a === b) return true;
  if (!Number.isFinite(a) || !Number.isFinite(b)) return false;
  return Math.abs(a - b) <= 1e-9 * Math.max(Math.abs(a), Math.abs(b));
}

function cellStates(w: WindowAnalysis): Map<string, CellState & { row: string; category: string }> {
  const drivers = new Set(w.drivers.map((d) => key(d.row, d.category)));
  const out = new Map<string, CellState & { row: string; category: string }>();
  w.rows.forEach((row, i) => {
    w.columns.forEach((category, j) => {
      const observed = w.observed[i][j];
      const expected = w.expected[i][j];
      out.set(key(row, category), {
        row,
        category,
        observed,
        expected,
        ratio: expected > 0 ? observed / expected : NaN,
        adjustedResidual: w.adjustedResiduals[i][j],
        contribution: w.contributions[i][j],
        driver: drivers.has(key(row, category)),
      });
    });
  });
  return out;
}

function key(row: string, category: string): string {
  return `${row}\u0000${category}`;
}

function cellChanged(a: CellState | null, b: CellState | null): boolean {
  if (!a || !b) return a !== b;
  return (
    a.observed !== b.observed ||
    a.driver !== b.driver ||
    !sameNumber(a.expected, b.expected) ||
    !sameNumber(a.adjustedResidual, b.adjustedResidual)
  );
}

/**
 * Compares a snapshot with the live analysis of the same window and the live episode
 * (null when the scan no longer finds it).
 */
export function diffSnapshot(
  snapshot: EpisodeAnalysis,
  live: WindowAnalysis | null,
  liveEpisode: { start: string; end: string; windows: number } | null,
): SnapshotDiff {
  const then = snapshot.peak;
  const rangeThen = { start: snapshot.episode.start, end: snapshot.episode.end, windows: snapshot.episode.windows };
  const rangeChanged =
    !liveEpisode ||
    liveEpisode.start !== rangeThen.start ||
    liveEpisode.end !== rangeThen.end ||
    liveEpisode.windows !== rangeThen.windows;
  const window = { start: snapshot.episode.peakStart, end: snapshot.episode.peakEnd };
  let liveMissing: string | null = null;
  if (!live) liveMissing = "The window is outside the data now.";
  else if (!live.testable) liveMissing = `The window is not testable now: ${live.reason ?? "no reason given"}.`;

  const measures: MeasureDiff[] = [];
  const measure = (k: MeasureDiff["key"], label: string, a: number | string | null, b: number | string | null) => {
    const changed = typeof a === "string" || typeof b === "string" ? a !== b : !sameNumber(a, b);
    measures.push({ key: k, label, then: a, now: b, changed });
  };
  const nowW = live && live.testable ? live : null;
  measure("n", "Defects in the window", then?.n ?? null, live?.n ?? null);
  measure("chiSquare", "X²", then?.chiSquare ?? null, nowW?.chiSquare ?? null);
  measure("pValue", "p", then?.pValue ?? null, nowW?.pValue ?? null);
  measure("adjustedPValue", "Adjusted p", then?.adjustedPValue ?? null, nowW?.adjustedPValue ?? null);
  measure("cramersVCorrected", "Cramér's V (bias-corrected)", then?.cramersVCorrected ?? null, nowW?.cramersVCorrected ?? null);
  measure("method", "Method", then?.method ?? null, nowW?.method ?? null);

  const thenCells = then ? cellStates(then) : new Map();
  const nowCells = nowW ? cellStates(nowW) : new Map();
  const keys: string[] = [];
  const seen = new Set<string>();
  const add = (k: string) => {
    if (!seen.has(k)) {
      seen.add(k);
      keys.push(k);
    }
  };
  // Drivers first (then, now), then any other cell whose count changed.
  for (const [k, c] of thenCells) if (c.driver) add(k);
  for (const [k, c] of nowCells) if (c.driver) add(k);
  for (const [k, c] of thenCells) {
    const n = nowCells.get(k);
    if (n && n.observed !== c.observed) add(k);
  }
  const cells: CellDiff[] = keys.map((k) => {
    const a = thenCells.get(k) ?? null;
    const b = nowCells.get(k) ?? null;
    const [row, category] = k.split("\u0000");
    return { row, category, then: a && strip(a), now: b && strip(b), changed: nowW ? cellChanged(a, b) : true };
  });
  const anyChange = rangeChanged || liveMissing !== null || measures.some((m) => m.changed) || cells.some((c) => c.changed);
  return {
    window,
    range: { then: rangeThen, now: liveEpisode, changed: rangeChanged },
    liveMissing,
    measures,
    cells,
    anyChange,
  };
}

function strip(c: CellState & { row?: string; category?: string }): CellState {
  return {
    observed: c.observed,
    expected: c.expected,
    ratio: c.ratio,
    adjustedResidual: c.adjustedResidual,
    contribution: c.contribution,
    driver: c.driver,
  };
}
