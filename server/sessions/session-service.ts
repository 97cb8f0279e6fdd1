/** Test sessions and the readings entered at the bench. */
import type { PrismaClient } from "../../generated/prisma/client.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import type { VerdictService } from "../verdicts/verdict-service.ts";
import { judgedConditions, presentJudgedConditions, type StoredConditions, type StoredReading } from "../verdicts/verdict-service.ts";
import type { BenchRowInput, SessionInput } from "../schemas/session-schemas.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import { parseBenchSections } from "./bench-row.ts";
import { parseConditionVolts, type ConditionField } from "./reading-conditions.ts";
import type { ServiceResult } from "../stock/stock-service.ts";

export interface SessionConditions {
  heaterVolts: number | null;
  plateVolts: number | null;
  screenVolts: number | null;
  gridVolts: number | null;
}

/** Parses the typed test conditions (units allowed, grid bias may be negative). */
export function parseConditions(input: Pick<SessionInput, "heaterVolts" | "plateVolts" | "screenVolts" | "gridVolts">):
  { ok: true; value: SessionConditions } | { ok: false; errors: FieldErrors } {
  const errors: FieldErrors = {};
  const volts = (text: string | undefined, field: ConditionField, label: string): number | null => {
    if (!text) return null;
    const parsed = parseConditionVolts(text, field, label);
    if (!parsed.ok) {
      errors[field] = parsed.reason;
      return null;
    }
    return parsed.value;
  };
  const value = {
    heaterVolts: volts(input.heaterVolts, "heaterVolts", "Heater volts"),
    plateVolts: volts(input.plateVolts, "plateVolts", "Plate volts"),
    screenVolts: volts(input.screenVolts, "screenVolts", "Screen volts"),
    gridVolts: volts(input.gridVolts, "gridVolts", "Grid bias"),
  };
  return Object.keys(errors).length ? { ok: false, errors } : { ok: true, value };
}

/**
 * A stored reading with `judgedAt`: the conditions it was judged at, whether they are the
 * reading's own ("own": it gives at least one field) or the session's, and display text.
 */
export function withJudgedAt<R extends StoredReading>(session: StoredConditions, reading: R) {
  const shown = presentJudgedConditions(session, reading);
  return {
    ...reading,
    judgedAt: { ...judgedConditions(session, reading), source: shown.own ? ("own" as const) : ("session" as const), text: shown.text },
  };
}

export class SessionService {
  constructor(private readonly db: PrismaClient, private readonly catalog: TypeCatalog, private readonly verdicts: VerdictService) {}

  async create(input: SessionInput): Promise<ServiceResult<{ id: number }>> {
    const conditions = parseConditions(input);
    if (!conditions.ok) return { ok: false, errors: conditions.errors };
    const session = await this.db.testSession.create({
      data: { date: input.date, instrument: input.instrument, notes: input.notes ?? "", ...conditions.value },
    });
    return { ok: true, value: { id: session.id } };
  }

  async list(page = 1, pageSize = 50) {
    const [total, sessions] = await Promise.all([
      this.db.testSession.count(),
      this.db.testSession.findMany({ orderBy: [{ date: "desc" }, { id: "desc" }], skip: (page - 1) * pageSize, take: pageSize, include: { _count: { select: { readings: true } } } }),
    ]);
    return { total, page, pages: Math.max(1, Math.ceil(total / pageSize)), sessions };
  }

  async get(id: number) {
    return this.db.testSession.findUnique({ where: { id } });
  }

  /** The session's readings grouped per tube, newest entry first, each with its evaluation. */
  async rows(sessionId: number, limit = 500) {
    const session = await this.db.testSession.findUnique({ where: { id: sessionId } });
    if (!session) return [];
    const readings = await this.db.reading.findMany({
      where: { sessionId },
      include: { tube: { select: { id: true, label: true, typeId: true } } },
      orderBy: [{ id: "desc" }],
      take: limit * 2,
    });
    const thresholds = await this.verdicts.thresholds();
    const byTube = new Map<number, typeof readings>();
    for (const reading of readings) {
      const list = byTube.get(reading.tubeId) ?? [];
      list.push(reading);
      byTube.set(reading.tubeId, list);
    }
    return [...byTube.values()].slice(0, limit).map((list) => {
      const tube = list[0].tube;
      const entry = this.catalog.get(tube.typeId)!;
      const sorted = [...list].sort((a, b) => a.section - b.section);
      return {
        tubeId: tube.id, label: tube.label, type: entry.designation,
        readings: sorted.map((reading) => withJudgedAt(session, reading)),
        evaluation: this.verdicts.evaluate(entry.spec, session, sorted, thresholds),
      };
    });
  }

  /**
   * Saves one bench row: finds (or, when asked, creates) the tube, then replaces its readings in
   * this session — all in one transaction, so a bad field leaves nothing behind.
   */
  async saveBenchRow(sessionId: number, row: BenchRowInput): Promise<ServiceResult<{ tubeId: number }> & { needsCreate?: boolean }> {
    const session = await this.db.testSession.findUnique({ where: { id: sessionId } });
    if (!session) return { ok: false, errors: { _form: "Session not found" }, status: 404 };
    const existing = await this.db.tube.findUnique({ where: { label: row.label } });
    let typeEntry = existing ? this.catalog.get(existing.typeId) : row.type ? this.catalog.resolve(row.type) : undefined;
    if (existing && row.type) {
      const named = this.catalog.resolve(row.type);
      if (!named) return { ok: false, errors: { type: `Type: ${row.type} is not in the library` } };
      if (named.id !== existing.typeId) return { ok: false, errors: { type: `Type: tube ${row.label} is recorded as ${typeEntry?.designation}; edit the tube to change its type` } };
    }
    if (!existing) {
      if (!row.type) return { ok: false, errors: { type: `Type: ${row.label} is a new label — give its type to create it` }, needsCreate: true };
      if (!typeEntry) return { ok: false, errors: { type: `Type: ${row.type} is not in the library` } };
      if (!row.createTube) return { ok: false, errors: { label: `Label: ${row.label} is not in stock yet — tick "create" to add it as a new ${typeEntry.designation}` }, needsCreate: true };
    }
    const parsed = parseBenchSections(row, typeEntry!.spec.sections.length);
    if (!parsed.ok) return { ok: false, errors: parsed.errors, needsCreate: !existing };

    const tubeId = await this.db.$transaction(async (tx) => {
      const tube =
        existing ??
        (await tx.tube.create({
          data: { label: row.label, typeId: typeEntry!.id, location: row.location ?? "", events: { create: { kind: "created", toValue: "stock", note: `entered at the bench, session ${session.date}` } } },
        }));
      await tx.reading.deleteMany({ where: { sessionId, tubeId: tube.id } });
      await tx.reading.createMany({ data: parsed.sections.map((section) => ({ sessionId, tubeId: tube.id, ...section })) });
      return tube.id;
    });
    await this.verdicts.recompute([tubeId]);
    return { ok: true, value: { tubeId } };
  }

  /** Readings of one tube in every session, oldest first, each session evaluated on its own. */
  async history(tubeId: number) {
    const tube = await this.db.tube.findUnique({ where: { id: tubeId } });
    if (!tube) return [];
    const entry = this.catalog.get(tube.typeId)!;
    const readings = await this.db.reading.findMany({ where: { tubeId }, include: { session: true }, orderBy: [{ session: { date: "asc" } }, { sessionId: "asc" }, { section: "asc" }] });
    const thresholds = await this.verdicts.thresholds();
    const bySession = new Map<number, typeof readings>();
    for (const reading of readings) bySession.set(reading.sessionId, [...(bySession.get(reading.sessionId) ?? []), reading]);
    return [...bySession.values()].map((list) => ({
      session: list[0].session,
      readings: list.map((reading) => withJudgedAt(list[0].session, reading)),
      evaluation: this.verdicts.evaluate(entry.spec, list[0].session, list, thresholds),
    }));
  }
}
