import { tableDrivers } from "./drivers";
import { buildEpisodes } from "./episodes";
import { adjust } from "./stats";
import type { AdjustMethod, ScanResult, ScanWindow } from "./types";
import type { WindowState } from "./window-test";

export interface FinalizeOptions {
  alpha: number;
  adjust: AdjustMethod;
  minEffect: number;
}

/**
 * The across-window pass: adjusts the raw p-values of all testable windows together,
 * flags windows with adjusted p ≤ α and bias-corrected Cramér's V ≥ minEffect, names the
 * drivers of flagged windows, and merges flagged windows into episodes.
 *
 * Why adjust: a scan tests hundreds of overlapping windows, and with no control about
 * α = 5% of quiet windows would flag. Benjamini–Hochberg ("bh") controls the false
 * discovery rate among flagged windows, and stays valid under the positive regression
 * dependence that overlapping windows (sharing days, hence counts) produce — Benjamini &
 * Yekutieli 2001, "The control of the false discovery rate in multiple testing under
 * dependency", Ann. Statist. 29:1165–1188. Under the global null (nothing changes
 * anywhere) FDR control is FWER control, so a quiet history flags nothing with
 * probability ≥ 1 − α. Bonferroni controls FWER under any dependence but loses power
 * with the hundreds of windows of a long scan; "none" reports raw p.
 *
 * It never mutates the states (it returns new window objects), so the service can
 * re-finalise after retesting a few windows while earlier results stay as they were.
 *
 * Cost: O(m log m) for m testable windows, plus one analyzeTable per newly flagged window.
 *
 * @example
 * // the R fixture's dense set (test/fixtures/monitor): adjusted p equal p.adjust(p, "BH")
 * finalizeScan(states, { alpha: 0.05, adjust: "bh", minEffect: 0 }).windows[5].adjustedPValue; // 0.0007053443195851037
 */
export function finalizeScan(states: readonly WindowState[], options: FinalizeOptions): ScanResult {
  const testable = states.filter((s) => s.window.testable);
  const adjusted = adjust(
    testable.map((s) => s.window.pValue!),
    options.adjust,
  );
  const adjustedOf = new Map(testable.map((s, i) => [s, Math.min(1, adjusted[i])]));
  // Fresh window objects each pass: results handed out earlier never change under their holder.
  const windows = states.map((s): ScanWindow => {
    const adjustedPValue = adjustedOf.get(s) ?? null;
    if (adjustedPValue === null) return { ...s.window, adjustedPValue: null, flagged: false, drivers: [] };
    const w = s.window;
    const strongEnough = options.minEffect === 0 || (w.cramersVCorrected ?? -1) >= options.minEffect;
    const flagged = adjustedPValue <= options.alpha && strongEnough;
    return { ...w, adjustedPValue, flagged, drivers: flagged ? driversOf(s, options.alpha) : [] };
  });
  return { windows, episodes: buildEpisodes(windows) };
}

function driversOf(state: WindowState, alpha: number): ScanWindow["drivers"] {
  state.drivers ??= tableDrivers(state.table!, state.rowLabels, state.columnLabels, alpha);
  return state.drivers;
}
