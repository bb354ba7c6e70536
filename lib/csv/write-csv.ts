import type { Writable } from "node:stream";

/**
 * CSV writing for every export of Linemix (tallies, units, episodes).
 *
 * - Quoting per RFC 4180: a field holding a comma, a double quote, CR or LF is enclosed
 *   in double quotes and its double quotes are doubled; records end with CRLF.
 * - Spreadsheet formula neutralisation per OWASP "CSV Injection": a text cell beginning
 *   with '=', '+', '-', '@', a tab or a carriage return is prefixed with a single quote
 *   so a spreadsheet shows it as text instead of evaluating it. Numbers are written as
 *   numbers (a JS number never forms a formula). The importer reads such a prefixed cell
 *   back as the original text (see unneutraliseCell), so exports round-trip.
 */

export type CsvValue = string | number | bigint | boolean | null | undefined;

export const CSV_RECORD_END = "\r\n";

const FORMULA_START = new Set(["=", "+", "-", "@", "\t", "\r"]);
const NEEDS_QUOTES = /[",\r\n]/;

/** The text of a cell with a leading formula trigger defused by a single quote. */
export function neutraliseFormula(text: string): string {
  return text.length > 0 && FORMULA_START.has(text[0]) ? `'${text}` : text;
}

/** The inverse applied on import: "'=x" → "=x"; any other text unchanged. */
export function unneutraliseCell(text: string): string {
  return text.length > 1 && text[0] === "'" && FORMULA_START.has(text[1]) ? text.slice(1) : text;
}

/** One field, neutralised and quoted as needed. */
export function csvField(value: CsvValue): string {
  if (value === null || value === undefined) return "";
  if (typeof value === "number") {
    if (!Number.isFinite(value)) return "";
    return String(value);
  }
  if (typeof value === "bigint") return value.toString();
  if (typeof value === "boolean") return value ? "true" : "false";
  const text = neutraliseFormula(value);
  return NEEDS_QUOTES.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** One record including its CRLF terminator. */
export function csvRecord(values: readonly CsvValue[]): string {
  let out = "";
  for (let i = 0; i < values.length; i += 1) {
    if (i > 0) out += ",";
    out += csvField(values[i]);
  }
  return out + CSV_RECORD_END;
}

/** A whole document in memory (small exports, tests). */
export function toCsv(header: readonly string[], rows: Iterable<readonly CsvValue[]>): string {
  let out = csvRecord(header);
  for (const row of rows) out += csvRecord(row);
  return out;
}

/**
 * Streams a header and rows to a writable (stdout, a file, a response body), batching
 * records into chunks and honouring back-pressure. Resolves with the number of rows.
 */
export async function writeCsv(
  out: Writable,
  header: readonly string[],
  rows: Iterable<readonly CsvValue[]> | AsyncIterable<readonly CsvValue[]>,
  chunkChars = 64 * 1024,
): Promise<number> {
  let buffer = csvRecord(header);
  let count = 0;
  const flush = async () => {
    if (buffer.length === 0) return;
    const ok = out.write(buffer);
    buffer = "";
    if (!ok) await new Promise<void>((resolve) => out.once("drain", resolve));
  };
  for await (const row of rows as AsyncIterable<readonly CsvValue[]>) {
    buffer += csvRecord(row);
    count += 1;
    if (buffer.length >= chunkChars) await flush();
  }
  await flush();
  return count;
}

/**
 * The same as a web ReadableStream of UTF-8 bytes, for route handlers
 * (`new Response(csvStream(...), { headers: { "content-type": "text/csv" } })`).
 */
export function csvStream(
  header: readonly string[],
  rows: Iterable<readonly CsvValue[]>,
  chunkChars = 64 * 1024,
): ReadableStream<Uint8Array> {
  const encoder = new TextEncoder();
  const iterator = rows[Symbol.iterator]();
  let headerSent = false;
  return new ReadableStream<Uint8Array>({
    pull(controller) {
      let buffer = headerSent ? "" : csvRecord(header);
      headerSent = true;
      while (buffer.length < chunkChars) {
        const next = iterator.next();
        if (next.done) {
          if (buffer) controller.enqueue(encoder.encode(buffer));
          controller.close();
          return;
        }
        buffer += csvRecord(next.value);
      }
      controller.enqueue(encoder.encode(buffer));
    },
    cancel() {
      iterator.return?.();
    },
  });
}
