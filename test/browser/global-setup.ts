import { existsSync } from "node:fs";

/** Fails loudly in CI when Chromium is missing; elsewhere the runner reports why tests cannot run. */
export default function globalSetup() {
  const chromium = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
  if (!existsSync(chromium)) {
    throw new Error(
      `Chromium not found at ${chromium}. Install Debian's package: apt-get install chromium` +
        (process.env.CI === "true" ? " (CI=true: browser tests must run, not skip)" : ""),
    );
  }
}
