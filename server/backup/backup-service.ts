/**
 * Full backup (every table, streamed from one snapshot) and restore (validate everything,
 * then replace every table in one transaction on the raw connection).
 */
import { Readable } from "node:stream";
import type Database from "better-sqlite3";
import type { TypeCatalog } from "../types/type-catalog.ts";
import { withLabelSearchDeferred } from "../db/label-search.ts";
import { bulkWriteGate } from "../db/write-gate.ts";
import type { VerdictService } from "../verdicts/verdict-service.ts";
import type { SettingsService } from "../settings/settings-service.ts";
import type { TubeTypeSpec } from "../engine/tube-types/index.ts";
import {
  BACKUP_FORMAT, BACKUP_TABLES, BACKUP_VERSION, columnNames,
  type BackupDocument, type BackupTableName, type BackupValue, type TableLayout,
} from "./backup-format.ts";
import { inChunks, readSnapshot } from "./read-snapshot.ts";
import { fileDate } from "./export-service.ts";

export interface RestoreSummary {
  backupCreatedAt: string;
  /** Rows now in each table. */
  rows: Record<BackupTableName, number>;
  /** Reference types the backup lacked or held in an older form, put back from the library. */
  referenceTypesRefreshed: number;
}

export type RestoreResult = { ok: true; summary: RestoreSummary } | { ok: false; message: string };

function booleanColumns(layout: TableLayout): number[] {
  return layout.columns.flatMap(([, kind], index) => (kind.kind === "boolean" ? [index] : []));
}

function quoted(name: string): string {
  return `"${name}"`;
}

export class BackupService {
  constructor(
    private readonly databaseFile: string,
    private readonly sqlite: Database.Database,
    private readonly catalog: TypeCatalog,
    private readonly referenceTypes: () => TubeTypeSpec[],
    private readonly settings: SettingsService,
    private readonly verdicts: VerdictService,
  ) {}

  fileName(now = new Date()): string {
    return `tubeledger-backup-${fileDate(now)}.json`;
  }

  /** The backup document as a stream of JSON text, every table read from the same snapshot. */
  stream(now = new Date()): Readable {
    const databaseFile = this.databaseFile;
    const header = JSON.stringify({ format: BACKUP_FORMAT, version: BACKUP_VERSION, createdAt: now.toISOString() });
    return Readable.from(
      readSnapshot(databaseFile, function* (db) {
        yield `${header.slice(0, -1)},"tables":{`;
        for (const [tableIndex, layout] of BACKUP_TABLES.entries()) {
          const names = columnNames(layout);
          const booleans = booleanColumns(layout);
          yield `${tableIndex ? "," : ""}\n${JSON.stringify(layout.name)}:{"columns":${JSON.stringify(names)},"rows":[`;
          const statement = db.prepare(`SELECT ${names.map(quoted).join(", ")} FROM ${quoted(layout.name)} ORDER BY ${quoted(layout.key)}`).raw(true);
          let first = true;
          for (const chunk of inChunks(statement.iterate() as IterableIterator<BackupValue[]>)) {
            const text = chunk
              .map((row) => {
                for (const index of booleans) row[index] = row[index] === 1;
                return JSON.stringify(row);
              })
              .join(",\n");
            yield (first ? "\n" : ",\n") + text;
            first = false;
          }
          yield "]}";
        }
        yield "\n}}\n";
      }),
      { objectMode: false },
    );
  }

  /** Every table replaced in one transaction; null when done, the refusal otherwise (nothing changed). */
  private async replaceAll(document: BackupDocument): Promise<Extract<RestoreResult, { ok: false }> | null> {
    const sqlite = this.sqlite;
    if (sqlite.inTransaction) return { ok: false, message: "another change is in progress; try again" };

    sqlite.pragma("foreign_keys = OFF");
    try {
      sqlite.exec("BEGIN IMMEDIATE");
      try {
        // Every tube goes and comes back: the label search is rebuilt once, not fed per row.
        await withLabelSearchDeferred(sqlite, () => this.replaceRows(document));
        const dangling = sqlite.pragma("foreign_key_check") as Array<{ table: string; rowid: number; parent: string }>;
        if (dangling.length) {
          const first = dangling[0];
          throw new RestoreRefused(`${dangling.length} row${dangling.length === 1 ? "" : "s"} point at missing rows (first: ${first.table} row ${first.rowid} → ${first.parent})`);
        }
        sqlite.exec("COMMIT");
      } catch (error) {
        if (sqlite.inTransaction) sqlite.exec("ROLLBACK");
        if (error instanceof RestoreRefused) return { ok: false, message: error.message };
        const code = (error as { code?: string }).code ?? "";
        if (code.startsWith("SQLITE_CONSTRAINT")) return { ok: false, message: `the database refused the backup's rows (${(error as Error).message}); nothing was changed` };
        throw error;
      }
    } finally {
      sqlite.pragma("foreign_keys = ON");
    }
    return null;
  }

  /** Empties every backed-up table and inserts the document's rows (inside the caller's transaction). */
  private replaceRows(document: BackupDocument): void {
    const sqlite = this.sqlite;
    for (const layout of [...BACKUP_TABLES].reverse()) sqlite.prepare(`DELETE FROM ${quoted(layout.name)}`).run();
    // Restart the id counters so new rows continue from the restored ids, as they did before.
    sqlite.prepare(`DELETE FROM sqlite_sequence WHERE name IN (${BACKUP_TABLES.map(() => "?").join(", ")})`).run(...BACKUP_TABLES.map((layout) => layout.name));
    for (const layout of BACKUP_TABLES) {
      const names = columnNames(layout);
      const booleans = booleanColumns(layout);
      const insert = sqlite.prepare(`INSERT INTO ${quoted(layout.name)} (${names.map(quoted).join(", ")}) VALUES (${names.map(() => "?").join(", ")})`);
      for (const row of document.tables[layout.name].rows) {
        const values = booleans.length ? row.map((value, index) => (booleans.includes(index) ? (value ? 1 : 0) : value)) : row;
        insert.run(...values);
      }
    }
  }

  /**
   * Replaces every table with the rows of a validated backup, all or nothing. Foreign keys are
   * switched off for the swap (a PRAGMA that is ignored inside a transaction, hence before
   * BEGIN) and the whole result is checked with foreign_key_check before COMMIT. Afterwards
   * the catalog is re-read, reference types the backup lacked are put back, the settings cache
   * is dropped and the cached verdicts are recomputed.
   */
  async restore(document: BackupDocument): Promise<RestoreResult> {
    // Loaded before anything is touched: a broken library must not leave a half-done restore.
    const library = this.referenceTypes();
    // Other writes wait for the gate while every table is replaced.
    const refused = await bulkWriteGate(this.sqlite).hold(() => this.replaceAll(document));
    if (refused !== null) return refused;

    const referenceTypesRefreshed = this.refreshReferenceTypes(library);
    forgetCachedThresholds(this.settings);
    await this.verdicts.recompute();
    return { ok: true, summary: { backupCreatedAt: document.createdAt, rows: this.rowCounts(), referenceTypesRefreshed } };
  }

  /**
   * An older backup may lack types the library has gained since, or hold an older record of
   * one; only those are written, so restoring a backup of this same library changes nothing.
   */
  private refreshReferenceTypes(library: TubeTypeSpec[]): number {
    const stored = new Map(
      (this.sqlite.prepare("SELECT designation, spec, userAdded FROM TubeType").all() as Array<{ designation: string; spec: string; userAdded: number }>).map((row) => [row.designation, row]),
    );
    const stale = library.filter((spec) => {
      const row = stored.get(spec.designation);
      return !row || (row.userAdded === 0 && row.spec !== JSON.stringify(spec));
    });
    if (stale.length) this.catalog.syncReferenceTypes(stale);
    else this.catalog.reload();
    return stale.length;
  }

  rowCounts(): Record<BackupTableName, number> {
    const counts = {} as Record<BackupTableName, number>;
    for (const layout of BACKUP_TABLES) {
      counts[layout.name] = (this.sqlite.prepare(`SELECT count(*) AS n FROM ${quoted(layout.name)}`).get() as { n: number }).n;
    }
    return counts;
  }
}

class RestoreRefused extends Error {}

/**
 * SettingsService caches the thresholds and offers no public way to drop the cache; a restore
 * replaces the Setting table underneath it, so the cache must go.
 */
function forgetCachedThresholds(settings: SettingsService): void {
  settings.forget();
}
