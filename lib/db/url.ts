import path from "node:path";

/** The database URL: DATABASE_URL, else the embedded default ./data/linemix.db. */
export function databaseUrl(): string {
  const configured = process.env.DATABASE_URL?.trim();
  if (configured) return configured;
  return `file:${path.resolve(/* turbopackIgnore: true */ process.cwd(), "data", "linemix.db")}`;
}

/** The file path inside a `file:` URL (relative paths resolve against the working folder). */
export function databaseFile(url = databaseUrl()): string {
  if (!url.startsWith("file:")) {
    throw new Error(`DATABASE_URL must be a SQLite file URL (file:...), got "${url}".`);
  }
  const raw = url.slice("file:".length).split("?")[0];
  return path.resolve(/* turbopackIgnore: true */ process.cwd(), raw);
}
