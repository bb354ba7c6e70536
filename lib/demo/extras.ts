import type Database from "better-sqlite3";

/**
 * Demo pieces that other modules own (accounts, saved comparisons) hook in here; each
 * returns lines to print at start-up, such as the demo sign-in.
 */
export async function seedDemoExtras(_sqlite: Database.Database): Promise<{ lines: string[] }> {
  return { lines: [] };
}
