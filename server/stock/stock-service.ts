/** Stock: create, edit, move, change state, list with filters, and the per-type summary. */
import type { PrismaClient } from "../../generated/prisma/client.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import type { TubeInput, TubeListQuery } from "../schemas/tube-schemas.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";

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
  percentOfReference: number | null;
  percentText: string;
}

type TubeWithType = {
  id: number; label: string; maker: string; dateCode: string; location: string; state: string; notes: string;
  verdict: string; percent: number | null; type: { designation: string };
};

export function toTubeRow(tube: TubeWithType): TubeRow {
  return {
    id: tube.id, label: tube.label, type: tube.type.designation, maker: tube.maker, dateCode: tube.dateCode,
    location: tube.location, state: tube.state, notes: tube.notes, verdict: tube.verdict, percentOfReference: tube.percent,
    percentText: tube.percent === null ? "" : `${Math.round(tube.percent)} %`,
  };
}

export class StockService {
  constructor(private readonly db: PrismaClient, private readonly catalog: TypeCatalog) {}

  async list(query: TubeListQuery) {
    const where: Record<string, unknown> = {};
    if (query.type) {
      const entry = this.catalog.resolve(query.type);
      where.typeId = entry ? entry.id : -1;
    }
    if (query.state === "active") where.state = { not: "retired" };
    else if (query.state) where.state = query.state;
    if (query.location) where.location = query.location;
    if (query.verdict) where.verdict = query.verdict;
    if (query.q) where.label = { contains: query.q };
    const [total, tubes] = await Promise.all([
      this.db.tube.count({ where }),
      this.db.tube.findMany({
        where,
        include: { type: { select: { designation: true } } },
        orderBy: { label: "asc" },
        skip: (query.page - 1) * query.pageSize,
        take: query.pageSize,
      }),
    ]);
    const pages = Math.max(1, Math.ceil(total / query.pageSize));
    return { total, page: query.page, pages, pageSize: query.pageSize, tubes: tubes.map(toTubeRow) };
  }

  async locations(): Promise<string[]> {
    // Prisma's `distinct` de-duplicates in memory; SQL answers from the location index.
    const rows = await this.db.$queryRaw<Array<{ location: string }>>`SELECT DISTINCT location FROM Tube WHERE location <> '' ORDER BY location`;
    return rows.map((r) => r.location);
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
