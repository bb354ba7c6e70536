import { readFile, readdir } from "node:fs/promises";
import { createRequire } from "node:module";
import path from "node:path";
import { PrismaBetterSqlite3 } from "@prisma/adapter-better-sqlite3";
import {
  bindMigrationAwareSqlAdapterFactory,
  type SqlDriverAdapter,
  type SqlMigrationAwareDriverAdapterFactory,
} from "@prisma/driver-adapter-utils";
import type {
  MigrationList,
  SchemaEngine,
} from "@prisma/schema-engine-wasm";

/**
 * Prisma's schema engine, run as WebAssembly so migrations need no native engine
 * download (the CLI's `migrate` fetches one from a host that plant networks and these
 * machines cannot reach). Node 20 cannot `import` a .wasm file, so the module is
 * instantiated by hand with the package's JS glue as its import object.
 */

const require = createRequire(import.meta.url);
const EMPTY_FILTER = { externalTables: [], externalEnums: [] };

export const PRISMA_DIR = path.resolve(process.cwd(), "prisma");
export const SCHEMA_PATH = path.join(PRISMA_DIR, "schema.prisma");
export const MIGRATIONS_DIR = path.join(PRISMA_DIR, "migrations");

type Glue = typeof import("@prisma/schema-engine-wasm/schema_engine_bg") & {
  __wbg_set_wasm(exports: WebAssembly.Exports): void;
};

let gluePromise: Promise<Glue> | undefined;

async function loadGlue(): Promise<Glue> {
  const pkgDir = path.dirname(require.resolve("@prisma/schema-engine-wasm"));
  const glue = (await import(
    /* webpackIgnore: true */ path.join(pkgDir, "schema_engine_bg.js")
  )) as Glue;
  const bytes = await readFile(path.join(pkgDir, "schema_engine_bg.wasm"));
  const module = new WebAssembly.Module(bytes);
  const instance = new WebAssembly.Instance(module, {
    "./schema_engine_bg.js": glue as unknown as WebAssembly.ModuleImports,
  });
  glue.__wbg_set_wasm(instance.exports);
  (instance.exports.__wbindgen_start as () => void)();
  return glue;
}

/** A schema engine and a close() that also releases the SQLite connections it opened. */
export type OpenEngine = { engine: SchemaEngine; close(): Promise<void> };

/**
 * Opens the schema engine on a SQLite file URL (`file:...`). The engine does not close
 * its connections when freed, and an open connection keeps a lock that blocks the
 * app's own `journal_mode = WAL` switch, so every adapter it opens is tracked and
 * disposed by close().
 */
export async function openSchemaEngine(url: string, schema?: string): Promise<OpenEngine> {
  gluePromise ??= loadGlue();
  const glue = await gluePromise;
  const datamodel = schema ?? (await readFile(SCHEMA_PATH, "utf8"));
  const factory = new PrismaBetterSqlite3({ url });
  const opened: SqlDriverAdapter[] = [];
  const tracking: SqlMigrationAwareDriverAdapterFactory = {
    provider: factory.provider,
    adapterName: factory.adapterName,
    connect: async () => remember(await factory.connect()),
    connectToShadowDb: async () => remember(await factory.connectToShadowDb()),
  };
  function remember(adapter: SqlDriverAdapter): SqlDriverAdapter {
    opened.push(adapter);
    return adapter;
  }
  const adapter = bindMigrationAwareSqlAdapterFactory(tracking);
  const log = () => {};
  const engine = await glue.SchemaEngine.new({ datamodels: [[SCHEMA_PATH, datamodel]] }, log, adapter);
  return {
    engine,
    async close() {
      engine.free();
      await Promise.all(opened.splice(0).map((a) => a.dispose()));
    },
  };
}

/** Reads prisma/migrations the way the Prisma CLI does, for the engine's migration commands. */
export async function loadMigrationList(dir = MIGRATIONS_DIR): Promise<MigrationList> {
  const entries = await readdir(dir, { withFileTypes: true }).catch(() => []);
  const folders = entries.filter((e) => e.isDirectory()).map((e) => e.name).sort();
  const migrationDirectories = await Promise.all(
    folders.map(async (name) => {
      const file = path.join(dir, name, "migration.sql");
      const content = await readFile(file, "utf8").then(
        (value) => ({ tag: "ok" as const, value }),
        (error: Error) => ({ tag: "error" as const, value: error.message }),
      );
      return { path: name, migrationFile: { path: "migration.sql", content } };
    }),
  );
  const lockPath = path.join(dir, "migration_lock.toml");
  const lockContent = await readFile(lockPath, "utf8").catch(() => null);
  return {
    baseDir: dir,
    lockfile: { path: "migration_lock.toml", content: lockContent },
    shadowDbInitScript: "",
    migrationDirectories,
  };
}

export { EMPTY_FILTER };
