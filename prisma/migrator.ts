/**
 * Offline migration helper: creates, applies and drift-checks Prisma migrations with the
 * schema engine compiled to WebAssembly, so no native engine has to be downloaded.
 * It writes the same `prisma/migrations/<timestamp>_<name>/migration.sql` layout and fills
 * `_prisma_migrations` exactly like the Prisma CLI, so the CLI can take over later.
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { createRequire } from "node:module";
import Database from "better-sqlite3";
import { PrismaBetterSqlite3 } from "@prisma/adapter-better-sqlite3";
import { bindMigrationAwareSqlAdapterFactory } from "@prisma/driver-adapter-utils";
import * as bg from "@prisma/schema-engine-wasm/schema_engine_bg";

const prismaDir = path.dirname(fileURLToPath(import.meta.url));
export const schemaPath = path.join(prismaDir, "schema.prisma");
export const migrationsDir = path.join(prismaDir, "migrations");
const lockfileContent = 'provider = "sqlite"\n';
/**
 * Tables the migrations create by hand and schema.prisma does not model: the trigram label
 * search (an FTS5 table and the shadow tables SQLite keeps for it). Diffs leave them alone.
 */
export const EXTERNAL_TABLES = ["TubeLabelSearch", "TubeLabelSearch_data", "TubeLabelSearch_idx", "TubeLabelSearch_docsize", "TubeLabelSearch_config"];
const schemaFilters = { externalTables: EXTERNAL_TABLES, externalEnums: [] };

/** `file:./data/x.db` or a plain path → an absolute file path (":memory:" passes through). */
export function databaseFileFromUrl(url: string): string {
  const raw = url.startsWith("file:") ? url.slice("file:".length) : url;
  return raw === ":memory:" ? raw : path.resolve(raw);
}

let wasmReady = false;
function loadWasm(): void {
  if (wasmReady) return;
  const require = createRequire(import.meta.url);
  const wasmPath = path.join(path.dirname(require.resolve("@prisma/schema-engine-wasm")), "schema_engine_bg.wasm");
  // Node has WebAssembly built in; its types are not in the ES lib this project compiles against.
  const wasm = (globalThis as unknown as { WebAssembly: { Module: new (bytes: Buffer) => object; Instance: new (m: object, imports: object) => { exports: unknown } } }).WebAssembly;
  const module = new wasm.Module(fs.readFileSync(wasmPath));
  const instance = new wasm.Instance(module, { "./schema_engine_bg.js": bg });
  (bg as unknown as { __wbg_set_wasm(x: unknown): void }).__wbg_set_wasm(instance.exports);
  (instance.exports as unknown as { __wbindgen_start(): void }).__wbindgen_start();
  wasmReady = true;
}

/**
 * The engine sends whole migration files to the shadow database as one statement, which
 * better-sqlite3 refuses ("more than one statement"); run argument-less SQL as a script there.
 */
class ShadowScriptAdapterFactory extends PrismaBetterSqlite3 {
  /** Every connection the engine opened, closed again by `closeAll` so the file is not left locked. */
  readonly opened: Array<{ dispose(): Promise<void> }> = [];

  override async connect() {
    const adapter = await super.connect();
    this.opened.push(adapter);
    return adapter;
  }

  async closeAll() {
    for (const adapter of this.opened.splice(0)) await adapter.dispose();
  }

  override async connectToShadowDb() {
    const adapter = await super.connectToShadowDb();
    this.opened.push(adapter);
    const executeRaw = adapter.executeRaw.bind(adapter);
    adapter.executeRaw = async (query) => {
      if (query.args.length === 0) {
        await adapter.executeScript(query.sql);
        return 0;
      }
      return executeRaw(query);
    };
    return adapter;
  }
}

async function openEngine(databaseFile: string) {
  loadWasm();
  const schema = fs.readFileSync(schemaPath, "utf8");
  const factory = new ShadowScriptAdapterFactory({ url: databaseFile });
  const engine = await bg.SchemaEngine.new(
    { datamodels: [[schemaPath, schema]] } as never,
    () => {},
    bindMigrationAwareSqlAdapterFactory(factory),
  );
  const close = async () => {
    engine.free();
    await factory.closeAll();
  };
  return { engine, schema, close };
}

/** Reads prisma/migrations into the structure the engine expects. */
export function readMigrationList() {
  const directories = fs.existsSync(migrationsDir)
    ? fs
        .readdirSync(migrationsDir, { withFileTypes: true })
        .filter((entry) => entry.isDirectory())
        .map((entry) => entry.name)
        .sort()
    : [];
  return {
    baseDir: migrationsDir,
    shadowDbInitScript: "",
    lockfile: { path: "migration_lock.toml", content: lockfileContent },
    migrationDirectories: directories.map((name) => ({
      path: name,
      migrationFile: {
        path: "migration.sql",
        content: { tag: "ok" as const, value: fs.readFileSync(path.join(migrationsDir, name, "migration.sql"), "utf8") },
      },
    })),
  };
}

async function diffMigrationsToSchema(exitCode: boolean) {
  const { engine, schema, close } = await openEngine(":memory:");
  const result = await engine.diff({
    from: { tag: "migrations", ...readMigrationList() },
    to: { tag: "schemaDatamodel", files: [{ path: schemaPath, content: schema }] },
    script: true,
    exitCode,
    filters: schemaFilters,
  } as never).finally(close);
  return result as { exitCode: number; stdout: string };
}

/** Drift check: 0 when the migrations produce schema.prisma exactly, 2 when a migration is missing. */
export async function checkDrift(): Promise<{ exitCode: number; sql: string }> {
  const result = await diffMigrationsToSchema(true);
  return { exitCode: result.exitCode, sql: result.stdout };
}

/** Writes a new migration folder from the difference, or returns null when nothing changed. */
export async function createMigration(name: string, now = new Date()): Promise<string | null> {
  if (!/^[a-z0-9_]+$/.test(name)) throw new Error("Migration name: use lower-case letters, digits and _");
  const { stdout } = await diffMigrationsToSchema(false);
  if (stdout.includes("This is an empty migration")) return null;
  const stamp = now.toISOString().replace(/[-:T]/g, "").slice(0, 14);
  const folder = path.join(migrationsDir, `${stamp}_${name}`);
  fs.mkdirSync(folder, { recursive: true });
  fs.writeFileSync(path.join(folder, "migration.sql"), stdout);
  fs.writeFileSync(path.join(migrationsDir, "migration_lock.toml"), lockfileContent);
  return folder;
}

/**
 * Names of the migrations in prisma/migrations that the database has not finished, read with a
 * plain read-only connection; null when it cannot tell (no file yet, no migrations table).
 */
function pendingMigrations(databaseFile: string): string[] | null {
  if (databaseFile === ":memory:" || !fs.existsSync(databaseFile)) return null;
  let database: Database.Database | undefined;
  try {
    database = new Database(databaseFile, { readonly: true, fileMustExist: true });
    const rows = database.prepare("SELECT migration_name FROM _prisma_migrations WHERE finished_at IS NOT NULL AND rolled_back_at IS NULL").all() as Array<{ migration_name: string }>;
    const done = new Set(rows.map((row) => row.migration_name));
    return readMigrationList().migrationDirectories.map((entry) => entry.path).filter((name) => !done.has(name));
  } catch {
    return null;
  } finally {
    database?.close();
  }
}

/**
 * Applies pending migrations to the database file; returns the names applied. When nothing is
 * pending it does not start the schema engine at all, so a second process (the demo loader, a
 * backup) can open a database that a running server holds.
 *
 * Throws with a plain message when the engine cannot get the database (another process holds it).
 */
export async function applyMigrations(databaseUrl: string): Promise<string[]> {
  const databaseFile = databaseFileFromUrl(databaseUrl);
  if (pendingMigrations(databaseFile)?.length === 0) return [];
  if (databaseFile !== ":memory:") fs.mkdirSync(path.dirname(databaseFile), { recursive: true });
  const { engine, close } = await openEngine(databaseFile);
  try {
    const output = (await engine.applyMigrations({ migrationsList: readMigrationList(), filters: schemaFilters } as never).finally(close)) as {
      appliedMigrationNames: string[];
    };
    return output.appliedMigrationNames;
  } catch (error) {
    if (/SocketTimeout|database is locked|busy/i.test(String(error))) {
      throw new Error(`could not apply migrations to ${databaseFile}: another process holds the database (stop the server, then try again)`, { cause: error });
    }
    throw error;
  }
}
