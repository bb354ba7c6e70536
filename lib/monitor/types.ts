/** Shapes shared by the scans (mix, history, rate) and the service. */

/** One tally: a count of one defect category on one production date, line and shift. */
export interface TallyRow {
  /** Production date, ISO "YYYY-MM-DD". */
  date: string;
  line: string;
  shift: string;
  category: string;
  /** Non-negative whole number. */
  count: number;
}

/** Units inspected on one production date, line and shift. */
export interface UnitsRow {
  date: string;
  line: string;
  shift: string;
  /** Non-negative whole number. */
  units: number;
}

export type CompareBy = "line" | "shift";
export type AdjustMethod = "bh" | "bonferroni" | "none";
/** How windows that fail Cochran's rule are tested; windows that pass are always asymptotic. */
export type SparseMode = "auto" | "pool" | "monte-carlo" | "exact" | "asymptotic";
export type TestMethod = "asymptotic" | "exact" | "monte-carlo";

/** Options shared by every scan. */
export interface ScanOptions {
  windowDays: number;
  stepDays: number;
  /** Level at which an adjusted p-value flags (e.g. 0.05). */
  alpha: number;
  /** Across-window multiplicity adjustment. */
  adjust: AdjustMethod;
  /** Smallest bias-corrected Cramér's V that flags; 0 turns the effect-size gate off. */
  minEffect: number;
  sparse?: SparseMode;
  /** First day of the scan (default: the first date in the data). */
  from?: string;
  /** Last day a window may end on (default: the last date in the data). */
  to?: string;
  shifts?: string[];
  categories?: string[];
  /** Category code → family, so sparse categories of one family are pooled together first. */
  families?: Record<string, string>;
}

/** Configuration of {@link scanWindows}. */
export interface ScanConfig extends ScanOptions {
  compare: CompareBy;
  lines?: string[];
}

/** Configuration of {@link scanHistory}: one line, current window against its own past. */
export interface HistoryConfig extends ScanOptions {
  line: string;
  /** Length of the baseline that precedes each window, in weeks (baseline = historyWeeks·7 days). */
  historyWeeks: number;
}

/** Expected-count diagnostics of a window's table (the ones that choose the method). */
export interface ExpectedSummary {
  minExpected: number;
  fractionBelow5: number;
  /** Cochran's rule holds: no expected count below 1, at most 20% below 5. */
  cochran: boolean;
}

/** What pooling combined in a window: each pooled column and the category codes inside it. */
export interface PooledColumns {
  /** Labels of the columns actually tested, in table order. */
  columns: string[];
  /** Only the columns that combine two or more categories. */
  merged: { label: string; members: string[] }[];
}

/** A cell that drives a flagged window (|adjusted residual| over the Bonferroni critical value). */
export interface Driver {
  /** The line or shift code (or "current"/"baseline" in a history scan). */
  row: string;
  /** Category code, or the pooled column's label. */
  category: string;
  observed: number;
  expected: number;
  /** observed / expected: 1.8 means 80% more than the table's margins predict. */
  ratio: number;
  /** Haberman's adjusted residual; positive = more than expected. */
  adjustedResidual: number;
  /** The cell's share of X²: ((O − E)² / E) / X² (the shares of a table sum to 1). */
  contribution: number;
}

/**
 * How a window's Monte Carlo p-value was drawn (lib/stats monteCarloPValue with sequential
 * stopping, Besag & Clifford 1991): tables are drawn until `stopAfterHits` of them are at
 * least as extreme as the observed one or until `maxReplicates`.
 */
export interface MonteCarloRecord {
  /** Tables actually drawn: L when stopped at the h-th hit, else maxReplicates. */
  replicates: number;
  seed: number;
  /** p·√((1 − p)/h) when stopped, else √(p(1 − p)/maxReplicates). */
  standardError: number;
  /** Drawn tables with X² at least the observed X² (up to rounding). */
  hits: number;
  /** True: stopped at the h-th hit, p = hits/replicates. False: the cap was drawn, p = (1 + hits)/(maxReplicates + 1). */
  stoppedEarly: boolean;
  /** h, the hits that end the drawing; null when every table up to the cap is drawn. */
  stopAfterHits: number | null;
  /** The cap on tables drawn. */
  maxReplicates: number;
}

/** One window of a scan. */
export interface ScanWindow {
  start: string;
  /** Inclusive. */
  end: string;
  /** Defects in the window's table. */
  n: number;
  /** Rows of the tested table (groups with a positive total), in table order. */
  groups: string[];
  /** Categories with a positive total, in table order (before any pooling). */
  categories: string[];
  droppedGroups: string[];
  droppedCategories: string[];
  testable: boolean;
  /** Why the window is not testable, else null. */
  reason: string | null;
  chiSquare: number | null;
  df: number | null;
  pValue: number | null;
  method: TestMethod | null;
  /** Monte Carlo details when method is "monte-carlo" (seed = FNV-1a of "compare|start|end"). */
  monteCarlo: MonteCarloRecord | null;
  pooled: PooledColumns | null;
  /** Of the window's own table (before any pooling); null when not testable. */
  expectedCounts: ExpectedSummary | null;
  /** Across all testable windows of the scan, per `adjust`. */
  adjustedPValue: number | null;
  cramersVCorrected: number | null;
  flagged: boolean;
  /** Empty unless flagged; sorted by |adjusted residual|, largest first. */
  drivers: Driver[];
}

/** A cell's part in an episode. */
export interface EpisodeDriver {
  row: string;
  category: string;
  /** How many of the episode's windows this cell drives. */
  windows: number;
  /** The adjusted residual of largest magnitude over those windows (signed). */
  adjustedResidual: number;
}

/** A run of flagged windows that overlap or touch. */
export interface Episode {
  start: string;
  end: string;
  windows: number;
  /** The window with the smallest adjusted p (ties: smaller raw p, then earlier). */
  peak: ScanWindow;
  drivers: EpisodeDriver[];
}

export interface ScanResult {
  windows: ScanWindow[];
  episodes: Episode[];
}

/** One group's defect rate in a window, with its u-chart limits. */
export interface RateGroup {
  /** The line or shift code (or "current"/"baseline"). */
  group: string;
  defects: number;
  units: number;
  /** defects / units; null when no units were inspected. */
  defectsPerUnit: number | null;
  /** u-chart limits ū ± 3√(ū/units) around the window's pooled rate ū (lower clipped at 0). */
  lower: number | null;
  upper: number | null;
  /** Which side of the limits the group's rate falls, if outside. */
  outside: "above" | "below" | null;
}

/** One window of a rate scan. */
export interface RateWindow {
  start: string;
  end: string;
  groups: RateGroup[];
  /** Groups left out of the test because no units were inspected in the window. */
  droppedGroups: string[];
  testable: boolean;
  reason: string | null;
  /** Pooled rate ū = Σ defects / Σ units of the tested groups. */
  pooledRate: number | null;
  /** Poisson rate homogeneity statistic and its df (lib/stats rateHomogeneity). */
  statistic: number | null;
  df: number | null;
  pValue: number | null;
  /** Adjusted across the rate windows of the scan only (never mixed with the mix p-values). */
  adjustedPValue: number | null;
  /** A rate signal: adjusted p ≤ α. Not a mix signal. */
  rateFlagged: boolean;
}

/** A run of rate-flagged windows that overlap or touch. */
export interface RateEpisode {
  start: string;
  end: string;
  windows: number;
  /** The window with the smallest adjusted p. */
  peak: RateWindow;
}

export interface RateResult {
  windows: RateWindow[];
  episodes: RateEpisode[];
}
