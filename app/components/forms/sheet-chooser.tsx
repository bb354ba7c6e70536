import type { ReactNode } from "react";

type Option = { code: string; name: string };
type ShiftOption = Option & { startTime: string; endTime: string };

export type SheetChooserProps = {
  /** Where the GET form goes (/entry, /entry/corrections, /history). */
  action: string;
  /** The form's accessible name. */
  label: string;
  /** Prefix of the fields' ids, unique on the page. */
  idPrefix: string;
  lines: Option[];
  shifts: ShiftOption[];
  line?: string;
  shift?: string;
  date?: string;
  /** History names the cell date first; the floor sheets start from the line. */
  dateFirst?: boolean;
  dateRequired?: boolean;
  submitLabel: string;
  /** More fields after line, shift and date (history's category). */
  extraFields?: ReactNode;
  /** Below the fields, inside the form (the floor sheet's "running now"). */
  footer?: ReactNode;
};

/**
 * The line / shift / production-date picker of a sheet, as a plain GET form (works
 * without JavaScript): one for the floor sheet, the corrections page and the cell
 * history, so the three read the same. A shift is shown with its clock times.
 */
export function SheetChooser({ action, label, idPrefix, lines, shifts, line, shift, date, dateFirst, dateRequired, submitLabel, extraFields, footer }: SheetChooserProps) {
  const dateField = (
    <div className="field" key="date">
      <label htmlFor={`${idPrefix}-date`}>Production date</label>
      <input id={`${idPrefix}-date`} name="date" type="date" defaultValue={date ?? ""} required={dateRequired} />
    </div>
  );
  const lineField = (
    <div className="field" key="line">
      <label htmlFor={`${idPrefix}-line`}>Line</label>
      <select id={`${idPrefix}-line`} name="line" defaultValue={line}>
        {lines.map((l) => (
          <option key={l.code} value={l.code}>
            {l.name} ({l.code})
          </option>
        ))}
      </select>
    </div>
  );
  const shiftField = (
    <div className="field" key="shift">
      <label htmlFor={`${idPrefix}-shift`}>Shift</label>
      <select id={`${idPrefix}-shift`} name="shift" defaultValue={shift}>
        {shifts.map((s) => (
          <option key={s.code} value={s.code}>
            {s.name} {s.startTime}–{s.endTime}
          </option>
        ))}
      </select>
    </div>
  );
  return (
    <form method="get" action={action} className="sheet-picker card no-print" aria-label={label}>
      <div className="form-row">
        {dateFirst ? [dateField, shiftField, lineField] : [lineField, shiftField, dateField]}
        {extraFields}
        <div className="field">
          <button type="submit" className="secondary">
            {submitLabel}
          </button>
        </div>
      </div>
      {footer}
    </form>
  );
}
