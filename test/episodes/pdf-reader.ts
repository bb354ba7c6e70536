import { inflateSync } from "node:zlib";

/**
 * Just enough PDF reading for tests of the brief, in plain JS (no parser package): pages
 * and text of a pdfkit document, its content streams inflated with node:zlib when
 * compressed. pdfkit writes text with the standard fonts as hex strings in TJ arrays,
 * one array per line; bytes are WinAnsi.
 */

const WIN_ANSI: Record<number, string> = { 0x85: "…", 0x91: "‘", 0x92: "’", 0x93: "“", 0x94: "”", 0x95: "•", 0x96: "–", 0x97: "—", 0x80: "€" };

export function pdfPageCount(pdf: Buffer): number {
  return (pdf.toString("latin1").match(/\/Type \/Page(?![s\w])/g) ?? []).length;
}

/** The /Count of the page tree, which viewers use. */
export function pdfDeclaredPages(pdf: Buffer): number | null {
  const m = /\/Type \/Pages[\s\S]*?\/Count (\d+)/.exec(pdf.toString("latin1"));
  return m ? Number(m[1]) : null;
}

function decodeHex(hex: string): string {
  let out = "";
  for (let k = 0; k + 1 < hex.length; k += 2) {
    const code = Number.parseInt(hex.slice(k, k + 2), 16);
    out += WIN_ANSI[code] ?? String.fromCharCode(code);
  }
  return out;
}

/** The file's content streams as latin1 text, inflated where FlateDecode. */
export function pdfStreams(pdf: Buffer): string[] {
  const source = pdf.toString("latin1");
  const out: string[] = [];
  for (const m of source.matchAll(/<<([^<>]*)>>\s*stream\r?\n/g)) {
    const length = /\/Length (\d+)/.exec(m[1]);
    if (!length) continue;
    const start = m.index! + m[0].length;
    const bytes = pdf.subarray(start, start + Number(length[1]));
    out.push((m[1].includes("/FlateDecode") ? inflateSync(bytes) : bytes).toString("latin1"));
  }
  return out;
}

/** Text of every line in drawing order. */
export function pdfTextLines(pdf: Buffer): string[] {
  const lines: string[] = [];
  for (const m of pdfStreams(pdf).join("\n").matchAll(/\[((?:<[0-9a-fA-F]*>|\s|-?\d+(?:\.\d+)?)*)\]\s*TJ/g)) {
    const parts = [...m[1].matchAll(/<([0-9a-fA-F]*)>/g)].map((p) => decodeHex(p[1]));
    lines.push(parts.join(""));
  }
  return lines;
}

/** All text with runs of whitespace collapsed, for phrase checks across line breaks. */
export function pdfText(pdf: Buffer): string {
  return pdfTextLines(pdf).join(" ").replace(/\s+/g, " ");
}
