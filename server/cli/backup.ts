/**
 * `npm run backup [destination]`: a consistent copy of the ledger's SQLite file, safe while the
 * server runs. DATABASE_URL names the source (default file:./data/tubeledger.db); the copy goes
 * to the given path or to data/backups/tubeledger-<yyyymmdd-HHMMSS>.db.
 */
import { databaseFileFromUrl } from "../../prisma/migrator.ts";
import { copyDatabaseOnline, defaultBackupPath, formatBytes } from "../backup/online-copy.ts";

const [argument, extra] = process.argv.slice(2);
if (extra !== undefined || argument === "--help" || argument === "-h") {
  console.error("Usage: npm run backup [-- <destination.db>]   (source: DATABASE_URL, default file:./data/tubeledger.db)");
  process.exit(extra !== undefined ? 2 : 0);
}

const source = databaseFileFromUrl(process.env.DATABASE_URL || "file:./data/tubeledger.db");
if (source === ":memory:") {
  console.error("backup: DATABASE_URL names an in-memory database; there is no file to copy");
  process.exit(1);
}
const destination = argument ?? defaultBackupPath(new Date());
const result = await copyDatabaseOnline(source, destination);
if (!result.ok) {
  console.error(`backup: ${result.reason}`);
  process.exit(1);
}
console.log(`Backed up ${source}`);
console.log(`      to ${result.destination} (${formatBytes(result.bytes)}, ${result.pages} pages, integrity ok)`);
