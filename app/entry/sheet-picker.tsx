"use client";

import { useEffect } from "react";
import { useRouter } from "next/navigation";
import { SheetChooser } from "@/app/components/forms/sheet-chooser";

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
 * Line, shift and production date of the floor sheet (the shared SheetChooser). A tablet
 * remembers the line it was last used for and opens that line.
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
    <SheetChooser
      action="/entry"
      label="Choose the sheet"
      idPrefix="pick"
      lines={lines}
      shifts={shifts}
      line={line}
      shift={shift}
      date={date}
      dateRequired
      submitLabel="Open sheet"
      footer={
        now && (
          <p className="muted picker-now">
            {now.running ? "Running now" : "Last shift"}: {shifts.find((s) => s.code === now.shift)?.name ?? now.shift} of {now.date}
            {now.startedYesterday ? " (a shift belongs to the date on which it starts)" : ""}.
          </p>
        )
      }
    />
  );
}
