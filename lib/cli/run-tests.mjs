// npm test : every layer in order — unit and integration tests (vitest, with the
// migration drift check among them), a production build, then the browser tests
// (Playwright driving Debian's Chromium against that build). Stops at the first failure.
import { spawnSync } from "node:child_process";

const env = {
  ...process.env,
  NEXT_TELEMETRY_DISABLED: "1",
  CHECKPOINT_DISABLE: "1",
  LINEMIX_DIST_DIR: process.env.LINEMIX_DIST_DIR ?? ".next-test",
};

function step(title, command, args) {
  console.log(`\n=== ${title}: ${command} ${args.join(" ")}`);
  const result = spawnSync(command, args, { stdio: "inherit", env });
  if (result.status !== 0) {
    console.error(`\n${title} failed (exit ${result.status ?? result.signal}).`);
    process.exit(result.status || 1);
  }
}

const only = process.argv[2];
if (!only || only === "unit") step("unit and integration tests", "npx", ["vitest", "run"]);
if (!only || only === "browser") {
  step("production build for the browser tests", "npx", ["next", "build"]);
  step("browser tests", "npx", ["playwright", "test"]);
}
