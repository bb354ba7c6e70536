/**
 * Calendar days as integers (days since 1970-01-01, UTC). Production dates are plant
 * calendar days, not instants: doing the arithmetic on UTC day numbers means a window
 * of 7 days is always 7 days, whatever daylight-saving change falls inside it.
 */

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;
const MS_PER_DAY = 86_400_000;

/**
 * Day number of an ISO date ("YYYY-MM-DD"); throws RangeError on anything else,
 * including impossible dates such as 2026-02-30.
 *
 * @example
 * dayNumber("1970-01-02"); // 1
 */
export function dayNumber(iso: string): number {
  const m = ISO_DATE.exec(iso);
  if (!m) throw new RangeError(`not an ISO date (YYYY-MM-DD): "${iso}"`);
  const ms = Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]));
  const day = ms / MS_PER_DAY;
  if (isoDate(day) !== iso) throw new RangeError(`not a calendar date: "${iso}"`);
  return day;
}

/**
 * ISO date of a day number.
 *
 * @example
 * isoDate(20_454); // "2026-01-01"
 */
export function isoDate(day: number): string {
  // A scan names every window's start and end: a few thousand distinct days, many calls.
  let iso = isoCache.get(day);
  if (iso === undefined) {
    iso = new Date(day * MS_PER_DAY).toISOString().slice(0, 10);
    if (isoCache.size < ISO_CACHE_LIMIT) isoCache.set(day, iso);
  }
  return iso;
}

const ISO_CACHE_LIMIT = 100_000;
const isoCache = new Map<number, string>();

/**
 * The ISO date `days` calendar days after `iso` (negative goes back).
 *
 * @example
 * addDays("2026-03-28", 2); // "2026-03-30" (across the EU clock change)
 */
export function addDays(iso: string, days: number): string {
  return isoDate(dayNumber(iso) + days);
}

/**
 * A memoising ISO-date parser for hot loops: two million rows carry only a few thousand
 * distinct dates, so each distinct string is parsed (regex + Date.UTC) once and then
 * costs one Map lookup.
 *
 * @example
 * dayNumberCache()("2026-03-08"); // 20520
 */
export function dayNumberCache(): (iso: string) => number {
  const seen = new Map<string, number>();
  return (iso) => {
    let d = seen.get(iso);
    if (d === undefined) {
      d = dayNumber(iso);
      seen.set(iso, d);
    }
    return d;
  };
}
