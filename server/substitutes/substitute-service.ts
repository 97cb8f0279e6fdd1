/**
 * Substitutes: runs the ranker (server/engine/substitution) over every type the ledger knows —
 * the reference library and user-added types — with the good-tube counts from the stock.
 * Pages and the API share it; it turns bad questions into field-named errors, never a throw.
 */
import { DEFAULT_DERATING_FACTOR, DEFAULT_TOLERANCES, rankSubstitutes, socketsForType, type HeaterSupply, type SocketFit, type SocketMiss, type StockCount, type SubstituteRanking } from "../engine/substitution/index.ts";
import type { TubeTypeSpec } from "../engine/tube-types/index.ts";
import type { HeaterSupplyInput, SocketsQuery, SubstituteFormQuestion } from "../schemas/substitute-schemas.ts";
import type { CatalogEntry, TypeCatalog } from "../types/type-catalog.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";

/** Shown with every answer that suggests a substitute or a rewire. */
export const SUBSTITUTE_CAUTION =
  "Tube circuits run at lethal voltages, and filter capacitors hold their charge after power-off. " +
  "Check every substitute, rewire and adapter against the manufacturer's data before applying power, " +
  "and defer to local codes and qualified practice.";

export type ServiceAnswer<T> = { ok: true; value: T } | { ok: false; errors: FieldErrors; status: number };

/** Where a question failed, in the API's field paths ("type", "heaterSupply", "operating.0.section"). */
type Failure = { ok: false; errors: FieldErrors; status: number };

export interface SubstituteAnswer {
  socket: CatalogEntry;
  /** The supply used, with blanks filled from the socket type's own heater. */
  heaterSupply: HeaterSupplyInput;
  deratingFactor: number;
  /** True when no circuit values were given and every section was checked at the type's typical point. */
  operatingFromTypical: boolean;
  ranking: SubstituteRanking;
  goodByDesignation: Map<string, number>;
}

export interface SocketsAnswer {
  held: CatalogEntry;
  heldGood: number;
  /** The shared supply, or null when each socket runs on its own type's heater voltage. */
  heaterSupply: HeaterSupplyInput | null;
  fits: SocketFit[];
  misses: SocketMiss[];
  goodByDesignation: Map<string, number>;
}

interface StockSummarySource {
  summary(): Promise<Array<{ type: string; counts: Record<string, number> }>>;
}

/** The engine's supply from the API's (milliamps → amps). */
export function engineSupply(supply: HeaterSupplyInput): HeaterSupply {
  if (supply.kind === "parallel") return { kind: "parallel", volts: supply.volts };
  return { kind: "series", amps: supply.milliamps / 1000, ...(supply.warmUpSeconds !== undefined ? { stringWarmUpSeconds: supply.warmUpSeconds } : {}) };
}

/** Fills a blank supply value with the socket type's own heater (full volts, or its current in a string). */
export function completeSupply(question: SubstituteFormQuestion["heaterSupply"], socketType: TubeTypeSpec): HeaterSupplyInput {
  if (question.kind === "parallel") return { kind: "parallel", volts: question.volts ?? socketType.heater.volts };
  return {
    kind: "series",
    milliamps: question.milliamps ?? roundMilliamps(socketType.heater.amps * 1000),
    ...(question.warmUpSeconds !== undefined ? { warmUpSeconds: question.warmUpSeconds } : {}),
  };
}

function roundMilliamps(value: number): number {
  // Amps such as 0.15 become 150.00000000000003 mA in binary; a micro-amp is far below any heater's spread.
  return Math.round(value * 1000) / 1000;
}

export class SubstituteService {
  constructor(
    private readonly catalog: TypeCatalog,
    private readonly stock: StockSummarySource,
  ) {}

  private async goodCounts(): Promise<Map<string, number>> {
    const summary = await this.stock.summary();
    return new Map(summary.map((row) => [row.type, row.counts.good ?? 0]));
  }

  private library(): TubeTypeSpec[] {
    return this.catalog.list().map((entry) => entry.spec);
  }

  /** Resolves a designation or alias, or a field error naming it. */
  resolveType(name: string, field = "type"): CatalogEntry | Failure {
    const entry = this.catalog.resolve(name);
    if (entry) return entry;
    return { ok: false, status: 422, errors: { [field]: `Type: ${name} is not in the library (add it under Types → add a type, or check the spelling)` } };
  }

  /**
   * Ranks every known type as a substitute for the socket described. Errors (status 422): the
   * type is unknown, a section the type lacks, or the socket's own type cannot run on the supply.
   */
  async rank(question: SubstituteFormQuestion): Promise<ServiceAnswer<SubstituteAnswer>> {
    const socket = this.resolveType(question.type);
    if ("ok" in socket) return socket;
    const sectionCount = socket.spec.sections.length;
    const errors: FieldErrors = {};
    (question.operating ?? []).forEach((values, position) => {
      if (values.section > sectionCount) {
        errors[`operating.${position}.section`] = `Section ${values.section}: ${socket.designation} has ${sectionCount === 1 ? "one section" : `only ${sectionCount} sections`}`;
      }
    });
    if (Object.keys(errors).length > 0) return { ok: false, errors, status: 422 };

    const heaterSupply = completeSupply(question.heaterSupply, socket.spec);
    const goodByDesignation = await this.goodCounts();
    const stock: StockCount[] = [...goodByDesignation].map(([designation, good]) => ({ designation, good }));
    const tolerances = question.tolerances;
    const deratingFactor = question.deratingFactor ?? DEFAULT_DERATING_FACTOR;
    try {
      const ranking = rankSubstitutes(
        {
          socketType: socket.spec,
          heaterSupply: engineSupply(heaterSupply),
          ...(question.operating !== undefined ? { operating: question.operating } : {}),
          allowRewire: question.allowRewire,
          allowAdapter: question.allowAdapter,
          ...(tolerances !== undefined
            ? {
                tolerances: {
                  transconductancePercent: tolerances.transconductancePercent ?? DEFAULT_TOLERANCES.transconductancePercent,
                  muPercent: tolerances.muPercent ?? DEFAULT_TOLERANCES.muPercent,
                  plateResistancePercent: tolerances.plateResistancePercent ?? DEFAULT_TOLERANCES.plateResistancePercent,
                },
              }
            : {}),
          deratingFactor,
        },
        this.library(),
        stock,
      );
      return {
        ok: true,
        value: { socket, heaterSupply, deratingFactor, operatingFromTypical: question.operating === undefined, ranking, goodByDesignation },
      };
    } catch (error) {
      return engineFailure(error, socket.designation);
    }
  }

  /** The reverse question: every socket (type) the held type could fill, and why the others not. */
  async socketsFor(typeName: string, query: SocketsQuery): Promise<ServiceAnswer<SocketsAnswer>> {
    const held = this.resolveType(typeName);
    if ("ok" in held) return held;
    const heaterSupply: HeaterSupplyInput | null =
      query.supply === "parallel" && query.heaterVolts !== undefined
        ? { kind: "parallel", volts: query.heaterVolts }
        : query.supply === "series" && query.stringMilliamps !== undefined
          ? { kind: "series", milliamps: query.stringMilliamps, ...(query.warmUpSeconds !== undefined ? { warmUpSeconds: query.warmUpSeconds } : {}) }
          : null;
    const goodByDesignation = await this.goodCounts();
    // Its own socket is no question; its variants' sockets stay in.
    const sockets = this.library().filter((spec) => spec.designation !== held.designation);
    try {
      const result = socketsForType(held.spec, sockets, {
        ...(heaterSupply !== null ? { heaterSupply: engineSupply(heaterSupply) } : {}),
        allowRewire: query.allowRewire,
        allowAdapter: query.allowAdapter,
        ...(query.derating !== undefined ? { deratingFactor: query.derating } : {}),
        stock: [...goodByDesignation].map(([designation, good]) => ({ designation, good })),
      });
      return {
        ok: true,
        value: { held, heldGood: goodByDesignation.get(held.designation) ?? 0, heaterSupply, fits: result.fits, misses: result.misses, goodByDesignation },
      };
    } catch (error) {
      return engineFailure(error, held.designation);
    }
  }
}

function engineFailure(error: unknown, designation: string): Failure {
  if (!(error instanceof RangeError)) throw error;
  const message = error.message;
  if (message.startsWith("the socket's own type cannot run")) {
    return { ok: false, status: 422, errors: { heaterSupply: `Heater supply: ${designation} itself cannot run on it (${message.replace(/^the socket's own type cannot run on its heater supply: /, "")})` } };
  }
  if (message.startsWith("deratingFactor")) return { ok: false, status: 422, errors: { deratingFactor: `Derating factor: ${message}` } };
  if (message.startsWith("tolerances")) return { ok: false, status: 422, errors: { tolerances: `Tolerances: ${message}` } };
  return { ok: false, status: 422, errors: { _form: message } };
}
