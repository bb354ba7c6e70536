/**
 * Reads the whole numbers out of a string in which any non-digit separates them
 * ("17,2 3" → 17, 2, 3). The service lets SQLite pack a line-day's entries into one
 * string with group_concat, because handing better-sqlite3 a million small rows costs
 * more than the query itself; this is the matching unpacker. Throws on a number beyond
 * 2⁵³, which a double could not hold exactly.
 *
 * Cost: one pass over the characters, no allocation.
 *
 * @example
 * const seen: number[] = []; readPackedInts("17,2 3", (v) => seen.push(v)); // seen = [17, 2, 3]
 */
export function readPackedInts(text: string, visit: (value: number) => void): void {
  let value = 0;
  let inNumber = false;
  for (let i = 0; i <= text.length; i++) {
    const code = i < text.length ? text.charCodeAt(i) : 32;
    if (code >= 48 && code <= 57) {
      value = value * 10 + (code - 48);
      inNumber = true;
      continue;
    }
    if (!inNumber) continue;
    if (value > Number.MAX_SAFE_INTEGER) throw new RangeError(`packed value ${text.slice(0, 40)}… is beyond 2^53`);
    visit(value);
    value = 0;
    inNumber = false;
  }
}
