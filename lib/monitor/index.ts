/** Public surface of the monitoring engine. */
export { scanWindows } from "./scan-windows";
export { scanHistory } from "./scan-history";
export type * from "./types";
