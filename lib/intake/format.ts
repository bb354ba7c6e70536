/** Display helpers for intake pages (plant local time, the server's time zone). */

const pad = (n: number) => String(n).padStart(2, "0");

/** "2026-03-02 13:50" in plant local time. */
export function localStamp(iso: string | Date): string {
  const d = typeof iso === "string" ? new Date(iso) : iso;
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())} ${pad(d.getHours())}:${pad(d.getMinutes())}`;
}

/** "13:50" in plant local time. */
export function localClock(iso: string | Date): string {
  const d = typeof iso === "string" ? new Date(iso) : iso;
  return `${pad(d.getHours())}:${pad(d.getMinutes())}`;
}

export function firstParam(value: string | string[] | undefined): string | undefined {
  return Array.isArray(value) ? value[0] : value;
}

export const SOURCE_LABELS: Record<string, string> = {
  floor: "Floor sheet",
  import: "Import",
  api: "API",
  correction: "Correction",
};
