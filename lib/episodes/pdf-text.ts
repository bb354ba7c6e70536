/**
 * Text for pdfkit's built-in Helvetica, which encodes WinAnsi (Windows-1252) only: the
 * few symbols the rest of Linemix prints that it lacks are spelled in ASCII, and any
 * other character outside WinAnsi becomes "?" rather than a broken glyph.
 */

const SUPERSCRIPTS: Record<string, string> = {
  "⁻": "-", "⁰": "0", "¹": "1", "²": "2", "³": "3", "⁴": "4", "⁵": "5", "⁶": "6", "⁷": "7", "⁸": "8", "⁹": "9",
};

const REPLACEMENTS: [RegExp, string][] = [
  [/α/g, "alpha"],
  [/−/g, "-"],
  [/≥/g, ">="],
  [/≤/g, "<="],
  [/≈/g, "~"],
  [/→/g, "->"],
  [/←/g, "<-"],
  [/▲/g, "+"],
  [/▼/g, "-"],
  [/√/g, "sqrt"],
  [/\u00a0|\u2009|\u202f/g, " "],
];

// Code points above 0xFF that WinAnsi has (pdfkit maps them to single bytes).
const WIN_ANSI_EXTRA = new Set([
  402, 8211, 8212, 8216, 8217, 8218, 8220, 8221, 8222, 8224, 8225, 8226, 8230, 8364, 8240, 8249, 8250, 710, 8482, 338, 339, 732, 352,
  353, 376, 381, 382,
]);

export function pdfText(input: string): string {
  let s = input.replace(/χ²/g, "chi-square").replace(/χ/g, "chi");
  // Powers of ten ("10⁻⁸") become "10^-8"; a lone "²" (as in X²) is WinAnsi and stays.
  s = s.replace(/(\d)([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+)/g, (_m, digit: string, run: string) => `${digit}^${[...run].map((c) => SUPERSCRIPTS[c]).join("")}`);
  s = s.replace(/[⁻⁰⁴⁵⁶⁷⁸⁹]/g, (c) => SUPERSCRIPTS[c]);
  for (const [pattern, to] of REPLACEMENTS) s = s.replace(pattern, to);
  let out = "";
  for (const ch of s) {
    const code = ch.codePointAt(0)!;
    if (code === 10 || (code >= 32 && code < 127) || (code >= 160 && code <= 255) || WIN_ANSI_EXTRA.has(code)) out += ch;
    else out += "?";
  }
  return out;
}
