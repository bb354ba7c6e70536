/**
 * Calendar arithmetic on ISO production dates (YYYY-MM-DD). Production dates are plant
 * calendar days, not instants, so all arithmetic runs in UTC to stay clear of DST.
 */

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;

/** True for a real calendar date in YYYY-MM-DD form (2026-02-30 is false). */
export function isIsoDate(value: string): boolean {
  const m = ISO_DATE.exec(value);
  if (!m) return false;
  const date = new Date(Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3])));
  return date.getUTCFullYear() === Number(m[1]) && date.getUTCMonth() === Number(m[2]) - 1 && date.getUTCDate() === Number(m[3]);
}

function toUtc(date: string): number {
  if (!isIsoDate(date)) throw new RangeError(`Not a calendar date in YYYY-MM-DD form: "${date}"`);
  return Date.UTC(Number(date.slice(0, 4)), Number(date.slice(5, 7)) - 1, Number(date.slice(8, 10)));
}

function fromUtc(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10);
}

const DAY_MS = 86_400_000;

export function addDays(date: string, days: number): string {
  return fromUtc(toUtc(date) + days * DAY_MS);
}

/** Whole days from a to b (b − a). */
export function daysBetween(a: string, b: string): number {
  return Math.round((toUtc(b) - toUtc(a)) / DAY_MS);
}

/** ISO 8601 week of a date: { year, week }, weeks starting Monday, week 1 holding the year's first Thursday. */
export function isoWeek(date: string): { year: number; week: number } {
  const ms = toUtc(date);
  const weekday = (new Date(ms).getUTCDay() + 6) % 7; // Monday = 0
  const thursday = ms + (3 - weekday) * DAY_MS;
  const year = new Date(thursday).getUTCFullYear();
  const jan4 = Date.UTC(year, 0, 4);
  const jan4Weekday = (new Date(jan4).getUTCDay() + 6) % 7;
  const week1Monday = jan4 - jan4Weekday * DAY_MS;
  return { year, week: Math.floor((thursday - week1Monday) / (7 * DAY_MS)) + 1 };
}

/** Monday of ISO week `week` of ISO year `year`. */
export function isoWeekStart(year: number, week: number): string {
  const jan4 = Date.UTC(year, 0, 4);
  const jan4Weekday = (new Date(jan4).getUTCDay() + 6) % 7;
  return fromUtc(jan4 - jan4Weekday * DAY_MS + (week - 1) * 7 * DAY_MS);
}

/** "2026-W07" label of a date's ISO week. */
export function isoWeekLabel(date: string): string {
  const { year, week } = isoWeek(date);
  return `${year}-W${String(week).padStart(2, "0")}`;
}

/** Today's calendar date in the server's local time zone (the plant's clock). */
export function localToday(now = new Date()): string {
  const y = now.getFullYear();
  const m = String(now.getMonth() + 1).padStart(2, "0");
  const d = String(now.getDate()).padStart(2, "0");
  return `${y}-${m}-${d}`;
}
