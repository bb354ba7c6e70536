import { addDays, isIsoDate, localToday } from "../dates";

/**
 * Plant clock: which shift is running, which production date it belongs to, and when
 * an operator may still correct a shift's entries. Clock times are "HH:MM" in the
 * plant's local time (the server's time zone). A shift whose end is not later than its
 * start crosses midnight and belongs to the production date on which it starts.
 */

export type ShiftTimes = { id: number; code: string; startTime: string; endTime: string };

const HHMM = /^([01]\d|2[0-3]):([0-5]\d)$/;

export function isClockTime(value: string): boolean {
  return HHMM.test(value);
}

function minutes(value: string): number {
  const m = HHMM.exec(value);
  if (!m) throw new RangeError(`Not a clock time in HH:MM form: "${value}"`);
  return Number(m[1]) * 60 + Number(m[2]);
}

/** Local instant of clock time `hhmm` on calendar date `date`. */
function at(date: string, hhmm: string): Date {
  const total = minutes(hhmm);
  return new Date(Number(date.slice(0, 4)), Number(date.slice(5, 7)) - 1, Number(date.slice(8, 10)), Math.floor(total / 60), total % 60);
}

/** Start and end instants of a shift worked for production date `date`. */
export function shiftInterval(shift: Pick<ShiftTimes, "startTime" | "endTime">, date: string): { start: Date; end: Date } {
  if (!isIsoDate(date)) throw new RangeError(`Not a calendar date: "${date}"`);
  const start = at(date, shift.startTime);
  const crosses = minutes(shift.endTime) <= minutes(shift.startTime);
  const end = at(crosses ? addDays(date, 1) : date, shift.endTime);
  return { start, end };
}

export type ShiftAt = { shift: ShiftTimes; productionDate: string; running: boolean };

/**
 * The shift running at `now` and its production date (a 22:00–06:00 shift at 02:00
 * belongs to yesterday). When no shift is running (a gap in the plan), the shift that
 * ended most recently; null only when there are no shifts.
 */
export function shiftAt<T extends ShiftTimes>(shifts: T[], now = new Date()): (ShiftAt & { shift: T }) | null {
  const today = localToday(now);
  let latestEnded: { shift: T; productionDate: string; end: number } | null = null;
  for (const date of [today, addDays(today, -1)]) {
    for (const shift of shifts) {
      const { start, end } = shiftInterval(shift, date);
      if (start.getTime() <= now.getTime() && now.getTime() < end.getTime()) {
        return { shift, productionDate: date, running: true };
      }
      if (end.getTime() <= now.getTime() && (!latestEnded || end.getTime() > latestEnded.end)) {
        latestEnded = { shift, productionDate: date, end: end.getTime() };
      }
    }
  }
  if (latestEnded) return { shift: latestEnded.shift, productionDate: latestEnded.productionDate, running: false };
  return shifts.length ? { shift: shifts[0], productionDate: today, running: false } : null;
}

/**
 * Operators may correct their own entries of a shift from the moment the shift starts
 * until this many minutes after it ends (end-of-shift hand-over). After that, and for
 * anyone else's entries, an engineer corrects.
 */
export const OPERATOR_CORRECTION_GRACE_MINUTES = 30;

/** The interval in which an operator may correct their own entries of (shift, date). */
export function operatorCorrectionWindow(shift: Pick<ShiftTimes, "startTime" | "endTime">, date: string): { opens: Date; closes: Date } {
  const { start, end } = shiftInterval(shift, date);
  return { opens: start, closes: new Date(end.getTime() + OPERATOR_CORRECTION_GRACE_MINUTES * 60_000) };
}

/** True when `now` lies inside the operator's correction window of (shift, date): opens ≤ now < closes. */
export function operatorMayCorrectAt(shift: Pick<ShiftTimes, "startTime" | "endTime">, date: string, now = new Date()): boolean {
  const { opens, closes } = operatorCorrectionWindow(shift, date);
  return opens.getTime() <= now.getTime() && now.getTime() < closes.getTime();
}

/** "HH:MM" local clock time of an instant, for messages. */
export function clockLabel(when: Date): string {
  return `${String(when.getHours()).padStart(2, "0")}:${String(when.getMinutes()).padStart(2, "0")}`;
}
