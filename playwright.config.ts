import { defineConfig } from "@playwright/test";
import { tmpdir } from "node:os";
import path from "node:path";

/**
 * Browser tests drive Debian's Chromium (Playwright's own browser download cannot work
 * on these machines). The app is served from the existing build (`npm test` builds it
 * first) on a fresh demo database in the temp folder.
 */
const port = Number(process.env.LINEMIX_TEST_PORT ?? 3210);
const distDir = process.env.LINEMIX_DIST_DIR ?? ".next";
export const browserDatabase = path.join(tmpdir(), `linemix-browser-${port}`, "linemix.db");

export default defineConfig({
  testDir: "test/browser",
  testMatch: "**/*.spec.ts",
  outputDir: "test-results/browser",
  fullyParallel: false,
  workers: 1,
  retries: 0,
  timeout: 60_000,
  expect: { timeout: 10_000 },
  reporter: [["list"]],
  globalSetup: "./test/browser/global-setup.ts",
  use: {
    baseURL: `http://127.0.0.1:${port}`,
    trace: "off",
    screenshot: "only-on-failure",
    launchOptions: {
      executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
      args: [
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
        "--disable-quic",
      ],
    },
  },
  webServer: {
    command: "npx tsx lib/cli/demo.ts --no-build --fresh",
    url: `http://127.0.0.1:${port}/api/health`,
    timeout: 180_000,
    reuseExistingServer: false,
    stdout: "pipe",
    stderr: "pipe",
    env: {
      PORT: String(port),
      DATABASE_URL: `file:${browserDatabase}`,
      LINEMIX_DIST_DIR: distDir,
      NEXT_TELEMETRY_DISABLED: "1",
      LINEMIX_TEST_MODE: "1",
    },
  },
});
