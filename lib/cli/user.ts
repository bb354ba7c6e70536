// npm run user -- <command>
//   add NAME --role operator|engineer|admin [--display "Full Name"] [--password-stdin]
//   list
//   set-role NAME ROLE
//   deactivate NAME | activate NAME
//   reset-password NAME [--password-stdin]
//   set-badge NAME BADGE [--pin-stdin]          (PIN from LINEMIX_NEW_PIN, stdin or a prompt)
//   remove-badge NAME
// Passwords come from LINEMIX_NEW_PASSWORD, from the first line of stdin with
// --password-stdin, or from a hidden prompt. Pending migrations are applied first.
import { userInfo } from "node:os";
import { createInterface } from "node:readline";
import { applyPendingMigrations } from "../db/migrate";
import { closeDb, db } from "../db/client";
import type { Actor } from "../auth/audit";
import { isRole, ROLES } from "../auth/roles";
import { createUser, findUserByName, resetPassword, setActive, setBadge, setRole, type UserResult } from "../auth/users";

const USAGE = `usage: npm run user -- <command>
  add NAME --role ${ROLES.join("|")} [--display "Full Name"] [--password-stdin]
  list
  set-role NAME ROLE
  deactivate NAME | activate NAME
  reset-password NAME [--password-stdin]
  set-badge NAME BADGE [--pin-stdin]     (PIN from LINEMIX_NEW_PIN, stdin or a prompt)
  remove-badge NAME`;

function option(args: string[], name: string): string | undefined {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
}

function positional(args: string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < args.length; i++) {
    if (args[i] === "--role" || args[i] === "--display") i++;
    else if (!args[i].startsWith("--")) out.push(args[i]);
  }
  return out;
}

async function firstStdinLine(): Promise<string> {
  const rl = createInterface({ input: process.stdin });
  for await (const line of rl) {
    rl.close();
    return line.replace(/\r$/, "");
  }
  return "";
}

/** Reads a line without echoing it (TTY only). */
function hiddenPrompt(question: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const stdin = process.stdin;
    if (!stdin.isTTY) return reject(new Error("No terminal for a prompt: use the environment variable or --password-stdin."));
    process.stdout.write(question);
    stdin.setRawMode(true);
    stdin.resume();
    stdin.setEncoding("utf8");
    let value = "";
    const onData = (chunk: string) => {
      for (const ch of chunk) {
        if (ch === "\r" || ch === "\n") {
          stdin.setRawMode(false);
          stdin.pause();
          stdin.off("data", onData);
          process.stdout.write("\n");
          return resolve(value);
        }
        if (ch === "\u0003") {
          stdin.setRawMode(false);
          process.stdout.write("\n");
          process.exit(130);
        }
        if (ch === "\u007f" || ch === "\b") value = value.slice(0, -1);
        else value += ch;
      }
    };
    stdin.on("data", onData);
  });
}

async function secret(kind: "password" | "PIN", args: string[]): Promise<string> {
  const envName = kind === "password" ? "LINEMIX_NEW_PASSWORD" : "LINEMIX_NEW_PIN";
  const fromEnv = process.env[envName];
  if (fromEnv) return fromEnv;
  if (args.includes(kind === "password" ? "--password-stdin" : "--pin-stdin")) return firstStdinLine();
  const first = await hiddenPrompt(`New ${kind}: `);
  const again = await hiddenPrompt(`Repeat the ${kind}: `);
  if (first !== again) throw new Error(`The two ${kind}s differ.`);
  return first;
}

async function userId(name: string | undefined): Promise<number> {
  if (!name) throw new Error(USAGE);
  const user = await findUserByName(name);
  if (!user) throw new Error(`No user "${name}".`);
  return user.id;
}

function report(result: UserResult): void {
  if (!result.ok) throw new Error(result.error);
  console.log(result.message);
}

async function main(argv: string[]): Promise<void> {
  const [command, ...args] = argv;
  const [name, third] = positional(args);
  const actor: Actor = { id: null, name: `cli:${userInfo().username}` };
  await applyPendingMigrations();
  switch (command) {
    case "add": {
      const role = option(args, "--role");
      if (!name || !isRole(role)) throw new Error(USAGE);
      report(await createUser(actor, { username: name, displayName: option(args, "--display"), role, password: await secret("password", args) }));
      return;
    }
    case "list": {
      const users = await db().user.findMany({ orderBy: { username: "asc" } });
      if (users.length === 0) console.log("No users yet. Make the first admin: npm run user -- add NAME --role admin");
      for (const u of users) {
        console.log(
          [u.username.padEnd(20), u.role.padEnd(9), u.active ? "active  " : "inactive", u.badgeNumber ? `badge ${u.badgeNumber}` : "", u.displayName]
            .filter(Boolean)
            .join("  "),
        );
      }
      return;
    }
    case "set-role": {
      if (!isRole(third)) throw new Error(USAGE);
      report(await setRole(actor, await userId(name), third, "command line"));
      return;
    }
    case "deactivate":
    case "activate":
      report(await setActive(actor, await userId(name), command === "activate", "command line"));
      return;
    case "reset-password":
      report(await resetPassword(actor, await userId(name), await secret("password", args)));
      return;
    case "set-badge": {
      if (!third) throw new Error(USAGE);
      const id = await userId(name);
      report(await setBadge(actor, id, third, await secret("PIN", args)));
      return;
    }
    case "remove-badge":
      report(await setBadge(actor, await userId(name), null, null));
      return;
    default:
      throw new Error(USAGE);
  }
}

try {
  await main(process.argv.slice(2));
  await closeDb();
} catch (error) {
  console.error(error instanceof Error ? error.message : error);
  await closeDb();
  process.exit(1);
}
