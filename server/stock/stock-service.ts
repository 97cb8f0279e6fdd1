/** Stock: create, edit, move, change state, list with filters, and the per-type summary. */
import type Database from "better-sqlite3";
import type { PrismaClient } from "../../generated/prisma/client.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import type { TubeInput, TubeListQuery } from "../schemas/tube-schemas.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";

/** The trigram index matches strings of three characters or more; shorter searches scan the labels. */
export const LABEL_SEARCH_TRIGRAM = 3;

export type ServiceResult<T> = { ok: true; value: T } | { ok: false; errors: FieldErrors; status?: number };

export interface TubeRow {
  id: number;
  label: string;
  type: string;
  maker: string;
  dateCode: string;
  location: string;
  state: string;
  notes: string;
  verdict: string;
  /** The verdict as words ("not comparable"), so the list's rows need no partial each. */
  verdictText: string;
  percentOfReference: number | null;
  percentText: string;
}

type TubeWithType = {
  id: number; label: string; maker: string; dateCode: string; location: string; state: string; notes: string;
  verdict: string; percent: number | null; type: { designation: string };
};

/** A tube read through Prisma, with its type, as the row every page shows. */
export function toTubeRow(tube: TubeWithType): TubeRow {
  return listRow({ ...tube, designation: tube.type.designation });
}

const VERDICT_TEXT: Readonly<Record<string, string>> = { "not-comparable": "not comparable" };

/** One list row straight from the SQL row: the hottest loop of the busiest page, so no spread or regex. */
function listRow(row: Omit<TubeWithType, "type"> & { designation: string }): TubeRow {
  return {
    id: row.id, label: row.label, type: row.designation, maker: row.maker, dateCode: row.dateCode, location: row.location, state: row.state,
    notes: row.notes, verdict: row.verdict, verdictText: VERDICT_TEXT[row.verdict] ?? row.verdict, percentOfReference: row.percent,
    percentText: row.percent === null ? "" : `${Math.round(row.percent)} %`,
  };
}

export class StockService {
  private locationsCache: { key: string; locations: string[] } | undefined;

  /** Prepared statements by SQL text: the list builds a handful of filter shapes, each prepared once. */
  private readonly statements = new Map<string, Database.Statement>();

  private statement(sql: string): Database.Statement {
    let statement = this.statements.get(sql);
    if (!statement) {
      statement = this.sqlite.prepare(sql);
      this.statements.set(sql, statement);
    }
    return statement;
  }

  constructor(
    private readonly db: PrismaClient,
    private readonly catalog: TypeCatalog,
    private readonly sqlite: Database.Database,
  ) {}

  /**
   * One page of the stock list and the number of matches. Searches of three characters or more
   * go through the trigram label index (TubeLabelSearch, created by a migration); shorter ones scan. The stock page is the hottest path
   * (20,000 tubes, many clients), so it is plain SQL on the raw connection, and the filters
   * map onto the Tube indexes.
   */
  async list(query: TubeListQuery) {
    const conditions: string[] = [];
    const values: Array<string | number> = [];
    if (query.type) {
      conditions.push("t.typeId = ?");
      values.push(this.catalog.resolve(query.type)?.id ?? -1);
    }
    // "active" is counted as all minus retired below: a not-equal test cannot seek the state index.
    const active = query.state === "active";
    if (query.state && !active) {
      conditions.push("t.state = ?");
      values.push(query.state);
    }
    if (query.location) {
      conditions.push("t.location = ?");
      values.push(query.location);
    }
    if (query.verdict) {
      conditions.push("t.verdict = ?");
      values.push(query.verdict);
    }
    if (query.q && [...query.q].length >= LABEL_SEARCH_TRIGRAM) {
      // The trigram index answers "contains" (case-insensitive, like LIKE) without reading every label.
      conditions.push(`t.id IN (SELECT rowid FROM TubeLabelSearch WHERE TubeLabelSearch MATCH ?)`);
      values.push(`"${query.q.replace(/"/g, '""')}"`);
    } else if (query.q) {
      conditions.push("t.label LIKE ? ESCAPE '\\'");
      values.push(`%${query.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`);
    }
    const whereOf = (extra: string[]) => {
      const all = [...conditions, ...extra];
      return all.length ? `WHERE ${all.join(" AND ")}` : "";
    };
    const count = (where: string) => (this.statement(`SELECT COUNT(*) AS n FROM Tube t ${where}`).get(...values) as { n: number }).n;
    // Two statements: a window-function total would materialise every match before the LIMIT.
    const total = active ? count(whereOf([])) - count(whereOf(["t.state = 'retired'"])) : count(whereOf([]));
    const where = whereOf(active ? ["t.state <> 'retired'"] : []);
    const rows = this
      .statement(
        `SELECT t.id, t.label, t.maker, t.dateCode, t.location, t.state, t.notes, t.verdict, t.percent, tt.designation
         FROM Tube t JOIN TubeType tt ON tt.id = t.typeId ${where} ORDER BY t.label LIMIT ? OFFSET ?`,
      )
      .all(...values, query.pageSize, (query.page - 1) * query.pageSize) as Array<Omit<TubeWithType, "type"> & { designation: string }>;
    const pages = Math.max(1, Math.ceil(total / query.pageSize));
    return { total, page: query.page, pages, pageSize: query.pageSize, tubes: rows.map(listRow) };
  }


  /**
   * Every distinct location, for the list's filter. Kept until the database changes: SQLite's
   * data_version moves when another connection (Prisma) commits, total_changes() when this raw
   * connection writes, so the key is exact and costs two tiny reads.
   */
  async locations(): Promise<string[]> {
    const version = this.statement("SELECT (SELECT data_version FROM pragma_data_version()) AS data, total_changes() AS changes").get() as { data: number; changes: number };
    const key = `${version.data}:${version.changes}`;
    if (this.locationsCache?.key === key) return this.locationsCache.locations;
    // Hop from one distinct location to the next through the index instead of reading every tube.
    const rows = this
      .statement(
        `WITH RECURSIVE next(location) AS (
           SELECT MIN(location) FROM Tube WHERE location > ''
           UNION ALL SELECT (SELECT MIN(location) FROM Tube WHERE location > next.location) FROM next WHERE next.location IS NOT NULL)
         SELECT location FROM next WHERE location IS NOT NULL`,
      )
      .all() as Array<{ location: string }>;
    const locations = rows.map((r) => r.location);
    this.locationsCache = { key, locations };
    return locations;
  }

  /** Per type: how many tubes are good, worn, failed, untested or not comparable (retired excluded). */
  async summary() {
    const rows = await this.db.$queryRaw<Array<{ typeId: number; verdict: string; n: number | bigint }>>`
      SELECT typeId, verdict, COUNT(*) AS n FROM Tube WHERE state <> 'retired' GROUP BY typeId, verdict`;
    const groups = rows.map((row) => ({ typeId: Number(row.typeId), verdict: row.verdict, _count: { _all: Number(row.n) } }));
    const byType = new Map<number, { type: string; total: number; counts: Record<string, number> }>();
    for (const group of groups) {
      const designation = this.catalog.get(group.typeId)?.designation ?? `#${group.typeId}`;
      const entry = byType.get(group.typeId) ?? { type: designation, total: 0, counts: { good: 0, worn: 0, failed: 0, untested: 0, "not-comparable": 0 } };
      entry.counts[group.verdict] = (entry.counts[group.verdict] ?? 0) + group._count._all;
      entry.total += group._count._all;
      byType.set(group.typeId, entry);
    }
    return [...byType.values()].sort((a, b) => a.type.localeCompare(b.type, "en", { numeric: true }));
  }

  async get(id: number) {
    const tube = await this.db.tube.findUnique({ where: { id }, include: { type: { select: { designation: true } } } });
    return tube ? toTubeRow(tube) : null;
  }

  async findByLabel(label: string) {
    const tube = await this.db.tube.findUnique({ where: { label }, include: { type: { select: { designation: true } } } });
    return tube ? toTubeRow(tube) : null;
  }

  async events(tubeId: number) {
    return this.db.tubeEvent.findMany({ where: { tubeId }, orderBy: [{ at: "desc" }, { id: "desc" }] });
  }

  async create(input: TubeInput): Promise<ServiceResult<TubeRow>> {
    const entry = this.catalog.resolve(input.type);
    if (!entry) return { ok: false, errors: { type: `Type: ${input.type} is not in the library — add it on the types page first` } };
    if (await this.db.tube.findUnique({ where: { label: input.label } })) {
      return { ok: false, errors: { label: `Label: ${input.label} is already used by another tube` }, status: 409 };
    }
    const tube = await this.db.tube.create({
      data: {
        label: input.label, typeId: entry.id, maker: input.maker ?? "", dateCode: input.dateCode ?? "",
        location: input.location ?? "", state: input.state, notes: input.notes ?? "",
        events: { create: { kind: "created", toValue: input.state, note: input.location ? `at ${input.location}` : "" } },
      },
      include: { type: { select: { designation: true } } },
    });
    return { ok: true, value: toTubeRow(tube) };
  }

  /** Edits a tube; every changed state or location is written to its history in the same transaction. */
  async update(id: number, patch: Partial<TubeInput> & { note?: string }): Promise<ServiceResult<TubeRow>> {
    const current = await this.db.tube.findUnique({ where: { id }, include: { type: { select: { designation: true } } } });
    if (!current) return { ok: false, errors: { _form: "Tube not found" }, status: 404 };
    const data: Record<string, unknown> = {};
    const events: Array<{ kind: string; fromValue: string; toValue: string; note: string }> = [];
    const note = patch.note ?? "";
    if (patch.type !== undefined) {
      const entry = this.catalog.resolve(patch.type);
      if (!entry) return { ok: false, errors: { type: `Type: ${patch.type} is not in the library` } };
      if (entry.id !== current.typeId) {
        data.typeId = entry.id;
        events.push({ kind: "type", fromValue: current.type.designation, toValue: entry.designation, note });
      }
    }
    if (patch.label !== undefined && patch.label !== current.label) {
      if (await this.db.tube.findUnique({ where: { label: patch.label } })) {
        return { ok: false, errors: { label: `Label: ${patch.label} is already used by another tube` }, status: 409 };
      }
      data.label = patch.label;
      events.push({ kind: "label", fromValue: current.label, toValue: patch.label, note });
    }
    if (patch.state !== undefined && patch.state !== current.state) {
      data.state = patch.state;
      events.push({ kind: "state", fromValue: current.state, toValue: patch.state, note });
    }
    if (patch.location !== undefined && (patch.location ?? "") !== current.location) {
      data.location = patch.location ?? "";
      events.push({ kind: "location", fromValue: current.location, toValue: patch.location ?? "", note });
    }
    for (const field of ["maker", "dateCode", "notes"] as const) {
      if (patch[field] !== undefined && (patch[field] ?? "") !== current[field]) data[field] = patch[field] ?? "";
    }
    const [tube] = await this.db.$transaction([
      this.db.tube.update({ where: { id }, data, include: { type: { select: { designation: true } } } }),
      ...events.map((event) => this.db.tubeEvent.create({ data: { tubeId: id, ...event } })),
    ]);
    return { ok: true, value: toTubeRow(tube) };
  }
}
