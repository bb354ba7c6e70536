import { describe, expect, it } from "vitest";
import { operatorCorrectionWindow, shiftAt, shiftInterval } from "@/lib/intake/shift-clock";

const shifts = [
  { id: 1, code: "A", startTime: "06:00", endTime: "14:00" },
  { id: 2, code: "B", startTime: "14:00", endTime: "22:00" },
  { id: 3, code: "N", startTime: "22:00", endTime: "06:00" },
];
const at = (date: string, hhmm: string) => new Date(Number(date.slice(0, 4)), Number(date.slice(5, 7)) - 1, Number(date.slice(8, 10)), Number(hhmm.slice(0, 2)), Number(hhmm.slice(3, 5)));

describe("the shift running now and its production date", () => {
  it.each([
    ["06:00", "A", "2026-03-02"],
    ["13:59", "A", "2026-03-02"],
    ["14:00", "B", "2026-03-02"],
    ["22:00", "N", "2026-03-02"],
    ["23:59", "N", "2026-03-02"],
  ])("at %s on 2026-03-02 it is %s of %s", (time, code, date) => {
    const found = shiftAt(shifts, at("2026-03-02", time))!;
    expect([found.shift.code, found.productionDate, found.running]).toEqual([code, date, true]);
  });

  it("a night shift 22:00–06:00 at 02:00 belongs to yesterday's date; 06:00 is the next day's early shift", () => {
    expect(shiftAt(shifts, at("2026-03-03", "02:00"))).toMatchObject({ shift: { code: "N" }, productionDate: "2026-03-02", running: true });
    expect(shiftAt(shifts, at("2026-03-03", "05:59"))).toMatchObject({ shift: { code: "N" }, productionDate: "2026-03-02" });
    expect(shiftAt(shifts, at("2026-03-03", "06:00"))).toMatchObject({ shift: { code: "A" }, productionDate: "2026-03-03" });
  });

  it("across a month and a year end", () => {
    expect(shiftAt(shifts, at("2027-01-01", "03:00"))).toMatchObject({ shift: { code: "N" }, productionDate: "2026-12-31" });
    expect(shiftAt(shifts, at("2026-03-01", "01:00"))).toMatchObject({ productionDate: "2026-02-28" });
  });

  it("in a gap between shifts, the shift that ended last (not running)", () => {
    const two = shifts.slice(0, 2); // nothing from 22:00 to 06:00
    expect(shiftAt(two, at("2026-03-03", "02:00"))).toMatchObject({ shift: { code: "B" }, productionDate: "2026-03-02", running: false });
    expect(shiftAt([], at("2026-03-03", "02:00"))).toBeNull();
  });

  it("intervals and the operator correction window", () => {
    const { start, end } = shiftInterval(shifts[2], "2026-03-02");
    expect(start).toEqual(at("2026-03-02", "22:00"));
    expect(end).toEqual(at("2026-03-03", "06:00"));
    const w = operatorCorrectionWindow(shifts[0], "2026-03-02");
    expect([w.opens, w.closes]).toEqual([at("2026-03-02", "06:00"), at("2026-03-02", "14:30")]);
  });
});
