import type Database from "better-sqlite3";
import { seedDemoAccounts } from "../auth/demo-accounts";

/**
 * Demo pieces that other modules own (accounts, saved comparisons) hook in here; each
 * returns lines to print at start-up, such as the demo sign-in. Keep this a list of
 * small calls.
 */
export async function seedDemoExtras(sqlite: Database.Database): Promise<{ lines: string[] }> {
  const lines: string[] = [];
  lines.push(...(await seedDemoAccounts(sqlite)));
  return { lines };
}
