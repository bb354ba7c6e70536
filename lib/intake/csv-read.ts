import { parse, type CsvError } from "csv-parse";
import { createHash } from "node:crypto";
import { Readable } from "node:stream";
import { unneutraliseCell } from "../csv/write-csv";
import { isIsoDate } from "../dates";
import { CODE_RULE, MAX_COUNT_PER_ROW, MAX_NOTE_LENGTH, MAX_UNITS_PER_ROW, isCode } from "./codes";

/**
 * Reading a tally or inspected-units CSV file in one streaming pass: hashing the bytes,
 * parsing (csv-parse's stream), checking every row and packing the valid rows into
 * integer columns for the insert. Nothing here touches the database; the importer
 * (import.ts) passes the code lookups in and writes the result.
 *
 * Tally files:          date,shift,line,category,count   (optional product,note)
 * Inspected-units files: date,shift,line,units            (optional product)
 * Columns in any order, header names case-insensitive, UTF-8 with or without BOM,
 * LF or CRLF. Line numbers in problems count the header as line 1.
 */

export type ImportKind = "tallies" | "units";
export type MasterKind = "line" | "shift" | "category" | "product";

export const TALLY_COLUMNS = ["date", "shift", "line", "category", "count"] as const;
export const TALLY_OPTIONAL = ["product", "note"] as const;
export const UNITS_COLUMNS = ["date", "shift", "line", "units"] as const;
export const UNITS_OPTIONAL = ["product"] as const;

export type Problem = { line: number | null; message: string };

/** Code → id for each kind of master data (all codes, retired ones included: history may use them). */
export type CodeLookup = Record<MasterKind, Map<string, number>>;

/** Most problems kept in full; beyond this only counted. */
export const MAX_PROBLEMS_LISTED = 10_000;
/** Longest record accepted (characters); protects memory against a file with no line breaks. */
export const MAX_RECORD_CHARS = 64 * 1024;
const SAMPLE_ROWS = 10;

/** Growable column of 32-bit integers. */
export class IntColumn {
  data = new Int32Array(1024);
  length = 0;
  push(value: number): void {
    if (this.length === this.data.length) {
      const next = new Int32Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length] = value;
    this.length += 1;
  }
  get(i: number): number {
    return this.data[i];
  }
}

export type ReadResult = {
  kind: ImportKind | null;
  contentHash: string;
  bytes: number;
  rows: number;
  problems: Problem[];
  /** Problems beyond MAX_PROBLEMS_LISTED, counted only. */
  moreProblems: number;
  /** Distinct dates in first-seen order; `date` holds indexes into it. */
  dates: string[];
  date: IntColumn;
  shift: IntColumn;
  line: IntColumn;
  /** Tallies: category id; units: unused. */
  category: IntColumn;
  /** Product id, 0 for none. */
  product: IntColumn;
  /** Tallies: count; units: units inspected. */
  value: IntColumn;
  /** File line number of each row (for the row's idempotency key and messages). */
  fileLine: IntColumn;
  /** Row index → note, only for rows with a note. */
  notes: Map<number, string>;
  /**
   * Codes not in the lookup, per kind, when missing codes may be added. Rows refer to
   * them with provisional ids −1, −2, … (index + 1 into this list, negated).
   */
  missing: Record<MasterKind, string[]>;
  summary: { firstDate: string | null; lastDate: string | null; total: number; perLine: Map<string, { rows: number; total: number }> };
  sample: string[][];
  header: string[];
};

type Options = { addMissing?: boolean };

type ColumnIndex = { date: number; shift: number; line: number; category: number; count: number; units: number; product: number; note: number };

/** Reads the header record: which kind of file, where each column is, or the problems with it. */
export function analyseHeader(fields: string[]): { kind: ImportKind; index: ColumnIndex } | { problems: string[] } {
  const names = fields.map((f) => f.trim().toLowerCase());
  const problems: string[] = [];
  const seen = new Map<string, number>();
  names.forEach((name, i) => {
    if (seen.has(name)) problems.push(`column "${fields[i].trim()}" appears twice in the header`);
    else seen.set(name, i);
  });
  const isUnits = seen.has("units") && !seen.has("count") && !seen.has("category");
  const kind: ImportKind = isUnits ? "units" : "tallies";
  const required: readonly string[] = kind === "units" ? UNITS_COLUMNS : TALLY_COLUMNS;
  const optional: readonly string[] = kind === "units" ? UNITS_OPTIONAL : TALLY_OPTIONAL;
  const missing = required.filter((c) => !seen.has(c));
  if (missing.length) {
    problems.push(
      `missing column${missing.length > 1 ? "s" : ""} ${missing.map((c) => `"${c}"`).join(", ")} — a tally file has the columns ` +
        `${TALLY_COLUMNS.join(",")} (optional ${TALLY_OPTIONAL.join(",")}); an inspected-units file has ${UNITS_COLUMNS.join(",")} (optional ${UNITS_OPTIONAL.join(",")})`,
    );
  }
  names.forEach((name, i) => {
    if (!required.includes(name) && !optional.includes(name)) {
      problems.push(
        name === "" ? `column ${i + 1} of the header has no name` : `unknown column "${fields[i].trim()}" (expected ${[...required, ...optional].join(", ")})`,
      );
    }
  });
  if (problems.length) return { problems };
  const at = (c: string) => seen.get(c) ?? -1;
  return {
    kind,
    index: {
      date: at("date"),
      shift: at("shift"),
      line: at("line"),
      category: at("category"),
      count: at("count"),
      units: at("units"),
      product: at("product"),
      note: at("note"),
    },
  };
}

const DIGITS = /^\d+$/;

function show(raw: string): string {
  const text = raw.length > 40 ? `${raw.slice(0, 40)}…` : raw;
  return JSON.stringify(text);
}

/** A whole number 0..max written in digits, or the reason it is not. */
export function parseWholeNumber(raw: string, name: string, max: number): number | string {
  const s = raw.trim();
  if (s === "") return `${name} is empty`;
  if (DIGITS.test(s)) {
    const n = Number(s);
    if (n > max) return `${name} ${s.length > 20 ? show(s) : s} is above the limit of ${max.toLocaleString("en")} in one row`;
    return n;
  }
  if (/^-\s*\d+(\.\d*)?$/.test(s)) return `${name} ${show(s)} is negative`;
  if (/^[+]?\d*[.,]\d+$/.test(s) || /^\d+[.,]$/.test(s)) return `${name} ${show(s)} is not a whole number`;
  return `${name} ${show(s)} is not a number`;
}

const CSV_MESSAGES: Record<string, string> = {
  CSV_QUOTE_NOT_CLOSED: "a quoted field starts here and is never closed",
  INVALID_OPENING_QUOTE: "a double quote inside an unquoted field (quote the whole field and double the inner quote)",
  CSV_INVALID_OPENING_QUOTE: "a double quote inside an unquoted field (quote the whole field and double the inner quote)",
  CSV_INVALID_CLOSING_QUOTE: "text follows the closing quote of a quoted field",
  CSV_MAX_RECORD_SIZE: `a row longer than ${MAX_RECORD_CHARS.toLocaleString("en")} characters`,
  CSV_RECORD_INCONSISTENT_FIELDS_LENGTH: "the number of fields differs from the header",
};

type Source = Readable | Buffer | Uint8Array | string | AsyncIterable<Uint8Array>;

function toReadable(source: Source): Readable {
  if (typeof source === "string") return Readable.from([Buffer.from(source, "utf8")]);
  if (source instanceof Uint8Array) return Readable.from([source]);
  if (source instanceof Readable) return source;
  return Readable.from(source);
}

/**
 * Reads and checks a whole file. Never throws for malformed content: every problem is
 * returned, each with the file line it was found on.
 */
export async function readImportFile(source: Source, lookup: CodeLookup, options: Options = {}): Promise<ReadResult> {
  const result: ReadResult = {
    kind: null,
    contentHash: "",
    bytes: 0,
    rows: 0,
    problems: [],
    moreProblems: 0,
    dates: [],
    date: new IntColumn(),
    shift: new IntColumn(),
    line: new IntColumn(),
    category: new IntColumn(),
    product: new IntColumn(),
    value: new IntColumn(),
    fileLine: new IntColumn(),
    notes: new Map(),
    missing: { line: [], shift: [], category: [], product: [] },
    summary: { firstDate: null, lastDate: null, total: 0, perLine: new Map() },
    sample: [],
    header: [],
  };
  const problem = (line: number | null, message: string) => {
    if (result.problems.length < MAX_PROBLEMS_LISTED) result.problems.push({ line, message });
    else result.moreProblems += 1;
  };

  const hash = createHash("sha256");
  const dateIndex = new Map<string, number>(); // −1: not a calendar date
  const missingIndex: Record<MasterKind, Map<string, number>> = { line: new Map(), shift: new Map(), category: new Map(), product: new Map() };
  const lineCodeById = new Map<number, string>();
  for (const [code, id] of lookup.line) lineCodeById.set(id, code);

  let header: { kind: ImportKind; index: ColumnIndex } | null = null;
  let headerWidth = 0;
  let headerBroken = false;
  let nextLine = 1;

  /** Resolves one code; records a problem and returns 0 when it cannot. */
  const resolve = (kind: MasterKind, label: string, raw: string, at: number): number => {
    const code = unneutraliseCell(raw.trim());
    const known = lookup[kind].get(code);
    if (known !== undefined) return known;
    if (code === "") {
      problem(at, `${label} is empty`);
      return 0;
    }
    if (!isCode(code)) {
      problem(at, `${label} ${show(code)} is not a valid code (${CODE_RULE})`);
      return 0;
    }
    if (!options.addMissing) {
      problem(at, `unknown ${label} ${show(code)} (add it in Setup first, or import with --add-missing)`);
      return 0;
    }
    let provisional = missingIndex[kind].get(code);
    if (provisional === undefined) {
      result.missing[kind].push(code);
      provisional = -result.missing[kind].length;
      missingIndex[kind].set(code, provisional);
      if (kind === "line") lineCodeById.set(provisional, code);
    }
    return provisional;
  };

  const onRecord = (record: string[]) => {
    const at = nextLine;
    let newlines = 0;
    for (let i = 0; i < record.length; i += 1) {
      const f = record[i];
      let k = f.indexOf("\n");
      while (k !== -1) {
        newlines += 1;
        k = f.indexOf("\n", k + 1);
      }
    }
    nextLine += 1 + newlines;
    // Blank lines (also whitespace-only) carry nothing; they are skipped.
    if (record.length === 1 && record[0].trim() === "") return;

    if (!header) {
      if (headerBroken) return;
      result.header = record.map((f) => f.trim());
      const analysed = analyseHeader(record);
      if ("problems" in analysed) {
        for (const p of analysed.problems) problem(at, p);
        headerBroken = true;
        return;
      }
      header = analysed;
      headerWidth = record.length;
      result.kind = analysed.kind;
      return;
    }
    if (headerBroken) return;
    if (record.length !== headerWidth) {
      problem(
        at,
        record.length < headerWidth
          ? `short row: ${record.length} field${record.length === 1 ? "" : "s"}, the header has ${headerWidth}`
          : `${record.length} fields, the header has ${headerWidth}`,
      );
      return;
    }
    const ix = header.index;
    const before = result.problems.length + result.moreProblems;

    const rawDate = record[ix.date].trim();
    let d = dateIndex.get(rawDate);
    if (d === undefined) {
      d = isIsoDate(rawDate) ? result.dates.length : -1;
      if (d >= 0) result.dates.push(rawDate);
      dateIndex.set(rawDate, d);
    }
    if (d < 0) {
      problem(
        at,
        rawDate === ""
          ? "date is empty"
          : /^\d{4}-\d{2}-\d{2}$/.test(rawDate)
            ? `date ${show(rawDate)} is not a real calendar date`
            : `date ${show(rawDate)} is not in YYYY-MM-DD form`,
      );
    }
    const shift = resolve("shift", "shift", record[ix.shift], at);
    const line = resolve("line", "line", record[ix.line], at);
    const category = header.kind === "tallies" ? resolve("category", "category", record[ix.category], at) : 0;
    let product = 0;
    if (ix.product >= 0 && record[ix.product].trim() !== "") product = resolve("product", "product", record[ix.product], at);
    const value =
      header.kind === "tallies"
        ? parseWholeNumber(record[ix.count], "count", MAX_COUNT_PER_ROW)
        : parseWholeNumber(record[ix.units], "units", MAX_UNITS_PER_ROW);
    if (typeof value === "string") problem(at, value);
    let note: string | null = null;
    if (ix.note >= 0) {
      const text = unneutraliseCell(record[ix.note].trim());
      if (text.length > MAX_NOTE_LENGTH) problem(at, `note is ${text.length} characters, at most ${MAX_NOTE_LENGTH}`);
      else if (text.includes("\uFFFD")) problem(at, "note is not valid UTF-8 text");
      else if (text !== "") note = text;
    }
    if (result.problems.length + result.moreProblems !== before || typeof value === "string") return;

    const row = result.rows;
    result.date.push(d);
    result.shift.push(shift);
    result.line.push(line);
    result.category.push(category);
    result.product.push(product);
    result.value.push(value);
    result.fileLine.push(at);
    if (note !== null) result.notes.set(row, note);
    result.rows += 1;

    const date = result.dates[d];
    const s = result.summary;
    if (s.firstDate === null || date < s.firstDate) s.firstDate = date;
    if (s.lastDate === null || date > s.lastDate) s.lastDate = date;
    s.total += value;
    const lineCode = lineCodeById.get(line) ?? String(line);
    const perLine = s.perLine.get(lineCode);
    if (perLine) {
      perLine.rows += 1;
      perLine.total += value;
    } else s.perLine.set(lineCode, { rows: 1, total: value });
    if (result.sample.length < SAMPLE_ROWS) result.sample.push(record.map((f) => f.trim()));
  };

  await new Promise<void>((done) => {
    const input = toReadable(source);
    const parser = parse({
      bom: true,
      relax_column_count: true,
      record_delimiter: ["\r\n", "\n"],
      max_record_size: MAX_RECORD_CHARS,
    });
    let finished = false;
    const finish = () => {
      if (finished) return;
      finished = true;
      done();
    };
    input.on("data", (chunk: Buffer | string) => {
      const bytes = typeof chunk === "string" ? Buffer.from(chunk) : chunk;
      hash.update(bytes);
      result.bytes += bytes.length;
    });
    input.on("error", (error: Error) => {
      problem(null, `the file could not be read: ${error.message}`);
      parser.destroy();
      finish();
    });
    parser.on("data", onRecord);
    parser.on("error", (error: CsvError) => {
      const code = error.code ?? "";
      // The line where the broken row starts (csv-parse's own count is off for CRLF inside quotes).
      const line = nextLine;
      problem(line, `${CSV_MESSAGES[code] ?? error.message.replace(/ at line \d+.*$/, "")}; the rest of the file was not read`);
      input.unpipe(parser);
      // Keep hashing the remaining bytes so the content hash is of the whole file.
      input.resume();
      input.once("end", finish);
      input.once("close", finish);
      if (input.readableEnded) finish();
    });
    parser.on("end", finish);
    input.pipe(parser);
  });

  result.contentHash = hash.digest("hex");
  if (!header && !headerBroken && result.problems.length === 0) {
    problem(null, "the file is empty: no header and no rows");
  } else if (header && result.rows === 0 && result.problems.length === 0) {
    problem(null, "the file has a header but no rows");
  }
  return result;
}

export function formatProblem(p: Problem): string {
  return p.line === null ? p.message : `line ${p.line}: ${p.message}`;
}
