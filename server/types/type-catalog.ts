/**
 * The tube types the ledger knows: the reference library from data/tube-types (synced into
 * the TubeType table at start) plus user-added types. Held in memory for name resolution.
 */
import { sqlTimestamp } from "../db/sql-time.ts";
import type Database from "better-sqlite3";
import type { TubeTypeSpec } from "../engine/tube-types/index.ts";

export interface CatalogEntry {
  id: number;
  designation: string;
  spec: TubeTypeSpec;
  userAdded: boolean;
}

export class TypeCatalog {
  private byId = new Map<number, CatalogEntry>();
  private byName = new Map<string, CatalogEntry>();
  /** Sorted once per reload: numeric-aware collation is slow enough to matter on every page. */
  private sorted: CatalogEntry[] = [];

  constructor(private readonly sqlite: Database.Database) {}

  /** Upserts the reference types in one transaction; user-added types are never overwritten. */
  syncReferenceTypes(types: TubeTypeSpec[]): void {
    const upsert = this.sqlite.prepare(
      `INSERT INTO TubeType (designation, aliases, tubeClass, base, sections, spec, userAdded, updatedAt)
       VALUES (@designation, @aliases, @tubeClass, @base, @sections, @spec, 0, @now)
       ON CONFLICT(designation) DO UPDATE SET aliases = excluded.aliases, tubeClass = excluded.tubeClass,
         base = excluded.base, sections = excluded.sections, spec = excluded.spec, updatedAt = excluded.updatedAt
       WHERE TubeType.userAdded = 0`,
    );
    const now = sqlTimestamp();
    this.sqlite.transaction(() => {
      for (const spec of types) upsert.run(rowOf(spec, now));
    })();
    this.reload();
  }

  /** Re-reads every type from the database. */
  reload(): void {
    const rows = this.sqlite.prepare("SELECT id, designation, spec, userAdded FROM TubeType").all() as Array<{
      id: number;
      designation: string;
      spec: string;
      userAdded: number;
    }>;
    this.byId.clear();
    this.byName.clear();
    for (const row of rows) {
      const entry: CatalogEntry = { id: row.id, designation: row.designation, spec: JSON.parse(row.spec), userAdded: row.userAdded === 1 };
      this.byId.set(entry.id, entry);
      this.byName.set(entry.designation.toUpperCase(), entry);
    }
    const collator = new Intl.Collator("en", { numeric: true });
    this.sorted = [...this.byId.values()].sort((a, b) => collator.compare(a.designation, b.designation));
    // Aliases second so that a designation always wins over another type's alias.
    for (const entry of this.byId.values()) {
      for (const alias of entry.spec.aliases) {
        const key = alias.toUpperCase();
        if (!this.byName.has(key)) this.byName.set(key, entry);
      }
    }
  }

  /** Resolves a designation or alias, case-insensitively. */
  resolve(name: string): CatalogEntry | undefined {
    return this.byName.get(name.trim().toUpperCase());
  }

  get(id: number): CatalogEntry | undefined {
    return this.byId.get(id);
  }

  list(): readonly CatalogEntry[] {
    return this.sorted;
  }

  /** Inserts a user-added type; throws when the name clashes with a known designation or alias. */
  addUserType(spec: TubeTypeSpec): CatalogEntry {
    for (const name of [spec.designation, ...spec.aliases]) {
      const clash = this.resolve(name);
      if (clash) throw new Error(`${name} is already known as ${clash.designation}`);
    }
    this.sqlite
      .prepare(
        `INSERT INTO TubeType (designation, aliases, tubeClass, base, sections, spec, userAdded, updatedAt)
         VALUES (@designation, @aliases, @tubeClass, @base, @sections, @spec, 1, @now)`,
      )
      .run(rowOf({ ...spec, userAdded: true }, sqlTimestamp()));
    this.reload();
    return this.resolve(spec.designation)!;
  }
}

function rowOf(spec: TubeTypeSpec, now: string) {
  return {
    designation: spec.designation,
    aliases: spec.aliases.length ? ` ${spec.aliases.map((a) => a.toUpperCase()).join(" ")} ` : "",
    tubeClass: spec.class,
    base: spec.base,
    sections: spec.sections.length,
    spec: JSON.stringify(spec),
    now,
  };
}
