/**
 * The database: applies pending migrations, then opens the Prisma client and one raw
 * better-sqlite3 connection for bulk paths (CSV import, backup) where Prisma's per-row
 * overhead dominates.
 */
import fp from "fastify-plugin";
import Database from "better-sqlite3";
import { PrismaBetterSqlite3 } from "@prisma/adapter-better-sqlite3";
import { PrismaClient } from "../../../generated/prisma/client.ts";
import { applyMigrations, databaseFileFromUrl } from "../../../prisma/migrator.ts";
import { bulkWriteGate } from "../../db/write-gate.ts";

export type Db = PrismaClient;

/** Prisma model operations that write. */
const PRISMA_WRITE_OPERATIONS = new Set(["create", "createMany", "createManyAndReturn", "update", "updateMany", "updateManyAndReturn", "upsert", "delete", "deleteMany"]);

export async function openDatabase(databaseUrl: string) {
  await applyMigrations(databaseUrl);
  const file = databaseFileFromUrl(databaseUrl);
  const sqlite = new Database(file, { timeout: 15_000 });
  sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("synchronous = NORMAL");
  sqlite.pragma("foreign_keys = ON");
  const client = new PrismaClient({ adapter: new PrismaBetterSqlite3({ url: file, timeout: 15_000 }) });
  await client.$executeRawUnsafe("PRAGMA foreign_keys = ON");
  // A write through Prisma waits (without blocking the event loop) while an import or restore
  // holds the raw connection's transaction; see server/db/write-gate.ts.
  const gate = bulkWriteGate(sqlite);
  const db = client.$extends({
    query: {
      $allModels: {
        async $allOperations({ operation, args, query }) {
          if (PRISMA_WRITE_OPERATIONS.has(operation)) await gate.idle();
          return query(args);
        },
      },
    },
  }) as unknown as PrismaClient;
  return { db, sqlite, file };
}

export default fp(
  async (app, options: { databaseUrl: string }) => {
    const { db, sqlite, file } = await openDatabase(options.databaseUrl);
    app.decorate("db", db);
    app.decorate("sqlite", sqlite);
    app.decorate("databaseFile", file);
    app.addHook("onClose", async () => {
      await db.$disconnect();
      sqlite.close();
    });
  },
  { name: "database" },
);

declare module "fastify" {
  interface FastifyInstance {
    db: PrismaClient;
    sqlite: Database.Database;
    databaseFile: string;
  }
}
