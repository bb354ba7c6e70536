/**
 * The invented demo plant: "Tarnwick Closures", a moulding plant that makes plastic
 * caps and closures on five press lines over three shifts. No real company is meant.
 *
 * Two stories are planted in the history so the demo has something to find:
 * - a defect-MIX change: line P3 makes far more "seal-leak" than its usual mix for
 *   about two weeks (a worn sealing die, say);
 * - a defect-RATE change: line P2 makes about 80% more defects of every kind for
 *   about two weeks (a raw-material lot, say). Its mix stays the same, so the mix test
 *   must stay quiet and the rate test must speak.
 */

export const DEMO_PLANT_NAME = "Tarnwick Closures (invented demo plant)";

export const DEMO_LINES = [
  { code: "P1", name: "Press line 1" },
  { code: "P2", name: "Press line 2" },
  { code: "P3", name: "Press line 3" },
  { code: "P4", name: "Press line 4" },
  { code: "P5", name: "Press line 5 (tamper band)" },
];

export const DEMO_SHIFTS = [
  { code: "EARLY", name: "Early", startTime: "06:00", endTime: "14:00" },
  { code: "LATE", name: "Late", startTime: "14:00", endTime: "22:00" },
  { code: "NIGHT", name: "Night", startTime: "22:00", endTime: "06:00" },
];

/** Categories with their usual share of the plant's defects (weights, not normalised). */
export const DEMO_CATEGORIES = [
  { code: "short-shot", name: "Short shot", family: "fill", weight: 14 },
  { code: "flash", name: "Flash", family: "fill", weight: 12 },
  { code: "sink-mark", name: "Sink mark", family: "surface", weight: 9 },
  { code: "warp", name: "Warp", family: "dimensional", weight: 7 },
  { code: "burn-mark", name: "Burn mark", family: "surface", weight: 5 },
  { code: "contamination", name: "Black speck / contamination", family: "surface", weight: 8 },
  { code: "colour-streak", name: "Colour streak", family: "surface", weight: 6 },
  { code: "scratch", name: "Scratch", family: "surface", weight: 5 },
  { code: "dim-oot", name: "Dimension out of tolerance", family: "dimensional", weight: 6 },
  { code: "seal-leak", name: "Seal leak", family: "function", weight: 4 },
  { code: "liner-missing", name: "Liner missing", family: "assembly", weight: 3 },
  { code: "band-broken", name: "Tamper band broken", family: "assembly", weight: 3 },
];

export const DEMO_PRODUCTS = [
  { code: "CAP-28", name: "28 mm screw cap" },
  { code: "CAP-38", name: "38 mm sports cap" },
];

/** Mean defects per shift for each line, and units inspected per shift. */
export const DEMO_LINE_PROFILE: Record<string, { defectsPerShift: number; unitsPerShift: number }> = {
  P1: { defectsPerShift: 34, unitsPerShift: 9_000 },
  P2: { defectsPerShift: 28, unitsPerShift: 8_000 },
  P3: { defectsPerShift: 30, unitsPerShift: 8_500 },
  P4: { defectsPerShift: 24, unitsPerShift: 7_000 },
  P5: { defectsPerShift: 20, unitsPerShift: 6_000 },
};

export const DEMO_DAYS = 183;

/** Where the planted changes sit, counted in days back from the last day of history. */
export const DEMO_STORIES = {
  mix: { line: "P3", category: "seal-leak", startDaysBack: 40, lengthDays: 14, factor: 3.5 },
  rate: { line: "P2", startDaysBack: 75, lengthDays: 14, factor: 1.8 },
};

export const DEMO_PASSWORD_NOTE =
  "Demo accounts use demo passwords printed at start-up; never use them outside the demo.";
