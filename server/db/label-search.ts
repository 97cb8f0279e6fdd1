/**
 * The trigram label search (TubeLabelSearch, made by a migration) follows Tube through three
 * triggers. A trigger feeding an FTS5 table costs about 60 µs a row, so a bulk write of tens of
 * thousands of tubes spends seconds there; one rebuild afterwards costs a fraction of that.
 */
import type Database from "better-sqlite3";

const LABEL_SEARCH_TRIGGERS = ["Tube_label_search_insert", "Tube_label_search_delete", "Tube_label_search_update"];

/**
 * Runs `write` with the label-search triggers lifted, then rebuilds the index from Tube and puts
 * the triggers back exactly as they were. Must run inside a transaction on `sqlite`: schema
 * changes are transactional in SQLite, so a rollback restores the triggers with everything else.
 *
 * Throws when no transaction is open (the triggers must never stay lifted).
 */
export async function withLabelSearchDeferred<T>(sqlite: Database.Database, write: () => Promise<T> | T): Promise<T> {
  if (!sqlite.inTransaction) throw new Error("withLabelSearchDeferred needs an open transaction");
  const triggers = sqlite
    .prepare(`SELECT name, sql FROM sqlite_master WHERE type = 'trigger' AND name IN (${LABEL_SEARCH_TRIGGERS.map(() => "?").join(", ")})`)
    .all(...LABEL_SEARCH_TRIGGERS) as Array<{ name: string; sql: string }>;
  for (const trigger of triggers) sqlite.exec(`DROP TRIGGER "${trigger.name}"`);
  const result = await write();
  sqlite.exec(`INSERT INTO "TubeLabelSearch"("TubeLabelSearch") VALUES ('rebuild')`);
  for (const trigger of triggers) sqlite.exec(trigger.sql);
  return result;
}
