import { z } from "zod";
import { dayNumber } from "./dates";
import type { HistoryConfig, ScanConfig, ScanOptions } from "./types";

/**
 * Validation of scan configurations. A bad configuration is a caller's mistake, so it
 * throws a RangeError naming the field rather than producing a silently empty scan.
 */

const isoDate = z.string().refine((s) => {
  try {
    dayNumber(s);
    return true;
  } catch {
    return false;
  }
}, "must be an ISO date YYYY-MM-DD");

const codes = z.array(z.string().min(1)).min(1);

const options = {
  windowDays: z.number().int().min(1).max(3660),
  stepDays: z.number().int().min(1).max(3660),
  alpha: z.number().gt(0).lt(1),
  adjust: z.enum(["bh", "bonferroni", "none"]),
  minEffect: z.number().min(0).max(1),
  sparse: z.enum(["auto", "pool", "monte-carlo", "exact", "asymptotic"]).default("auto"),
  from: isoDate.optional(),
  to: isoDate.optional(),
  shifts: codes.optional(),
  categories: codes.optional(),
  families: z.record(z.string(), z.string()).optional(),
};

const scanSchema = z.object({ ...options, compare: z.enum(["line", "shift"]), lines: codes.optional() });
const historySchema = z.object({ ...options, line: z.string().min(1), historyWeeks: z.number().int().min(1).max(520) });

export type ResolvedScanConfig = ScanConfig & { sparse: NonNullable<ScanOptions["sparse"]> };
export type ResolvedHistoryConfig = HistoryConfig & { sparse: NonNullable<ScanOptions["sparse"]> };

function parse<T>(schema: z.ZodType<T>, config: unknown): T {
  const result = schema.safeParse(config);
  if (!result.success) {
    const issue = result.error.issues[0];
    throw new RangeError(`invalid scan configuration: ${issue.path.join(".") || "config"} ${issue.message}`);
  }
  const value = result.data as T & { from?: string; to?: string };
  if (value.from && value.to && value.from > value.to) {
    throw new RangeError(`invalid scan configuration: from (${value.from}) is after to (${value.to})`);
  }
  return value;
}

/**
 * Validates a {@link ScanConfig} (zod), filling sparse = "auto"; throws a RangeError
 * naming the first bad field.
 *
 * @example
 * resolveScanConfig({ compare: "line", windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0 }).sparse; // "auto"
 */
export function resolveScanConfig(config: ScanConfig): ResolvedScanConfig {
  return parse(scanSchema, config) as ResolvedScanConfig;
}

/**
 * Validates a {@link HistoryConfig}, filling sparse = "auto".
 *
 * @example
 * resolveHistoryConfig({ line: "L1", windowDays: 7, stepDays: 1, historyWeeks: 8, alpha: 0.05, adjust: "bh", minEffect: 0 }).historyWeeks; // 8
 */
export function resolveHistoryConfig(config: HistoryConfig): ResolvedHistoryConfig {
  return parse(historySchema, config) as ResolvedHistoryConfig;
}
