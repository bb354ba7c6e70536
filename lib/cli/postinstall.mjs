// Runs after npm install: generates the Prisma client offline.
// `prisma generate` only needs PRISMA_SCHEMA_ENGINE_BINARY to name an existing file so
// that it does not try to download a native engine; it never runs that file.
import { spawnSync } from "node:child_process";
import { fileURLToPath } from "node:url";

const env = {
  ...process.env,
  PRISMA_SCHEMA_ENGINE_BINARY: process.env.PRISMA_SCHEMA_ENGINE_BINARY ?? fileURLToPath(import.meta.url),
  CHECKPOINT_DISABLE: "1",
  PRISMA_HIDE_UPDATE_MESSAGE: "1",
};
const result = spawnSync("npx", ["prisma", "generate"], { stdio: "inherit", env, shell: false });
process.exit(result.status ?? 1);
