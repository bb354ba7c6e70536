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
 * Re-running it on the same states resets every window's adjustment, flag and drivers,
 * so the service can re-finalise after recomputing a few windows.
 *
 * Cost: O(m log m) for m testable windows, plus one analyzeTable per newly flagged window.
 *
 * @example
 * finalizeScan(states, { alpha: 0.05, adjust: "bh", minEffect: 0 }).episodes.length; // 1 for one injected change
 */
export function finalizeScan(states: readonly WindowState[], options: FinalizeOptions): ScanResult {
  const testable = states.filter((s) => s.window.testable);
  const adjusted = adjust(
    testable.map((s) => s.window.pValue!),
    options.adjust,
  );
  for (const s of states) {
    s.window.adjustedPValue = null;
    s.window.flagged = false;
    s.window.drivers = [];
  }
  testable.forEach((s, i) => {
    const w = s.window;
    w.adjustedPValue = Math.min(1, adjusted[i]);
    const strongEnough = options.minEffect === 0 || (w.cramersVCorrected ?? -1) >= options.minEffect;
    w.flagged = w.adjustedPValue <= options.alpha && strongEnough;
    if (w.flagged) w.drivers = driversOf(s, options.alpha);
  });
  const windows = states.map((s) => s.window);
  return { windows, episodes: buildEpisodes(windows) };
}

function driversOf(state: WindowState, alpha: number): ScanWindow["drivers"] {
  state.drivers ??= tableDrivers(state.table!, state.rowLabels, state.columnLabels, alpha);
  return state.drivers;
}
