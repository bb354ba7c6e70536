/** Number and date formatting shared by the review screens and the reading (pure). */

const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];

/** "3 Nov 2026" from "2026-11-03". */
export function formatDay(iso: string): string {
  const [y, m, d] = iso.split("-");
  return `${Number(d)} ${MONTHS[Number(m) - 1]} ${y}`;
}

/** "3–9 Nov 2026", "28 Oct – 3 Nov 2026", "29 Dec 2025 – 4 Jan 2026". */
export function formatRange(start: string, end: string): string {
  if (start === end) return formatDay(start);
  const [ys, ms, ds] = start.split("-");
  const [ye, me, de] = end.split("-");
  if (ys !== ye) return `${formatDay(start)} – ${formatDay(end)}`;
  if (ms !== me) return `${Number(ds)} ${MONTHS[Number(ms) - 1]} – ${Number(de)} ${MONTHS[Number(me) - 1]} ${ye}`;
  return `${Number(ds)}–${Number(de)} ${MONTHS[Number(me) - 1]} ${ye}`;
}

/** A p-value as people read it: "0.034", "2.1 × 10⁻⁸", "< 10⁻³⁰⁰". */
export function formatP(p: number | null): string {
  if (p === null || !Number.isFinite(p)) return "—";
  if (p <= 0) return "< 10⁻³⁰⁰";
  if (p >= 0.001) return p >= 0.995 ? "1.00" : p.toFixed(p >= 0.1 ? 2 : 3);
  const exponent = Math.floor(Math.log10(p));
  const mantissa = p / 10 ** exponent;
  const m = mantissa.toFixed(1);
  if (m === "10.0") return `1.0 × 10${superscript(exponent + 1)}`;
  return `${m} × 10${superscript(exponent)}`;
}

const SUPERSCRIPT: Record<string, string> = {
  "-": "⁻", "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹",
};

function superscript(n: number): string {
  return String(n)
    .split("")
    .map((c) => SUPERSCRIPT[c] ?? c)
    .join("");
}

/** Signed with a true minus: "+7.9", "−3.1", "0.0". */
export function formatSigned(x: number, digits = 1): string {
  const text = Math.abs(x).toFixed(digits);
  if (Number(text) === 0) return (0).toFixed(digits);
  return `${x < 0 ? "−" : "+"}${text}`;
}

// Number.prototype.toLocaleString with options builds a new Intl.NumberFormat on every
// call (about 80 µs here); the window screen formats some 700 numbers, so one formatter
// per digit count is kept instead (same output: toLocaleString is specified as exactly this).
const GROUPED = new Map<number, Intl.NumberFormat>();

function grouped(digits: number): Intl.NumberFormat {
  let f = GROUPED.get(digits);
  if (!f) GROUPED.set(digits, (f = new Intl.NumberFormat("en-GB", { minimumFractionDigits: digits, maximumFractionDigits: digits })));
  return f;
}

/**
 * A count or measure with thousands separators, as en-GB writes it: "12,345", "0.50".
 * Cost: one cached Intl.NumberFormat call.
 *
 * @example
 * formatNumber(12345); // "12,345"
 * formatNumber(0.5, 2); // "0.50"
 */
export function formatNumber(x: number | null, digits = 0): string {
  if (x === null || !Number.isFinite(x)) return "—";
  return grouped(digits).format(x);
}

/** An expected count: whole above 10, one decimal below. */
export function formatExpected(x: number): string {
  return x >= 10 ? formatNumber(x, 0) : formatNumber(x, 1);
}

/** "3.4×", "0.42×". */
export function formatRatio(r: number): string {
  if (!Number.isFinite(r)) return "—";
  return `${r >= 10 ? r.toFixed(0) : r >= 1 ? r.toFixed(1) : r.toFixed(2)}×`;
}

export function formatPercent(share: number, digits = 0): string {
  if (!Number.isFinite(share)) return "—";
  return `${(share * 100).toFixed(digits)}%`;
}

/** Bias-corrected Cramér's V to 2 (or 3 when small) decimals. */
export function formatV(v: number | null): string {
  if (v === null || !Number.isFinite(v)) return "—";
  return v < 0.1 ? v.toFixed(3) : v.toFixed(2);
}

/** −log10 p, capped for charts where p underflowed to 0. */
export function minusLog10(p: number | null, cap = 300): number | null {
  if (p === null || !Number.isFinite(p)) return null;
  if (p <= 0) return cap;
  return Math.min(cap, -Math.log10(p));
}
