/** CLI for the offline migration helper: `npm run migrate:create -- <name>`, `migrate:apply`, `migrate:check`. */
import { applyMigrations, checkDrift, createMigration } from "./migrator.ts";

const [command, name] = process.argv.slice(2);
const databaseUrl = process.env.DATABASE_URL ?? "file:./data/tubeledger.db";

if (command === "create") {
  const folder = await createMigration(name ?? "change");
  console.log(folder ? `created ${folder}` : "schema.prisma matches the migrations; nothing to create");
} else if (command === "apply") {
  const applied = await applyMigrations(databaseUrl);
  console.log(applied.length ? `applied ${applied.join(", ")}` : "database is up to date");
} else if (command === "check") {
  const { exitCode, sql } = await checkDrift();
  if (exitCode === 0) console.log("migrations match schema.prisma");
  else {
    console.error("schema.prisma has changes without a migration:\n" + sql);
    process.exitCode = 1;
  }
} else {
  console.error("usage: migrate.ts create <name> | apply | check");
  process.exitCode = 2;
}
