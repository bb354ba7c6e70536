import type { MonteCarloRecord } from "@/lib/monitor/types";

/**
 * A Monte Carlo record as a record of the past may hold it: snapshots taken before
 * sequential stopping (a full 10,000-table run every time) carry only these three.
 */
export type MonteCarloNoteInput = Pick<MonteCarloRecord, "replicates" | "seed" | "standardError"> & Partial<MonteCarloRecord>;

function count(x: number): string {
  return x.toLocaleString("en-GB");
}

/**
 * How a window's Monte Carlo p-value was drawn, in words, for the window page's method
 * note and the episode brief. Stopped (Besag & Clifford's sequential rule): "sequential
 * Monte Carlo: stopped after h random tables at least as extreme as the observed one
 * among L drawn, p = h/L"; the cap drawn: "k of N random tables … p = (1 + k)/(N + 1)".
 * The tables are random with the window's row and column totals; "at least as extreme"
 * means a chi-square at least the observed one.
 *
 * @example
 * describeMonteCarlo({ replicates: 181, seed: 7, standardError: 0.037, hits: 100, stoppedEarly: true, stopAfterHits: 100, maxReplicates: 10_000 }); // "sequential Monte Carlo: stopped after 100 random tables at least as extreme as the observed one among 181 drawn, so p = 100/181 (random tables with the window's row and column totals; seed 7, standard error 3.7e-2)"
 */
export function describeMonteCarlo(mc: MonteCarloNoteInput): string {
  const tail = `seed ${mc.seed}, standard error ${mc.standardError.toExponential(1)}`;
  if (mc.hits === undefined) return `Monte Carlo: ${count(mc.replicates)} random tables with the window's row and column totals (${tail})`;
  if (mc.stoppedEarly) {
    return (
      `sequential Monte Carlo: stopped after ${count(mc.hits)} random tables at least as extreme as the observed one ` +
      `among ${count(mc.replicates)} drawn, so p = ${count(mc.hits)}/${count(mc.replicates)} ` +
      `(random tables with the window's row and column totals; ${tail})`
    );
  }
  const stop = mc.stopAfterHits ? `; drawing stops early only at ${count(mc.stopAfterHits)} such tables` : "";
  return (
    `Monte Carlo: ${count(mc.hits)} of ${count(mc.replicates)} random tables at least as extreme as the observed one, ` +
    `so p = (1 + ${count(mc.hits)})/${count(mc.replicates + 1)} ` +
    `(random tables with the window's row and column totals${stop}; ${tail})`
  );
}
