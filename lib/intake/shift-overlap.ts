import { isClockTime } from "./shift-clock";

/**
 * Do two shifts of the plant claim the same minutes of the day? A tally belongs to one
 * (date, shift), so if two shifts overlapped, the floor sheet's "shift running now" and
 * the operators' correction windows would be ambiguous. Shifts repeat every day, so
 * their clock times are arcs on a 24-hour circle: a shift whose end is not later than
 * its start crosses midnight (22:00–06:00 is 22:00–24:00 plus 00:00–06:00), as in
 * lib/intake/shift-clock.ts. End times are exclusive: 06:00–14:00 and 14:00–22:00 touch
 * and do not overlap. A shift whose start equals its end has no clock times yet (a
 * placeholder made by an import) and overlaps nothing.
 */

export type ClockShift = { code: string; startTime: string; endTime: string };

const DAY = 24 * 60;

function minutesOf(hhmm: string): number {
  if (!isClockTime(hhmm)) throw new RangeError(`Not a clock time in HH:MM form: "${hhmm}"`);
  return Number(hhmm.slice(0, 2)) * 60 + Number(hhmm.slice(3, 5));
}

function clock(minutes: number): string {
  const m = ((minutes % DAY) + DAY) % DAY;
  return `${String(Math.floor(m / 60)).padStart(2, "0")}:${String(m % 60).padStart(2, "0")}`;
}

/**
 * The shift's minutes of the day as half-open arcs [from, to) in minutes after midnight:
 * one arc, or two when it crosses midnight; none when start equals end.
 *
 * @example
 * shiftArcs({ code: "N", startTime: "22:00", endTime: "06:00" }); // [[1320, 1440], [0, 360]]
 */
export function shiftArcs(shift: ClockShift): [number, number][] {
  const start = minutesOf(shift.startTime);
  const end = minutesOf(shift.endTime);
  if (start === end) return [];
  return end > start ? [[start, end]] : [[start, DAY], ...(end > 0 ? ([[0, end]] as [number, number][]) : [])];
}

/**
 * The minutes two shifts share, as clock-time stretches (empty when they do not overlap).
 * Cost: at most four arc comparisons.
 *
 * @example
 * sharedStretches({ code: "N", startTime: "22:00", endTime: "06:00" }, { code: "A", startTime: "05:00", endTime: "13:00" });
 * // [{ from: "05:00", to: "06:00", minutes: 60 }]
 */
export function sharedStretches(a: ClockShift, b: ClockShift): { from: string; to: string; minutes: number }[] {
  const out: { from: number; to: number }[] = [];
  for (const [a0, a1] of shiftArcs(a)) {
    for (const [b0, b1] of shiftArcs(b)) {
      const from = Math.max(a0, b0);
      const to = Math.min(a1, b1);
      if (from < to) out.push({ from, to });
    }
  }
  out.sort((x, y) => x.from - y.from);
  // A stretch ending at midnight and one starting at midnight are one stretch across it.
  if (out.length > 1 && out[0].from === 0 && out[out.length - 1].to === DAY) {
    const last = out.pop()!;
    out[0] = { from: last.from, to: out[0].to + DAY };
  }
  return out.map((s) => ({ from: clock(s.from), to: clock(s.to), minutes: s.to - s.from }));
}

export type ShiftOverlap<T extends ClockShift> = { other: T; from: string; to: string; minutes: number };

/**
 * The first shift among `others` whose clock times overlap `candidate`'s, with the
 * first stretch they share; null when none does. The caller passes the plant's other
 * active shifts (without the candidate itself).
 *
 * @example
 * findShiftOverlap({ code: "N", startTime: "21:00", endTime: "06:00" }, [{ code: "B", startTime: "14:00", endTime: "22:00" }]);
 * // { other: { code: "B", … }, from: "21:00", to: "22:00", minutes: 60 }
 */
export function findShiftOverlap<T extends ClockShift>(candidate: ClockShift, others: readonly T[]): ShiftOverlap<T> | null {
  for (const other of others) {
    const shared = sharedStretches(candidate, other);
    if (shared.length > 0) return { other, ...shared[0] };
  }
  return null;
}

/**
 * The plain sentence shown when a shift would overlap another.
 *
 * @example
 * describeShiftOverlap({ code: "N", startTime: "21:00", endTime: "06:00" }, { other: { code: "B", startTime: "14:00", endTime: "22:00" }, from: "21:00", to: "22:00", minutes: 60 });
 * // "Shift N (21:00–06:00) would overlap shift B (14:00–22:00) from 21:00 to 22:00. Shifts must not overlap: each minute of the day belongs to one shift. Change the clock times, or retire B first."
 */
export function describeShiftOverlap(candidate: ClockShift, overlap: ShiftOverlap<ClockShift>): string {
  const { other } = overlap;
  return (
    `Shift ${candidate.code} (${candidate.startTime}–${candidate.endTime}) would overlap shift ${other.code} ` +
    `(${other.startTime}–${other.endTime}) from ${overlap.from} to ${overlap.to}. ` +
    `Shifts must not overlap: each minute of the day belongs to one shift. Change the clock times, or retire ${other.code} first.`
  );
}
