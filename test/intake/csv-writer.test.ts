import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { csvField, csvRecord, neutraliseFormula, toCsv, unneutraliseCell } from "@/lib/csv/write-csv";

/**
 * Export safety rules:
 * - OWASP, "CSV Injection" (https://owasp.org/www-community/attacks/CSV_Injection):
 *   cells beginning with '=', '+', '-', '@', tab (0x09) or carriage return (0x0D) are
 *   prefixed with a single quote so spreadsheet software does not evaluate them.
 * - RFC 4180, "Common Format and MIME Type for CSV Files", section 2: fields containing
 *   line breaks (CRLF), double quotes or commas are enclosed in double quotes (rule 6);
 *   a double quote inside is escaped by another double quote (rule 7); each record ends
 *   with CRLF (rule 1).
 */
describe("formula neutralisation (OWASP CSV Injection)", () => {
  it.each([
    ["=SUM(A1:A9)", "'=SUM(A1:A9)"],
    ["+1+1", "'+1+1"],
    ["-2+3", "'-2+3"],
    ["@cmd", "'@cmd"],
    ["\tTAB", "'\tTAB"],
  ])("prefixes %j with a single quote", (input, expected) => {
    expect(csvField(input)).toBe(expected);
  });

  it("prefixes a leading carriage return and then quotes the field (it holds CR)", () => {
    expect(csvField("\r=1")).toBe("\"'\r=1\"");
  });

  it("leaves ordinary text and numbers alone (a number is never a formula)", () => {
    expect(csvField("scratch")).toBe("scratch");
    expect(csvField("a=b")).toBe("a=b");
    expect(csvField(42)).toBe("42");
    expect(csvField(0)).toBe("0");
    expect(csvField(null)).toBe("");
  });

  it("quotes a neutralised cell that also needs quoting", () => {
    expect(csvField('=HYPERLINK("http://x","y")')).toBe(`"'=HYPERLINK(""http://x"",""y"")"`);
  });

  it("is undone on import so an export round-trips", () => {
    for (const text of ["=1", "+x", "-L", "@a", "\tq", "plain", "'quoted already"]) {
      expect(unneutraliseCell(neutraliseFormula(text))).toBe(text);
    }
  });
});

describe("quoting (RFC 4180)", () => {
  it("encloses fields with commas, quotes, CR or LF and doubles inner quotes", () => {
    expect(csvField("a,b")).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField("two\nlines")).toBe('"two\nlines"');
    expect(csvField("cr\rhere")).toBe('"cr\rhere"');
    expect(csvField("plain text")).toBe("plain text");
  });

  it("ends every record with CRLF", () => {
    expect(csvRecord(["a", 1, null])).toBe("a,1,\r\n");
    expect(toCsv(["h1", "h2"], [["x", "y"]])).toBe("h1,h2\r\nx,y\r\n");
  });

  it("produces text a strict RFC 4180 parser reads back to the same (neutralised) values", () => {
    const rows = [
      ["plain", 'with "quotes"', "comma, inside", "line\r\nbreak", "=1+1", "-3", ""],
      ["é ü 漢字", "@x", "\ttab", "trailing space ", 7, 0, "end"],
    ] as const;
    const text = toCsv(["a", "b", "c", "d", "e", "f", "g"], rows);
    const back = parse(text, { relax_column_count: false }) as string[][];
    expect(back[0]).toEqual(["a", "b", "c", "d", "e", "f", "g"]);
    expect(back[1]).toEqual(["plain", 'with "quotes"', "comma, inside", "line\r\nbreak", "'=1+1", "'-3", ""]);
    expect(back[2]).toEqual(["é ü 漢字", "'@x", "'\ttab", "trailing space ", "7", "0", "end"]);
  });
});
