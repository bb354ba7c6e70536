import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

/**
 * Values computed by R's stats package, made by
 * test/fixtures/stats/make-fixtures.R and committed as JSON. The JSON records
 * the tool and version; every test that reads it names them as well.
 */
export interface RTableCase {
  name: string;
  observed: number[][];
  chiSquare: number;
  df: number;
  pValue: number;
  logPValue: number;
  gSquare: number;
  gPValue: number;
  gLogPValue: number;
  expected: number[][];
  pearsonResiduals: number[][];
  adjustedResiduals: number[][];
}

export interface RReference {
  tool: string;
  version: string;
  tables: RTableCase[];
  upperTailGrid: { x: number; df: number; logP: number }[];
  criticalValues: { df: number[]; upper05: number[]; upper01: number[] };
  fisher: { observed: number[][]; pValue: number }[];
  teaOneSided: number;
  pAdjust: { p: number[]; bh: number[]; holm: number[]; bonferroni: number[] }[];
  qnorm: { p: number[]; q: number[] };
  rates: {
    defects: number[];
    units: number[];
    uBar: number;
    chiSquare: number;
    df: number;
    pValue: number;
    logPValue: number;
    lower: number[];
    upper: number[];
  }[];
  lgamma: { x: number[]; value: number[] };
  driverCriticalValues: { rows: number; columns: number; alpha: number; z: number }[];
}

const path = fileURLToPath(new URL("../fixtures/stats/r-reference.json", import.meta.url));

export const R: RReference = JSON.parse(readFileSync(path, "utf8"));

/** |a − b| / |b|, with b = 0 compared absolutely. */
export function relativeError(a: number, b: number): number {
  return b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b);
}
