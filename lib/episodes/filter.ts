import { z } from "zod";
import { isIsoDate } from "@/lib/dates";
import type { EpisodeFilter } from "@/lib/db/episodes";
import { EPISODE_STATUSES } from "./status";

/**
 * The list's filter from a query string (page search params, export URLs, the command
 * line). Unknown or malformed values are dropped with a message rather than failing the
 * page, so a pasted link still opens.
 */

const code = z.string().trim().min(1).max(64);
const date = z.string().refine(isIsoDate, "a date YYYY-MM-DD");

type Params = Record<string, string | string[] | undefined> | URLSearchParams;

function get(params: Params, key: string): string | undefined {
  if (params instanceof URLSearchParams) return params.get(key) ?? undefined;
  const value = params[key];
  return Array.isArray(value) ? value[0] : value;
}

export function parseEpisodeFilter(params: Params): { filter: EpisodeFilter; errors: string[] } {
  const filter: EpisodeFilter = {};
  const errors: string[] = [];
  const status = get(params, "status");
  if (status) {
    if (status === "open" || (EPISODE_STATUSES as readonly string[]).includes(status)) filter.status = status as EpisodeFilter["status"];
    else errors.push(`Unknown status “${status}”.`);
  }
  for (const key of ["comparison", "line", "category"] as const) {
    const value = get(params, key);
    if (!value) continue;
    const parsed = code.safeParse(value);
    if (parsed.success) filter[key] = parsed.data;
    else errors.push(`Ignored ${key}.`);
  }
  for (const key of ["from", "to"] as const) {
    const value = get(params, key);
    if (!value) continue;
    if (date.safeParse(value).success) filter[key] = value;
    else errors.push(`“${key}” must be a date YYYY-MM-DD.`);
  }
  if (filter.from && filter.to && filter.from > filter.to) {
    errors.push("“From” is after “to”; both were ignored.");
    delete filter.from;
    delete filter.to;
  }
  return { filter, errors };
}

/** "?status=open&line=P3" for a filter ("" when empty). */
export function filterQuery(filter: EpisodeFilter): string {
  const q = new URLSearchParams();
  for (const key of ["status", "comparison", "line", "category", "from", "to"] as const) {
    const value = filter[key];
    if (value) q.set(key, String(value));
  }
  const text = q.toString();
  return text ? `?${text}` : "";
}
