import { z } from "zod";

/**
 * The one definition of a master-data code (line, shift, defect category, product):
 * 1–32 characters of letters, digits, '-', '_' and '.'. Every entry path (floor sheet,
 * CSV import, JSON API, setup pages) checks codes through this module.
 */
export const CODE_PATTERN = /^[A-Za-z0-9._-]{1,32}$/;
export const CODE_PATTERN_SOURCE = "^[A-Za-z0-9._-]{1,32}$";
export const CODE_RULE = "1–32 letters, digits, '-', '_' or '.'";

export function isCode(value: string): boolean {
  return CODE_PATTERN.test(value);
}

export const codeSchema = z
  .string()
  .regex(CODE_PATTERN, { message: `a code is ${CODE_RULE}` });

/** Largest count of one category accepted in one row (import, API, floor sheet). */
export const MAX_COUNT_PER_ROW = 1_000_000;
/** Largest number of units inspected accepted in one row. */
export const MAX_UNITS_PER_ROW = 100_000_000;
/** Longest free-text note on a row, and longest correction reason. */
export const MAX_NOTE_LENGTH = 500;
export const MAX_REASON_LENGTH = 500;
