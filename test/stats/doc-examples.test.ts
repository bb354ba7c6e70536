import { readdirSync, readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import { skipN } from "pure-rand/utils/skipN";
import { describe, expect, it } from "vitest";
import * as stats from "@/lib/stats";
// Modules with exports beyond the index (internal to lib/stats, examples all the same).
import * as monteCarlo from "@/lib/stats/monte-carlo";
import * as patefield from "@/lib/stats/patefield";
import * as permutationSampler from "@/lib/stats/permutation-sampler";
import * as shuffleKernel from "@/lib/stats/shuffle-kernel";

// Every @example in lib/stats ends in `expression; // value`; this runs each one
// and checks the value, so the documentation cannot drift from the code.
// "…" after a number means "these digits, then more"; "≈" means within 1e-12.
const directory = fileURLToPath(new URL("../../lib/stats/", import.meta.url));

interface Example {
  file: string;
  setup: string[];
  expression: string;
  expected: string;
}

function examples(): Example[] {
  const out: Example[] = [];
  for (const file of readdirSync(directory).filter((f) => f.endsWith(".ts"))) {
    const lines = readFileSync(directory + file, "utf8").split("\n");
    for (let k = 0; k < lines.length; k++) {
      if (!lines[k].includes("@example")) continue;
      const body: string[] = [];
      for (let j = k + 1; j < lines.length && !lines[j].includes("*/"); j++) body.push(lines[j].replace(/^\s*\* ?/, ""));
      const last = body.pop() as string;
      const match = /^(.*?);\s*\/\/\s*(.*)$/.exec(last);
      if (match === null) throw new Error(`${file}: example without "; // value": ${last}`);
      out.push({ file, setup: body, expression: match[1], expected: match[2] });
    }
  }
  return out;
}

function evaluate(example: Example): unknown {
  const scope: Record<string, unknown> = { ...monteCarlo, ...patefield, ...permutationSampler, ...shuffleKernel, ...stats, xoroshiro128plus, skipN };
  const names = Object.keys(scope);
  const run = new Function(...names, `${example.setup.join("\n")}\nreturn (${example.expression});`);
  return run(...names.map((n) => scope[n]));
}

function check(actual: unknown, expectedText: string): void {
  const text = expectedText.replace(/−/g, "-").split(/\s{2}|;\s/)[0].trim();
  if (text.startsWith("≈")) {
    const value = Number(text.slice(1).trim());
    expect(Math.abs((actual as number) - value)).toBeLessThan(1e-12 * Math.max(1, Math.abs(value)));
  } else if (text.endsWith("…")) {
    expect(String(actual).startsWith(text.slice(0, -1)), `${String(actual)} starts with ${text}`).toBe(true);
  } else {
    const value: unknown = JSON.parse(text);
    if (typeof value === "number") {
      // A few units in the last place: the shown digits are the true value.
      expect(Math.abs((actual as number) - value)).toBeLessThanOrEqual(2e-15 * Math.abs(value));
    } else {
      expect(actual).toEqual(value);
    }
  }
}

describe("every @example in lib/stats gives the value it shows", () => {
  const all = examples();
  it("finds an example for every exported function", () => {
    for (const file of readdirSync(directory).filter((f) => f.endsWith(".ts"))) {
      const source = readFileSync(directory + file, "utf8");
      const functions = (source.match(/^export function /gm) ?? []).length;
      const documented = all.filter((e) => e.file === file).length;
      expect(documented, file).toBeGreaterThanOrEqual(functions);
    }
  });
  for (const example of all) {
    it(`${example.file}: ${example.expression}`, () => {
      check(evaluate(example), example.expected);
    });
  }
});
