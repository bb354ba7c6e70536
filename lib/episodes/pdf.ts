import PDFDocument from "pdfkit";
import { heatCell, heatLegend, heatScale } from "@/lib/review/heatmap";
import { describeMonteCarlo } from "@/lib/review/monte-carlo-note";
import { formatDay, formatExpected, formatNumber, formatP, formatPercent, formatRange, formatRatio, formatSigned, formatV, minusLog10 } from "@/lib/review/format";
import { BRIEF_CAUTIONS, type BriefData } from "./brief-data";
import { pdfText } from "./pdf-text";
import { statusLabel } from "./status";

/**
 * The one-episode brief for a root-cause meeting, drawn with pdfkit's vector API only
 * (rectangles, paths and text in the built-in Helvetica): what was flagged, the plain-
 * language reading, the drivers, the residual heatmap, the observed/expected table, the
 * timeline of adjusted p around the episode, what changed since the snapshot, status and
 * notes, the configuration and the cautions. A4 portrait.
 */

export interface BriefOptions {
  /** Deflate content streams (default). Tests turn it off to read the text back. */
  compress?: boolean;
}

const INK = "#1d2433";
const SOFT = "#4a5468";
const STRUCTURE = "#23395d";
const STRUCTURE_SOFT = "#e3e9f3";
const SIGNAL = "#9a4a00";
const SIGNAL_BG = "#fff1dc";
const RULE = "#d9d4c7";
const QUIET = "#2f6b3a";
const MUTED = "#b9b4a8";

const MARGIN = 48;
const FOOTER = 28;

type Doc = PDFKit.PDFDocument;

interface Column {
  label: string;
  width: number;
  align?: "left" | "right" | "center";
}

function iso(d: Date): string {
  return `${d.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}

class Brief {
  readonly doc: Doc;
  readonly left = MARGIN;
  readonly width: number;

  constructor(doc: Doc) {
    this.doc = doc;
    this.width = doc.page.width - 2 * MARGIN;
  }

  get bottom(): number {
    return this.doc.page.height - MARGIN - FOOTER;
  }

  /** Starts a new page unless `height` points still fit. */
  ensure(height: number): void {
    if (this.doc.y + height > this.bottom) {
      this.doc.addPage();
      this.doc.x = this.left;
      this.doc.y = MARGIN;
    }
  }

  text(s: string, options: PDFKit.Mixins.TextOptions & { size?: number; font?: string; color?: string } = {}): void {
    const { size = 9.5, font = "Helvetica", color = INK, ...rest } = options;
    this.doc.font(font).fontSize(size).fillColor(color);
    this.doc.text(pdfText(s), this.left, this.doc.y, { width: this.width, ...rest });
  }

  heading(s: string): void {
    this.ensure(60);
    this.doc.moveDown(0.6);
    const y = this.doc.y;
    this.doc.rect(this.left, y, 3, 13).fill(STRUCTURE);
    this.doc.font("Helvetica-Bold").fontSize(12).fillColor(STRUCTURE).text(pdfText(s), this.left + 9, y, { width: this.width - 9 });
    this.doc.moveDown(0.35);
    this.doc.x = this.left;
  }

  /** A table with a repeated header row; cells are plain text; `shade` marks rows. */
  table(columns: Column[], rows: string[][], options: { size?: number; shade?: (i: number) => string | null } = {}): void {
    const size = options.size ?? 8.5;
    const rowHeight = size + 7;
    const doc = this.doc;
    const header = () => {
      const y = doc.y;
      doc.rect(this.left, y, this.width, rowHeight).fill(STRUCTURE_SOFT);
      let x = this.left;
      doc.font("Helvetica-Bold").fontSize(size).fillColor(INK);
      for (const c of columns) {
        doc.text(pdfText(c.label), x + 3, y + 3.5, { width: c.width - 6, height: size * 1.2, align: c.align ?? "left", ellipsis: true });
        x += c.width;
      }
      doc.y = y + rowHeight;
    };
    this.ensure(rowHeight * 2);
    header();
    rows.forEach((row, i) => {
      if (doc.y + rowHeight > this.bottom) {
        doc.addPage();
        doc.y = MARGIN;
        header();
      }
      const y = doc.y;
      const shade = options.shade?.(i) ?? null;
      if (shade) doc.rect(this.left, y, this.width, rowHeight).fill(shade);
      doc.moveTo(this.left, y + rowHeight).lineTo(this.left + this.width, y + rowHeight).lineWidth(0.5).strokeColor(RULE).stroke();
      let x = this.left;
      doc.font("Helvetica").fontSize(size).fillColor(INK);
      row.forEach((cell, j) => {
        const c = columns[j];
        doc.text(pdfText(cell), x + 3, y + 3.5, { width: c.width - 6, height: size * 1.2, align: c.align ?? "left", ellipsis: true });
        x += c.width;
      });
      doc.y = y + rowHeight;
    });
    doc.x = this.left;
    doc.moveDown(0.5);
  }

  /** Label–value pairs in two columns. */
  facts(pairs: [string, string][]): void {
    const doc = this.doc;
    const labelWidth = 120;
    for (const [label, value] of pairs) {
      doc.font("Helvetica").fontSize(9.5);
      const h = Math.max(12, doc.heightOfString(pdfText(value), { width: this.width - labelWidth }));
      this.ensure(h + 2);
      const y = doc.y;
      doc.font("Helvetica-Bold").fontSize(9.5).fillColor(SOFT).text(pdfText(label), this.left, y, { width: labelWidth - 8 });
      doc.font("Helvetica").fontSize(9.5).fillColor(INK).text(pdfText(value), this.left + labelWidth, y, { width: this.width - labelWidth });
      doc.y = y + h + 2;
    }
    doc.x = this.left;
  }

  bullets(items: string[], color = INK): void {
    for (const item of items) {
      this.doc.font("Helvetica").fontSize(9.5);
      const h = this.doc.heightOfString(pdfText(item), { width: this.width - 14 });
      this.ensure(h + 3);
      const y = this.doc.y;
      this.doc.circle(this.left + 4, y + 4.5, 1.6).fill(color);
      this.doc.fillColor(color).text(pdfText(item), this.left + 14, y, { width: this.width - 14 });
      this.doc.moveDown(0.25);
    }
    this.doc.x = this.left;
  }
}

function rowName(data: BriefData, code: string): string {
  if (code === "current") return "This window";
  if (code === "baseline") return "Baseline";
  return data.names.rows[code] ?? code;
}

function categoryName(data: BriefData, code: string): string {
  return data.names.categories[code] ?? code;
}

function cover(b: Brief, data: BriefData): void {
  const doc = b.doc;
  const r = data.record;
  doc.rect(0, 0, doc.page.width, 6).fill(STRUCTURE);
  doc.y = MARGIN - 8;
  b.text("Linemix · flagged-period brief for a root-cause meeting", { size: 9, color: SOFT });
  doc.moveDown(0.2);
  b.text(`Flagged period #${r.id}: ${r.comparison.name}`, { size: 17, font: "Helvetica-Bold", color: STRUCTURE });
  b.text(`${formatRange(r.start, r.end)} · ${r.windows} flagged ${r.windows === 1 ? "window" : "windows"}`, { size: 11, color: INK });
  doc.moveDown(0.5);
  const y = doc.y;
  const statusText = `Status: ${statusLabel(r.status)}${r.goneAt ? " · no longer found by the scan" : ""}`;
  doc.font("Helvetica-Bold").fontSize(9.5);
  const w = doc.widthOfString(pdfText(statusText)) + 16;
  doc.roundedRect(b.left, y, w, 16, 8).fill(r.status === "new" || r.status === "investigating" ? SIGNAL_BG : STRUCTURE_SOFT);
  doc.fillColor(r.status === "new" || r.status === "investigating" ? SIGNAL : STRUCTURE).text(pdfText(statusText), b.left + 8, y + 4, { lineBreak: false });
  doc.x = b.left;
  doc.y = y + 24;
  const peak = data.peak;
  b.facts([
    ["Comparison", `${r.comparison.name} (${r.comparison.code})`],
    ["Flagged period", `${formatDay(r.start)} to ${formatDay(r.end)}, ${r.windows} ${r.windows === 1 ? "window" : "windows"} of ${data.comparison.config.windowDays} days`],
    ["Peak window", `${formatRange(r.peakStart, r.peakEnd)} (smallest adjusted p)`],
    ["Evidence at the peak", peak && peak.testable ? `adjusted p = ${formatP(peak.adjustedPValue)}, p = ${formatP(peak.pValue)}, V = ${formatV(peak.cramersVCorrected)}, ${formatNumber(peak.n)} defects` : "the peak window cannot be analysed now"],
    ["Owner", r.owner?.name ?? "nobody yet"],
    ["Action references", r.actionRefs ?? "none recorded"],
    ["First raised", iso(r.firstSeenAt)],
    [r.goneAt ? "No longer found since" : "Last seen by the scan", iso(r.goneAt ?? r.lastSeenAt)],
    ["Brief generated", `${iso(data.generatedAt)} by ${data.generatedBy}`],
  ]);
}

function reading(b: Brief, data: BriefData): void {
  b.heading("What was flagged");
  if (!data.reading) {
    b.text("The peak window cannot be read now: it is outside the data or no longer testable.", { color: SOFT });
    return;
  }
  b.text(data.reading.headline, { font: "Helvetica-Bold" });
  b.doc.moveDown(0.3);
  b.bullets([...data.reading.sentences, ...data.reading.rateSentences]);
}

function drivers(b: Brief, data: BriefData): void {
  b.heading("Drivers at the peak window");
  const peak = data.peak;
  if (!peak || !peak.testable) {
    b.text("No live analysis of the peak window.", { color: SOFT });
    return;
  }
  const episodeWindows = new Map(data.record.drivers.map((d) => [`${d.row}\u0000${d.category}`, d.windows]));
  if (peak.drivers.length === 0) {
    b.text("No cell lies beyond the critical value in the peak window now.", { color: SOFT });
    return;
  }
  const w = b.width;
  b.table(
    [
      { label: "Group", width: w * 0.17 },
      { label: "Category", width: w * 0.2 },
      { label: "Observed", width: w * 0.1, align: "right" },
      { label: "Expected", width: w * 0.1, align: "right" },
      { label: "Ratio", width: w * 0.08, align: "right" },
      { label: "Adj. residual", width: w * 0.13, align: "right" },
      { label: "Share of X²", width: w * 0.12, align: "right" },
      { label: "Windows", width: w * 0.1, align: "right" },
    ],
    peak.drivers.map((d) => [
      rowName(data, d.row),
      categoryName(data, d.category),
      formatNumber(d.observed),
      formatExpected(d.expected),
      formatRatio(d.ratio),
      formatSigned(d.adjustedResidual),
      formatPercent(d.contribution),
      String(episodeWindows.get(`${d.row}\u0000${d.category}`) ?? "–"),
    ]),
  );
  b.text("Windows: how many of the episode's flagged windows the cell drives.", { size: 8, color: SOFT });
}

/** Categories as rows, groups as columns, in blocks of at most 8 groups. */
function heatmap(b: Brief, data: BriefData): void {
  const peak = data.peak;
  if (!peak || !peak.testable || data.critical === null) return;
  b.heading("Adjusted residuals at the peak window");
  b.text(
    `Red: more defects of the category than the table's margins predict; blue: fewer. The scale is fixed in residual units; cells beyond ±${data.critical.toFixed(2)} carry a triangle (up: more, down: fewer) and a bold outline.`,
    { size: 8.5, color: SOFT },
  );
  b.doc.moveDown(0.3);
  const scale = heatScale(data.critical);
  const doc = b.doc;
  const labelWidth = 130;
  const cellHeight = 15;
  for (let g0 = 0; g0 < peak.rows.length; g0 += 8) {
    const groups = peak.rows.slice(g0, g0 + 8).map((row, k) => ({ row, i: g0 + k }));
    const cellWidth = Math.min(58, (b.width - labelWidth) / groups.length);
    doc.font("Helvetica-Bold").fontSize(7.5);
    const headerHeight = Math.min(20, Math.max(...groups.map((g) => doc.heightOfString(pdfText(rowName(data, g.row)), { width: cellWidth })))) + 3;
    const drawHeader = () => {
      const y = doc.y;
      groups.forEach((g, k) => {
        doc.font("Helvetica-Bold").fontSize(7.5).fillColor(INK);
        doc.text(pdfText(rowName(data, g.row)), b.left + labelWidth + k * cellWidth, y, { width: cellWidth, align: "center", height: 20, ellipsis: true });
      });
      doc.y = y + headerHeight;
    };
    const blockHeight = 20 + cellHeight * peak.columns.length + 40;
    b.ensure(blockHeight < b.bottom - MARGIN ? blockHeight : 20 + cellHeight * 3);
    drawHeader();
    peak.columns.forEach((category, j) => {
      if (doc.y + cellHeight > b.bottom) {
        doc.addPage();
        doc.y = MARGIN;
        drawHeader();
      }
      const y = doc.y;
      doc.font("Helvetica").fontSize(8).fillColor(INK);
      doc.text(pdfText(categoryName(data, category)), b.left, y + 3.5, { width: labelWidth - 6, height: 9.6, ellipsis: true });
      groups.forEach((g, k) => {
        const value = peak.adjustedResiduals[g.i][j];
        const cell = heatCell(scale, value);
        const x = b.left + labelWidth + k * cellWidth;
        doc.rect(x, y, cellWidth, cellHeight).fill(cell.fill);
        doc.rect(x, y, cellWidth, cellHeight).lineWidth(0.4).strokeColor("#ffffff").stroke();
        if (cell.beyond) {
          doc.rect(x + 0.8, y + 0.8, cellWidth - 1.6, cellHeight - 1.6).lineWidth(1.4).strokeColor(INK).stroke();
          const tx = x + 6;
          const ty = y + cellHeight / 2;
          if (value > 0) doc.polygon([tx - 3, ty + 2.5], [tx + 3, ty + 2.5], [tx, ty - 3]).fill(cell.text);
          else doc.polygon([tx - 3, ty - 2.5], [tx + 3, ty - 2.5], [tx, ty + 3]).fill(cell.text);
        }
        doc.font(cell.beyond ? "Helvetica-Bold" : "Helvetica").fontSize(7.5).fillColor(cell.text);
        doc.text(pdfText(cell.printed), x, y + 4, { width: cellWidth - 3, align: "right", lineBreak: false });
      });
      doc.y = y + cellHeight;
    });
    doc.moveDown(0.6);
  }
  // Legend: the nine classes as swatches.
  const legend = heatLegend(scale);
  b.ensure(34);
  const y = doc.y;
  const sw = b.width / legend.classes.length;
  legend.classes.forEach((c, k) => {
    doc.rect(b.left + k * sw, y, sw, 10).fill(c.fill);
    doc.font("Helvetica").fontSize(6.5).fillColor(INK);
    doc.text(pdfText(c.label), b.left + k * sw, y + 12, { width: sw, align: "center", lineBreak: false });
  });
  doc.x = b.left;
  doc.y = y + 26;
}

function observedTable(b: Brief, data: BriefData): void {
  const peak = data.peak;
  if (!peak || !peak.testable) return;
  b.heading("Observed (expected) counts at the peak window");
  b.text(`${formatRange(peak.start, peak.end)}: ${formatNumber(peak.n)} defects; expected counts are what the table's margins predict if every group had the same mix.`, {
    size: 8.5,
    color: SOFT,
  });
  b.doc.moveDown(0.3);
  for (let g0 = 0; g0 < peak.rows.length; g0 += 7) {
    const idx = peak.rows.slice(g0, g0 + 7).map((_, k) => g0 + k);
    const labelWidth = 130;
    const cw = (b.width - labelWidth) / idx.length;
    const drivers = new Set(peak.drivers.map((d) => `${d.row}\u0000${d.category}`));
    b.table(
      [{ label: "Category", width: labelWidth }, ...idx.map((i) => ({ label: rowName(data, peak.rows[i]), width: cw, align: "right" as const }))],
      [
        ...peak.columns.map((category, j) => [
          categoryName(data, category),
          ...idx.map((i) => {
            const mark = drivers.has(`${peak.rows[i]}\u0000${category}`) ? "* " : "";
            return `${mark}${formatNumber(peak.observed[i][j])} (${formatExpected(peak.expected[i][j])})`;
          }),
        ]),
        ["Total", ...idx.map((i) => formatNumber(peak.observed[i].reduce((s, x) => s + x, 0)))],
      ],
      { size: 8, shade: (i) => (i % 2 === 1 ? "#faf9f6" : null) },
    );
  }
  b.text("* a driver cell (beyond the critical value).", { size: 8, color: SOFT });
}

/** −log10(adjusted p) per window around the episode, with α and the episode's span. */
function timeline(b: Brief, data: BriefData): void {
  const points = data.timeline;
  b.ensure(250); // the heading stays with its chart
  b.heading("Timeline around the flagged period");
  if (points.length === 0) {
    b.text("No windows to show.", { color: SOFT });
    return;
  }
  const doc = b.doc;
  const height = 150;
  b.ensure(height + 50);
  const top = doc.y + 16;
  const axisLeft = b.left + 34;
  const plotWidth = b.width - 40;
  const bottom = top + height;
  const alpha = data.comparison.config.alpha;
  const values = points.map((p) => minusLog10(p.adjustedPValue, 300));
  const threshold = -Math.log10(alpha);
  const yMax = Math.max(threshold * 2, ...values.map((v) => v ?? 0)) * 1.08;
  const days = (iso: string) => Date.parse(`${iso}T00:00:00Z`) / 86_400_000;
  const d0 = days(points[0].start);
  const d1 = days(points[points.length - 1].end) + 1;
  const x = (iso: string, offset = 0) => axisLeft + ((days(iso) + offset - d0) / (d1 - d0)) * plotWidth;
  const y = (v: number) => bottom - (Math.min(v, yMax) / yMax) * height;

  // Episode span.
  const r = data.record;
  doc.rect(x(r.start), top, Math.max(1, x(r.end, 1) - x(r.start)), height).fill(SIGNAL_BG);
  // Peak window bracket.
  const peakRight = x(r.peakEnd, 1);
  doc.rect(x(r.peakStart), top - 9, Math.max(1, peakRight - x(r.peakStart)), 5).fill(SIGNAL);
  doc.font("Helvetica").fontSize(7).fillColor(SIGNAL).text("peak window", peakRight + 3, top - 10, { lineBreak: false });
  // Axes and grid.
  doc.lineWidth(0.6).strokeColor(INK).moveTo(axisLeft, top).lineTo(axisLeft, bottom).lineTo(axisLeft + plotWidth, bottom).stroke();
  const step = yMax > 60 ? 20 : yMax > 24 ? 10 : yMax > 10 ? 4 : yMax > 5 ? 2 : 1;
  for (let v = 0; v <= yMax; v += step) {
    doc.moveTo(axisLeft - 3, y(v)).lineTo(axisLeft, y(v)).lineWidth(0.6).strokeColor(INK).stroke();
    if (v > 0) doc.moveTo(axisLeft, y(v)).lineTo(axisLeft + plotWidth, y(v)).lineWidth(0.3).strokeColor(RULE).stroke();
    doc.font("Helvetica").fontSize(7).fillColor(SOFT).text(String(v), b.left, y(v) - 3, { width: 28, align: "right", lineBreak: false });
  }
  // α threshold.
  doc.save();
  doc.moveTo(axisLeft, y(threshold)).lineTo(axisLeft + plotWidth, y(threshold)).lineWidth(0.9).strokeColor(SIGNAL).dash(4, { space: 3 }).stroke();
  doc.restore();
  doc.font("Helvetica").fontSize(7).fillColor(SIGNAL).text(pdfText(`alpha = ${alpha}`), axisLeft + plotWidth - 60, y(threshold) - 9, { width: 58, align: "right", lineBreak: false });
  // The line of −log10 adjusted p, broken at untestable windows; markers per window.
  const mid = (p: { start: string; end: string }) => (x(p.start) + x(p.end, 1)) / 2;
  let drawing = false;
  doc.lineWidth(1.1).strokeColor(STRUCTURE);
  points.forEach((p, k) => {
    const v = values[k];
    if (v === null || !p.testable) {
      if (drawing) doc.stroke();
      drawing = false;
      return;
    }
    if (!drawing) doc.moveTo(mid(p), y(v));
    else doc.lineTo(mid(p), y(v));
    drawing = true;
  });
  if (drawing) doc.stroke();
  points.forEach((p, k) => {
    const v = values[k];
    if (v === null || !p.testable) {
      doc.rect(mid(p) - 1.5, bottom - 3, 3, 3).fill(MUTED);
      return;
    }
    if (p.flagged) doc.rect(mid(p) - 2.2, y(v) - 2.2, 4.4, 4.4).fill(SIGNAL);
    else doc.circle(mid(p), y(v), 1.4).fill(QUIET);
  });
  // Date ticks: about six, on window starts.
  const tickEvery = Math.max(1, Math.ceil(points.length / 6));
  for (let k = 0; k < points.length; k += tickEvery) {
    const px = x(points[k].start);
    doc.moveTo(px, bottom).lineTo(px, bottom + 3).lineWidth(0.6).strokeColor(INK).stroke();
    doc.font("Helvetica").fontSize(7).fillColor(SOFT).text(pdfText(formatDay(points[k].start)), px - 30, bottom + 5, { width: 60, align: "center", lineBreak: false });
  }
  // Y-axis title (rotated).
  doc.save();
  doc.rotate(-90, { origin: [b.left + 4, top + height / 2] });
  doc.font("Helvetica").fontSize(7).fillColor(SOFT).text("-log10 adjusted p", b.left + 4 - 40, top + height / 2 - 4, { width: 80, align: "center", lineBreak: false });
  doc.restore();
  doc.x = b.left;
  doc.y = bottom + 18;
  // Key.
  const ky = doc.y;
  doc.rect(b.left, ky + 1, 5, 5).fill(SIGNAL);
  doc.font("Helvetica").fontSize(7.5).fillColor(INK).text("flagged window", b.left + 8, ky, { lineBreak: false });
  doc.circle(b.left + 82, ky + 3.5, 1.6).fill(QUIET);
  doc.fillColor(INK).text("not flagged", b.left + 87, ky, { lineBreak: false });
  doc.rect(b.left + 140, ky + 1, 3, 3).fill(MUTED);
  doc.fillColor(INK).text("not testable", b.left + 146, ky, { lineBreak: false });
  doc.rect(b.left + 200, ky, 10, 7).fill(SIGNAL_BG);
  doc.fillColor(INK).text("the flagged period", b.left + 213, ky, { lineBreak: false });
  doc.x = b.left;
  doc.y = ky + 12;
  b.text("Each point is one window, placed at its middle day; higher means stronger evidence. Points above the dashed line flag (if the effect-size gate passes).", {
    size: 8,
    color: SOFT,
  });
}

function changes(b: Brief, data: BriefData): void {
  b.heading("Then and now");
  const diff = data.diff;
  if (!diff || !data.snapshot) {
    b.text("No snapshot is stored for this flagged period.", { color: SOFT });
    return;
  }
  const label = data.snapshot.reason === "raised" ? "when it was raised" : `when the status became ${statusLabel(data.snapshot.reason.replace(/^status:/, ""))}`;
  b.text(
    `Compared with the snapshot taken ${label} (${iso(data.snapshot.takenAt)}), for the window ${formatRange(diff.window.start, diff.window.end)}.` +
      (diff.anyChange ? " Changed values are shaded." : " Nothing has changed since."),
    { size: 9 },
  );
  if (diff.liveMissing) b.text(diff.liveMissing, { color: SIGNAL });
  b.doc.moveDown(0.3);
  const w = b.width;
  const fmt = (key: string, v: number | string | null) =>
    v === null ? "–" : typeof v === "string" ? v : key === "pValue" || key === "adjustedPValue" ? formatP(v) : key === "cramersVCorrected" ? formatV(v) : key === "n" ? formatNumber(v) : formatNumber(v, 2);
  const rows: string[][] = [
    ["Flagged period", `${formatRange(diff.range.then.start, diff.range.then.end)} (${diff.range.then.windows})`, diff.range.now ? `${formatRange(diff.range.now.start, diff.range.now.end)} (${diff.range.now.windows})` : "no longer found", diff.range.changed ? "changed" : ""],
    ...diff.measures.map((m) => [m.label, fmt(m.key, m.then), fmt(m.key, m.now), m.changed ? "changed" : ""]),
  ];
  b.table(
    [
      { label: "Measure", width: w * 0.34 },
      { label: "Then", width: w * 0.25, align: "right" },
      { label: "Now", width: w * 0.25, align: "right" },
      { label: "", width: w * 0.16 },
    ],
    rows,
    { shade: (i) => (rows[i][3] ? SIGNAL_BG : null) },
  );
  if (diff.cells.length > 0) {
    const cellText = (c: { observed: number; expected: number; adjustedResidual: number; driver: boolean } | null) =>
      c ? `${formatNumber(c.observed)} / ${formatExpected(c.expected)} / ${formatSigned(c.adjustedResidual)}${c.driver ? " *" : ""}` : "–";
    b.table(
      [
        { label: "Cell", width: w * 0.34 },
        { label: "Then: obs / exp / adj. res.", width: w * 0.25, align: "right" },
        { label: "Now: obs / exp / adj. res.", width: w * 0.25, align: "right" },
        { label: "", width: w * 0.16 },
      ],
      diff.cells.map((c) => [`${rowName(data, c.row)} · ${categoryName(data, c.category)}`, cellText(c.then), cellText(c.now), c.changed ? "changed" : ""]),
      { shade: (i) => (diff.cells[i].changed ? SIGNAL_BG : null) },
    );
    b.text("* a driver cell at that time.", { size: 8, color: SOFT });
  }
}

function statusAndNotes(b: Brief, data: BriefData): void {
  b.heading("Status and notes");
  if (data.history.length === 0) b.text(`Status: ${statusLabel(data.record.status)}; no status change yet.`);
  else {
    const w = b.width;
    b.table(
      [
        { label: "When", width: w * 0.2 },
        { label: "Who", width: w * 0.18 },
        { label: "Change", width: w * 0.27 },
        { label: "Reason", width: w * 0.35 },
      ],
      data.history.map((h) => [iso(h.at), h.actor, `${statusLabel(h.from)} -> ${statusLabel(h.to)}`, h.reason ?? ""]),
    );
  }
  if (data.notes.length === 0) {
    b.text("No notes.", { color: SOFT });
    return;
  }
  for (const note of data.notes) {
    b.ensure(30);
    b.text(`${note.author.name}, ${iso(note.createdAt)}`, { font: "Helvetica-Bold", size: 8.5, color: SOFT });
    b.text(note.body);
    b.doc.moveDown(0.3);
  }
}

function configuration(b: Brief, data: BriefData): void {
  b.heading("Configuration used");
  const c = data.comparison.config;
  const list = (xs: string[] | null) => (xs === null ? "all" : xs.join(", "));
  const peak = data.peak;
  b.facts([
    ["Compared", c.compare === "line" ? "lines against each other" : c.compare === "shift" ? "shifts against each other" : `one line against its previous ${c.historyWeeks} weeks`],
    ["Lines", list(c.lines)],
    ["Shifts", list(c.shifts)],
    ["Categories", list(c.categories)],
    ["Windows", `${c.windowDays} days, stepping ${c.stepDays} ${c.stepDays === 1 ? "day" : "days"}`],
    ["Flag rule", `adjusted p <= ${c.alpha} (${c.adjust === "bh" ? "Benjamini-Hochberg false discovery rate" : c.adjust === "bonferroni" ? "Bonferroni" : "no adjustment"} across windows)${c.minEffect > 0 ? ` and V >= ${c.minEffect}` : ""}`],
    ["Sparse tables", c.sparse],
    ["Peak test", peak?.method ? (peak.monteCarlo ? describeMonteCarlo(peak.monteCarlo) : peak.method) : "–"],
    ["Driver cells", data.critical !== null ? `|adjusted residual| > ${data.critical.toFixed(2)} (Bonferroni over the table's cells)` : "–"],
  ]);
}

function cautions(b: Brief): void {
  b.heading("Cautions");
  b.bullets(BRIEF_CAUTIONS, INK);
}

function footers(doc: Doc, data: BriefData): void {
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const bottomMargin = doc.page.margins.bottom;
    doc.page.margins.bottom = 0; // writing in the margin must not start a new page
    const y = doc.page.height - MARGIN + 8;
    doc.moveTo(MARGIN, y - 6).lineTo(doc.page.width - MARGIN, y - 6).lineWidth(0.5).strokeColor(RULE).stroke();
    doc.font("Helvetica").fontSize(7.5).fillColor(SOFT);
    doc.text(pdfText(`Linemix · flagged period #${data.record.id} · ${data.record.comparison.code} · generated ${iso(data.generatedAt)}`), MARGIN, y, {
      width: doc.page.width - 2 * MARGIN - 80,
      lineBreak: false,
    });
    doc.text(`page ${i - range.start + 1} of ${range.count}`, doc.page.width - MARGIN - 80, y, { width: 80, align: "right", lineBreak: false });
    doc.page.margins.bottom = bottomMargin;
  }
}

/** Renders the brief to a PDF buffer. */
export function renderEpisodeBrief(data: BriefData, options: BriefOptions = {}): Promise<Buffer> {
  const doc = new PDFDocument({
    size: "A4",
    margin: MARGIN,
    bufferPages: true,
    compress: options.compress ?? true,
    info: {
      Title: pdfText(`Flagged period #${data.record.id}: ${data.record.comparison.name}`),
      Author: pdfText(data.generatedBy),
      Subject: "Flagged-period brief",
      Creator: "Linemix",
      CreationDate: data.generatedAt,
    },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on("data", (c: Buffer) => chunks.push(c));
    doc.on("end", () => resolve(Buffer.concat(chunks)));
    doc.on("error", reject);
  });
  const b = new Brief(doc);
  cover(b, data);
  reading(b, data);
  drivers(b, data);
  timeline(b, data);
  heatmap(b, data);
  observedTable(b, data);
  changes(b, data);
  statusAndNotes(b, data);
  configuration(b, data);
  cautions(b);
  footers(doc, data);
  doc.end();
  return done;
}
