"use client";

import { useEffect } from "react";
import { useRouter } from "next/navigation";

/** Key under which a line-side device remembers its line. */
export const LINE_MEMORY_KEY = "linemix.entry.line";

type Props = {
  lines: { code: string; name: string }[];
  shifts: { code: string; name: string; startTime: string; endTime: string }[];
  line: string;
  shift: string;
  date: string;
  now: { shift: string; date: string; running: boolean; startedYesterday: boolean } | null;
  explicit: boolean;
};

/**
 * Line, shift and production date of the sheet, as a plain GET form (works without
 * JavaScript). A tablet remembers the line it was last used for and opens that line.
 */
export function SheetPicker({ lines, shifts, line, shift, date, now, explicit }: Props) {
  const router = useRouter();
  useEffect(() => {
    try {
      if (explicit) localStorage.setItem(LINE_MEMORY_KEY, line);
      else {
        const remembered = localStorage.getItem(LINE_MEMORY_KEY);
        if (remembered && remembered !== line && lines.some((l) => l.code === remembered)) {
          router.replace(`/entry?line=${encodeURIComponent(remembered)}`);
        }
      }
    } catch {
      // Storage unavailable (private mode): nothing to remember.
    }
  }, [explicit, line, lines, router]);

  return (
    <form method="get" action="/entry" className="sheet-picker card no-print" aria-label="Choose the sheet">
      <div className="form-row">
        <div className="field">
          <label htmlFor="pick-line">Line</label>
          <select id="pick-line" name="line" defaultValue={line}>
            {lines.map((l) => (
              <option key={l.code} value={l.code}>
                {l.name} ({l.code})
              </option>
            ))}
          </select>
        </div>
        <div className="field">
          <label htmlFor="pick-shift">Shift</label>
          <select id="pick-shift" name="shift" defaultValue={shift}>
            {shifts.map((s) => (
              <option key={s.code} value={s.code}>
                {s.name} {s.startTime}–{s.endTime}
              </option>
            ))}
          </select>
        </div>
        <div className="field">
          <label htmlFor="pick-date">Production date</label>
          <input id="pick-date" name="date" type="date" defaultValue={date} required />
        </div>
        <div className="field">
          <button type="submit" className="secondary">
            Open sheet
          </button>
        </div>
      </div>
      {now && (
        <p className="muted picker-now">
          {now.running ? "Running now" : "Last shift"}: {shifts.find((s) => s.code === now.shift)?.name ?? now.shift} of {now.date}
          {now.startedYesterday ? " (a shift belongs to the date on which it starts)" : ""}.
        </p>
      )}
    </form>
  );
}
