/**
 * Public surface of the monitoring engine (pure: no database). The database-backed
 * service is lib/monitor/service (runComparison, runAllComparisons, windowDetail),
 * kept out of this entry so that importing the engine or its types never opens SQLite.
 */
export { scanWindows } from "./scan-windows";
export { scanHistory } from "./scan-history";
export { scanRates } from "./rates";
export { MONTE_CARLO_REPLICATES } from "./window-test";
export type * from "./types";
