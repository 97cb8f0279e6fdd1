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

export type Db = PrismaClient;

export async function openDatabase(databaseUrl: string) {
  await applyMigrations(databaseUrl);
  const file = databaseFileFromUrl(databaseUrl);
  const sqlite = new Database(file, { timeout: 15_000 });
  sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("synchronous = NORMAL");
  sqlite.pragma("foreign_keys = ON");
  const db = new PrismaClient({ adapter: new PrismaBetterSqlite3({ url: file, timeout: 15_000 }) });
  await db.$executeRawUnsafe("PRAGMA foreign_keys = ON");
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
