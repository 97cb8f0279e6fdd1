/**
 * Pairing from stock: loads the good tubes in stock of the chosen types with each section's
 * newest reading, calls the pairing engine (exact matching, sort-and-pair for comparison, or sets
 * of N), and reserves chosen tubes in one transaction through the stock service.
 */
import type Database from "better-sqlite3";
import type { PrismaClient } from "../../generated/prisma/client.ts";
import {
  greedySortAndPair,
  groupSections,
  pairSections,
  type GroupingResult,
  type PairingCandidate,
  type PairingOptions,
  type PairingResult,
  type ValueLabel,
} from "../engine/pairing/index.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import { StockService, toTubeRow, type ServiceResult, type TubeRow } from "../stock/stock-service.ts";
import type { PairingQuestion } from "../schemas/pairing-schemas.ts";

/** One candidate section with where it came from. */
export interface SectionReading {
  tubeId: number;
  label: string;
  type: string;
  section: number;
  transconductanceMicroSiemens: number | null;
  plateMilliamps: number | null;
  sessionDate: string;
}

export interface PairingAnswer {
  question: PairingQuestion;
  types: string[];
  sections: SectionReading[];
  /** Candidate id ("label/section") → its reading. */
  byCandidateId: Map<string, SectionReading>;
  tubeCount: number;
  /** Tubes of these types in stock whose verdict is not good (left out). */
  notGoodInStock: number;
  valueLabels: ValueLabel[];
  exact: PairingResult | null;
  greedy: PairingResult | null;
  grouping: GroupingResult | null;
  /** The distinct tubes the chosen pairs or sets use, in label order. */
  chosenTubeIds: number[];
}

export const candidateIdOf = (label: string, section: number) => `${label}/${section}`;

class Refusal extends Error {
  constructor(readonly errors: FieldErrors, readonly status: number) {
    super("refused");
  }
}

/**
 * A transaction client that StockService can use as its database: its own `$transaction([...])`
 * runs the operations one after another inside the surrounding interactive transaction.
 */
function clientWithin(transaction: object): PrismaClient {
  return new Proxy(transaction, {
    get(target, property, receiver) {
      if (property === "$transaction") {
        return async (operations: Array<PromiseLike<unknown>>) => {
          const results: unknown[] = [];
          for (const operation of operations) results.push(await operation);
          return results;
        };
      }
      return Reflect.get(target, property, receiver);
    },
  }) as PrismaClient;
}

export class PairingService {
  constructor(
    private readonly db: PrismaClient,
    private readonly sqlite: Database.Database,
    private readonly catalog: TypeCatalog,
  ) {}

  /** Types that have at least one good tube in stock, for the form's suggestions. */
  typesInStock(): string[] {
    const rows = this.sqlite
      .prepare("SELECT DISTINCT typeId FROM Tube WHERE state = 'stock' AND verdict = 'good'")
      .all() as Array<{ typeId: number }>;
    return rows
      .map((row) => this.catalog.get(row.typeId)?.designation)
      .filter((name): name is string => name !== undefined)
      .sort((a, b) => a.localeCompare(b, "en", { numeric: true }));
  }

  pair(question: PairingQuestion): ServiceResult<PairingAnswer> {
    const errors: FieldErrors = {};
    const typeIds: number[] = [];
    const types: string[] = [];
    question.types.forEach((name, index) => {
      const entry = this.catalog.resolve(name);
      if (!entry) {
        errors[`types.${index}`] = `${index === 0 ? "Type" : "Substitute type"}: ${name} is not in the library`;
        return;
      }
      if (!typeIds.includes(entry.id)) {
        typeIds.push(entry.id);
        types.push(entry.designation);
      }
    });
    if (Object.keys(errors).length > 0) return { ok: false, errors };

    const { sections, notGoodInStock } = this.loadSections(typeIds);
    const useCurrent = question.rule.plateCurrentPercent !== undefined;
    const valueLabels: ValueLabel[] = [{ name: "gm", unit: "µS" }, ...(useCurrent ? [{ name: "Ia", unit: "mA" }] : [])];
    const rule = {
      maxRelativeDifference: [question.rule.transconductancePercent / 100, ...(useCurrent ? [(question.rule.plateCurrentPercent as number) / 100] : [])],
    };
    const byCandidateId = new Map<string, SectionReading>();
    const candidates: PairingCandidate[] = sections.map((reading) => {
      const id = candidateIdOf(reading.label, reading.section);
      byCandidateId.set(id, reading);
      // A missing reading becomes NaN, which the engine reports as a leftover with its reason.
      const values = [reading.transconductanceMicroSiemens ?? Number.NaN, ...(useCurrent ? [reading.plateMilliamps ?? Number.NaN] : [])];
      return { id, tubeId: reading.label, section: reading.section, values };
    });

    let exact: PairingResult | null = null;
    let greedy: PairingResult | null = null;
    let grouping: GroupingResult | null = null;
    const chosenLabels = new Set<string>();
    if (question.setSize === 2) {
      const options: PairingOptions = {
        allowSameEnvelope: question.allowSameEnvelope,
        allowAcrossEnvelopes: question.allowAcrossEnvelopes,
        valueLabels,
        ...(question.stages !== undefined ? { maxPairs: question.stages } : {}),
      };
      exact = pairSections(candidates, rule, options);
      greedy = greedySortAndPair(candidates, rule, options);
      for (const pair of exact.pairs) chosenLabels.add(pair.a.tubeId).add(pair.b.tubeId);
    } else {
      grouping = groupSections(candidates, rule, question.setSize, { valueLabels });
      if (question.stages !== undefined) grouping = { ...grouping, groups: grouping.groups.slice(0, question.stages) };
      for (const group of grouping.groups) for (const member of group.members) chosenLabels.add(member.tubeId);
    }
    const idByLabel = new Map(sections.map((reading) => [reading.label, reading.tubeId]));
    const chosenTubeIds = [...chosenLabels].sort((a, b) => a.localeCompare(b, "en", { numeric: true })).map((label) => idByLabel.get(label) as number);
    return {
      ok: true,
      value: {
        question,
        types,
        sections,
        byCandidateId,
        tubeCount: new Set(sections.map((reading) => reading.tubeId)).size,
        notGoodInStock,
        valueLabels,
        exact,
        greedy,
        grouping,
        chosenTubeIds,
      },
    };
  }

  /**
   * Sets the given tubes to "reserved" (each change written to the tube's history) in one
   * transaction; refuses — changing nothing — when any is missing, not in stock, or not good.
   */
  async reserve(tubeIds: number[], note: string): Promise<ServiceResult<TubeRow[]>> {
    try {
      const reserved = await this.db.$transaction(async (transaction) => {
        const tubes = await transaction.tube.findMany({ where: { id: { in: tubeIds } }, include: { type: { select: { designation: true } } } });
        const byId = new Map(tubes.map((tube) => [tube.id, tube]));
        const problems: string[] = [];
        for (const id of tubeIds) {
          const tube = byId.get(id);
          if (!tube) problems.push(`tube #${id} does not exist`);
          else if (tube.state !== "stock") problems.push(`${tube.label} is no longer in stock (it is ${tube.state})`);
          else if (tube.verdict !== "good") problems.push(`${tube.label} is no longer good (its verdict is ${tube.verdict})`);
        }
        if (problems.length > 0) throw new Refusal({ tubeIds: `Nothing was reserved: ${problems.join("; ")}` }, byId.size < tubeIds.length ? 404 : 409);
        const stock = new StockService(clientWithin(transaction), this.catalog, this.sqlite);
        const rows: TubeRow[] = [];
        for (const id of tubeIds) {
          const result = await stock.update(id, { state: "reserved", note });
          if (!result.ok) throw new Refusal(result.errors, result.status ?? 409);
          rows.push(result.value);
        }
        return rows;
      });
      return { ok: true, value: reserved };
    } catch (error) {
      if (error instanceof Refusal) return { ok: false, errors: error.errors, status: error.status };
      throw error;
    }
  }

  /** The tubes with these ids as stock rows (for the report after a reservation), in label order. */
  async tubesByIds(tubeIds: number[]): Promise<TubeRow[]> {
    const tubes = await this.db.tube.findMany({ where: { id: { in: tubeIds } }, include: { type: { select: { designation: true } } }, orderBy: { label: "asc" } });
    return tubes.map(toTubeRow);
  }

  /** Good tubes in stock of these types, each section with its newest reading (newest session by date, then id). */
  private loadSections(typeIds: number[]): { sections: SectionReading[]; notGoodInStock: number } {
    if (typeIds.length === 0) return { sections: [], notGoodInStock: 0 };
    const placeholders = typeIds.map(() => "?").join(", ");
    const rows = this.sqlite
      .prepare(
        `SELECT t.id AS tubeId, t.label AS label, t.typeId AS typeId, r.section AS section, r.gmMicroSiemens AS gm, r.plateMilliamps AS ia,
                s.date AS date, s.id AS sessionId
           FROM Tube t JOIN Reading r ON r.tubeId = t.id JOIN TestSession s ON s.id = r.sessionId
          WHERE t.state = 'stock' AND t.verdict = 'good' AND t.typeId IN (${placeholders})
          ORDER BY t.label, r.section, s.date DESC, s.id DESC`,
      )
      .all(...typeIds) as Array<{ tubeId: number; label: string; typeId: number; section: number; gm: number | null; ia: number | null; date: string; sessionId: number }>;
    const sections: SectionReading[] = [];
    let previousKey = "";
    for (const row of rows) {
      const key = `${row.tubeId}/${row.section}`;
      if (key === previousKey) continue; // rows are newest first within a section
      previousKey = key;
      sections.push({
        tubeId: row.tubeId,
        label: row.label,
        type: this.catalog.get(row.typeId)?.designation ?? `#${row.typeId}`,
        section: row.section,
        transconductanceMicroSiemens: row.gm,
        plateMilliamps: row.ia,
        sessionDate: row.date,
      });
    }
    const notGood = this.sqlite
      .prepare(`SELECT COUNT(*) AS n FROM Tube WHERE state = 'stock' AND verdict <> 'good' AND typeId IN (${placeholders})`)
      .get(...typeIds) as { n: number };
    return { sections, notGoodInStock: Number(notGood.n) };
  }
}
