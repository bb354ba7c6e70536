import { spawn } from "node:child_process";
import { createRequire } from "node:module";
import path from "node:path";

const require = createRequire(import.meta.url);

/** Runs the Next.js CLI (build or start) in this folder; resolves with its exit code. */
export function runNext(args: string[], env: Record<string, string> = {}): Promise<number> {
  const nextBin = path.join(path.dirname(require.resolve("next/package.json")), "dist", "bin", "next");
  const child = spawn(process.execPath, [nextBin, ...args], {
    stdio: "inherit",
    env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1", ...env },
  });
  const forward = (signal: NodeJS.Signals) => child.kill(signal);
  process.on("SIGINT", forward);
  process.on("SIGTERM", forward);
  return new Promise((resolve) => child.on("exit", (code, signal) => resolve(code ?? (signal ? 1 : 0))));
}

export function port(): number {
  const value = Number(process.env.PORT ?? 3000);
  if (!Number.isInteger(value) || value < 1 || value > 65535) throw new Error(`PORT must be 1-65535, got "${process.env.PORT}"`);
  return value;
}
