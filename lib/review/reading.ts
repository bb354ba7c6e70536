import { formatDay, formatExpected, formatNumber, formatP, formatPercent, formatRange, formatRatio, formatSigned, formatV } from "./format";

/**
 * The plain-language reading of one window: what the numbers say, in sentences a quality
 * engineer can paste into a review, and the standing cautions. Pure: numbers in, text out.
 */

export type ReadingKind = "line" | "shift" | "history";

export interface ReadingCell {
  /** Display name of the row: "Press line 3", "Night", or "This window" / "The baseline". */
  rowName: string;
  categoryName: string;
  observed: number;
  expected: number;
  adjustedResidual: number;
  /** Share of X², 0–1. */
  contribution: number;
}

export interface ReadingRateSignal {
  groupName: string;
  /** Defects per unit in the window. */
  rate: number;
  upperLimit: number;
  lowerLimit: number;
  direction: "above" | "below";
}

export interface ReadingInput {
  kind: ReadingKind;
  /** For a history comparison, the line followed ("Press line 3"); for shifts within a line, that line. */
  subject?: string | null;
  historyWeeks?: number;
  start: string;
  end: string;
  testable: boolean;
  /** Why not testable (from the scan). */
  reason?: string | null;
  flagged: boolean;
  n: number;
  pValue: number | null;
  adjustedPValue: number | null;
  adjust: "bh" | "bonferroni" | "none";
  alpha: number;
  minEffect: number;
  cramersV: number | null;
  method: "asymptotic" | "exact" | "monte-carlo" | null;
  /** Cells beyond the critical value, largest |adjusted residual| first. */
  drivers: ReadingCell[];
  critical: number;
  /** Groups whose defect rate is outside its u-chart limits in this window. */
  rateSignals?: ReadingRateSignal[];
  /** Pooled columns, e.g. [{ label: "surface (pooled)", members: ["Scratch", "Burn mark"] }]. */
  pooled?: { label: string; members: string[] }[];
}

export interface Reading {
  headline: string;
  sentences: string[];
  /** Rate signals, kept apart from the mix: a rate signal is not a mix signal. */
  rateSentences: string[];
  cautions: string[];
}

/** How many driver cells the reading spells out. */
export const READING_CELL_LIMIT = 3;

function groupsNoun(kind: ReadingKind, subject?: string | null): string {
  if (kind === "line") return "the lines";
  if (kind === "shift") return subject ? `the shifts of ${subject}` : "the shifts";
  return `${subject ?? "the line"}'s current window and its own past`;
}

function reference(kind: ReadingKind, subject?: string | null, weeks?: number): string {
  if (kind === "line") return "at the plant's mix";
  if (kind === "shift") return subject ? `at ${subject}'s mix over all its shifts` : "at the plant's mix over all shifts";
  return `at ${subject ?? "the line"}'s mix over this window and its previous ${weeks ?? 8} weeks`;
}

function quote(name: string): string {
  return `“${name}”`;
}

/** One sentence for one cell, e.g. "Press line 3 recorded 48 “Seal leak” defects where 14 were expected …". */
export function cellSentence(cell: ReadingCell, kind: ReadingKind, subject?: string | null, weeks?: number): string {
  const ratio = cell.expected > 0 ? cell.observed / cell.expected : Number.POSITIVE_INFINITY;
  const who = kind === "history" ? cell.rowName : cell.rowName;
  const verb = cell.observed === 1 ? "defect" : "defects";
  const expected = formatExpected(cell.expected);
  const where = `where ${expected} ${expected === "1" ? "was" : "were"} expected ${reference(kind, subject, weeks)}`;
  const direction = cell.adjustedResidual >= 0 ? "" : ", fewer than its share";
  return (
    `${who} recorded ${formatNumber(cell.observed)} ${quote(cell.categoryName)} ${verb} ${where} ` +
    `(${formatRatio(ratio)}, adjusted residual ${formatSigned(cell.adjustedResidual)}${direction}); ` +
    `this cell carries ${formatPercent(cell.contribution)} of the chi-square.`
  );
}

function methodPhrase(method: ReadingInput["method"]): string {
  if (method === "exact") return "exact test, as expected counts were too small for the chi-square approximation";
  if (method === "monte-carlo") return "Monte Carlo test, as expected counts were too small for the chi-square approximation";
  return "chi-square test";
}

function adjustPhrase(input: ReadingInput): string {
  if (input.adjust === "none") return `p = ${formatP(input.pValue)}, not adjusted for the many windows`;
  const how = input.adjust === "bh" ? "false-discovery-rate adjusted" : "Bonferroni adjusted";
  return `${how} p = ${formatP(input.adjustedPValue)}, raw p = ${formatP(input.pValue)}`;
}

export function generateReading(input: ReadingInput): Reading {
  const range = formatRange(input.start, input.end);
  const groups = groupsNoun(input.kind, input.subject);
  const sentences: string[] = [];
  let headline: string;

  if (!input.testable) {
    headline = `The window ${range} cannot be tested: ${input.reason ?? "too few counts"}.`;
    sentences.push("Nothing is concluded about the mix for these days, in either direction.");
  } else if (input.flagged) {
    headline =
      `The mix of defect categories differs between ${groups} in ${range} ` +
      `(${adjustPhrase(input)}, at α = ${input.alpha}; bias-corrected Cramér's V = ${formatV(input.cramersV)}).`;
    const shown = input.drivers.slice(0, READING_CELL_LIMIT);
    for (const cell of shown) sentences.push(cellSentence(cell, input.kind, input.subject, input.historyWeeks));
    if (input.drivers.length > shown.length) {
      const more = input.drivers.length - shown.length;
      sentences.push(`${more} more ${more === 1 ? "cell lies" : "cells lie"} beyond the critical value of ±${input.critical.toFixed(2)}; see the residual table.`);
    }
    if (shown.length === 0) {
      sentences.push(
        `No single cell lies beyond the critical value of ±${input.critical.toFixed(2)}: the difference is spread over many cells.`,
      );
    } else {
      const share = shown.reduce((s, c) => s + c.contribution, 0);
      if (shown.length > 1) sentences.push(`Together these cells carry ${formatPercent(share)} of the chi-square.`);
    }
    sentences.push(`Tested with the ${methodPhrase(input.method)}, on ${formatNumber(input.n)} defects.`);
  } else {
    const p = input.adjust === "none" ? input.pValue : input.adjustedPValue;
    const gate =
      input.minEffect > 0 && p !== null && p <= input.alpha
        ? ` The p-value is below α, but V = ${formatV(input.cramersV)} is under the minimum effect of ${input.minEffect}, so the window does not flag.`
        : "";
    headline =
      `No difference in mix between ${groups} is shown in ${range} ` +
      `(${adjustPhrase(input)}, at α = ${input.alpha}; V = ${formatV(input.cramersV)}).${gate}`;
    sentences.push("Not flagging is not proof that the mixes are the same; with few defects, a real difference can go unseen.");
  }

  if (input.pooled && input.pooled.length > 0) {
    const list = input.pooled.map((p) => `${p.label} (${p.members.join(", ")})`).join("; ");
    sentences.push(`Sparse categories were pooled before testing: ${list}.`);
  }

  const rateSentences = (input.rateSignals ?? []).map(
    (r) =>
      `Rate signal, not a mix signal: ${r.groupName} made ${r.rate.toPrecision(3)} defects per unit, ` +
      `${r.direction} its u-chart ${r.direction === "above" ? "upper" : "lower"} limit of ` +
      `${(r.direction === "above" ? r.upperLimit : r.lowerLimit).toPrecision(3)}. The mix test compares proportions and does not see a change in the rate.`,
  );

  return { headline, sentences, rateSentences, cautions: standingCautions(input) };
}

/** The cautions shown with every reading. */
export function standingCautions(input: Pick<ReadingInput, "kind" | "n" | "cramersV">): string[] {
  const group = input.kind === "shift" ? "a shift" : input.kind === "history" ? "a period" : "a line";
  return [
    `An association between ${group} and a defect category is not a cause: it says where to look, not why.`,
    `Very large samples make small, unimportant differences significant (this window holds ${formatNumber(input.n)} defects): read V (${formatV(input.cramersV)}) and the observed/expected ratios, not the p-value alone.`,
    "The mix test says nothing about the defect rate: a line can make more defects of every kind and keep the same mix. Defects per unit are on their own chart.",
    "Product disposition follows the plant's quality system, customer requirements and local regulations, not this reading.",
  ];
}

/** "since 3 Nov 2026 (12 days)". */
export function flaggedSincePhrase(since: string, days: number): string {
  return `since ${formatDay(since)} (${days} ${days === 1 ? "day" : "days"})`;
}
