/**
 * The settings form's wire format: FormData → the plain object the zod schema checks, and
 * the typed result the form shows. Pure, so it is unit-tested without a server.
 */

export type SettingsFormResult =
  | { status: "idle"; message?: undefined; fieldErrors: Record<string, string> }
  | { status: "saved"; message: string; fieldErrors: Record<string, string> }
  | { status: "error"; message: string; fieldErrors: Record<string, string> };

export const IDLE: SettingsFormResult = { status: "idle", fieldErrors: {} };

function num(form: FormData, key: string): number {
  const raw = form.get(key);
  if (raw === null || String(raw).trim() === "") return Number.NaN;
  return Number(String(raw).replace(",", "."));
}

/** A code list: null when "all" is ticked, else the ticked codes. */
function codes(form: FormData, key: string): string[] | null {
  if (form.get(`${key}-all`) === "on") return null;
  return form.getAll(key).map(String).filter((c) => c !== "");
}

export function parseSettingsForm(form: FormData) {
  return {
    name: String(form.get("name") ?? ""),
    windowDays: num(form, "windowDays"),
    stepDays: num(form, "stepDays"),
    alpha: num(form, "alpha"),
    adjust: String(form.get("adjust") ?? ""),
    minEffect: num(form, "minEffect"),
    sparse: String(form.get("sparse") ?? ""),
    historyWeeks: num(form, "historyWeeks"),
    lines: codes(form, "lines"),
    shifts: codes(form, "shifts"),
    categories: codes(form, "categories"),
  };
}
