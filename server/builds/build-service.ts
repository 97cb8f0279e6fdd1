/**
 * Build plans: create, edit, delete, accept a substitute, and the check (engine over the stock).
 * Writes of the plan go through Prisma in one transaction each; reads and the check through the
 * raw connection (see build-store.ts). Every refusal is a field-named error, never a throw.
 */
import type Database from "better-sqlite3";
import type { PrismaClient } from "../../generated/prisma/client.ts";
import {
  amplifyingSections,
  checkBuild,
  DEFAULT_BALANCE_PERCENT,
  DEFAULT_BALANCE_SOURCE,
  DEFAULT_SPARES_PERCENT,
  DEFAULT_SPARES_SOURCE,
  heaterDrawOnSupply,
  type BuildCheckInput,
  type BuildCheckResult,
  type BuildLinePlan,
} from "../engine/build-check/index.ts";
import type { BuildInput } from "../schemas/build-schemas.ts";
import { buildFieldLabel } from "../schemas/build-schemas.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import { BuildStore, type StoredBuild } from "./build-store.ts";

export type BuildResult<T> = { ok: true; value: T } | { ok: false; errors: FieldErrors; status: number };

/** Where the spares percentage of a line comes from when the owner sets it without saying. */
export const OWNER_SPARES_SOURCE = "set by the owner, no source";

interface NormalizedLine {
  id?: number;
  kind: "bistable" | "single" | "rectifier";
  typeId: number;
  designation: string;
  count: number;
  heaterSupply: number;
  sparesPercent: number;
  sparesSource: string;
  allowSubstitutes: boolean;
  acceptedSubstitutes: string;
  plateLoadOhms: number | null;
  couplingOhms: number | null;
  gridReturnOhms: number | null;
  cathodeOhms: number | null;
  plateVolts: number | null;
  plateMilliamps: number | null;
  screenMilliamps: number | null;
  loadMilliamps: number | null;
}

/**
 * The engine's question for a stored build and the current stock. `forReservation` loads only
 * the types the build can use (its lines, accepted substitutes and allocated tubes) and skips
 * the substitute options: a reservation needs the plan, not the menu.
 */
export function checkInputOf(build: StoredBuild, store: BuildStore, library: BuildCheckInput["library"], catalog: TypeCatalog, forReservation = false): BuildCheckInput {
  const lines: BuildLinePlan[] = build.lines.map((line, index) => ({
    key: String(line.id),
    label: `Line ${index + 1}`,
    kind: line.kind,
    designation: line.designation,
    count: line.count,
    heaterSupplyIndex: line.heaterSupply - 1,
    spares: { percent: line.sparesPercent, source: line.sparesSource },
    allowSubstitutes: line.allowSubstitutes,
    acceptedSubstitutes: line.acceptedSubstitutes,
    ...(line.kind === "bistable"
      ? { resistors: { plateLoadOhms: line.plateLoadOhms ?? 0, couplingOhms: line.couplingOhms ?? 0, gridReturnOhms: line.gridReturnOhms ?? 0, cathodeOhms: line.cathodeOhms } }
      : {}),
    ...(line.kind === "single" ? { operating: { plateVolts: line.plateVolts ?? 0, plateMilliamps: line.plateMilliamps ?? 0, screenMilliamps: line.screenMilliamps } } : {}),
    ...(line.kind === "rectifier" ? { loadMilliamps: line.loadMilliamps } : {}),
  }));
  const allocations = store.allocations(build.id);
  let freeStock: BuildCheckInput["freeStock"];
  if (forReservation) {
    const names = new Set([...build.lines.flatMap((line) => [line.designation, ...(line.allowSubstitutes ? line.acceptedSubstitutes : [])]), ...allocations.map((tube) => tube.designation)]);
    freeStock = store.freeStock([...names].map((name) => catalog.resolve(name)?.id).filter((id): id is number => id !== undefined));
  } else freeStock = store.freeStock();
  return {
    ...(forReservation ? { substituteOptions: false } : {}),
    supplies: {
      heater: build.heaterSupplies,
      bPlus: { volts: build.bPlusVolts, milliamps: build.bPlusMilliamps },
      negativeRail: build.negativeRailVolts !== null && build.negativeRailMilliamps !== null ? { volts: build.negativeRailVolts, milliamps: build.negativeRailMilliamps } : null,
    },
    balanceRule: { maxDifferencePercent: build.balancePercent, source: build.balancePercent === DEFAULT_BALANCE_PERCENT ? DEFAULT_BALANCE_SOURCE : "set for this build, no source" },
    lines,
    library,
    freeStock,
    allocations,
  };
}

export class BuildService {
  readonly store: BuildStore;

  constructor(
    private readonly db: PrismaClient,
    readonly sqlite: Database.Database,
    private readonly catalog: TypeCatalog,
  ) {
    this.store = new BuildStore(sqlite, catalog);
  }

  library() {
    return this.catalog.list().map((entry) => entry.spec);
  }

  get(id: number): StoredBuild | null {
    return this.store.build(id);
  }

  list() {
    return this.store.summaries();
  }

  /** The check of a stored build against the stock as it is now. */
  check(id: number): { build: StoredBuild; result: BuildCheckResult } | null {
    const build = this.store.build(id);
    if (!build) return null;
    return { build, result: checkBuild(checkInputOf(build, this.store, this.library(), this.catalog)) };
  }

  /** Cross-field checks the schema cannot make (types, supplies, heaters, names), and the stored form of each line. */
  private async normalize(input: BuildInput, existing: StoredBuild | null): Promise<BuildResult<NormalizedLine[]>> {
    const errors: FieldErrors = {};
    let conflict = false;
    const sameName = await this.db.build.findUnique({ where: { name: input.name } });
    if (sameName && sameName.id !== existing?.id) errors.name = `Name: a build called "${input.name}" already exists`;
    const lines: NormalizedLine[] = [];
    input.lines.forEach((line, index) => {
      const fail = (field: string, message: string) => {
        const path = `lines.${index}.${field}`;
        if (!errors[path]) errors[path] = `${buildFieldLabel(path)}: ${message}`;
      };
      const entry = this.catalog.resolve(line.type);
      if (!entry) return fail("type", `${line.type} is not in the library (add it under Types, or check the spelling)`);
      if (line.kind !== "rectifier" && amplifyingSections(entry.spec).length === 0) fail("type", `${entry.designation} has no triode or pentode section; use a rectifier/regulator line`);
      const supply = input.heaterSupplies[line.heaterSupply - 1];
      if (!supply) fail("heaterSupply", `there is no heater supply ${line.heaterSupply} (the build has ${input.heaterSupplies.length})`);
      else {
        const draw = heaterDrawOnSupply(entry.spec.heater, supply.volts);
        if (!draw.ok) fail("heaterSupply", `${entry.designation} ${draw.reason} ("${supply.name}") — pick another supply or add one`);
      }
      const accepted: string[] = [];
      for (const name of line.acceptedSubstitutes) {
        const substitute = this.catalog.resolve(name);
        if (!substitute) fail("acceptedSubstitutes", `${name} is not in the library`);
        else if (substitute.designation !== entry.designation && !accepted.includes(substitute.designation)) accepted.push(substitute.designation);
      }
      if (line.id !== undefined && !existing?.lines.some((stored) => stored.id === line.id)) fail("id", "is not a line of this build; reload the editor");
      const sparesPercent = line.sparesPercent ?? DEFAULT_SPARES_PERCENT;
      const sparesSource = line.sparesSource?.trim() || (line.sparesPercent === undefined || line.sparesPercent === DEFAULT_SPARES_PERCENT ? DEFAULT_SPARES_SOURCE : OWNER_SPARES_SOURCE);
      lines.push({
        ...(line.id !== undefined ? { id: line.id } : {}),
        kind: line.kind,
        typeId: entry.id,
        designation: entry.designation,
        count: line.count,
        heaterSupply: line.heaterSupply,
        sparesPercent,
        sparesSource,
        allowSubstitutes: line.allowSubstitutes || accepted.length > 0,
        acceptedSubstitutes: accepted.join(" "),
        plateLoadOhms: line.kind === "bistable" ? (line.plateLoadOhms ?? null) : null,
        couplingOhms: line.kind === "bistable" ? (line.couplingOhms ?? null) : null,
        gridReturnOhms: line.kind === "bistable" ? (line.gridReturnOhms ?? null) : null,
        cathodeOhms: line.kind === "bistable" ? (line.cathodeOhms ?? null) : null,
        plateVolts: line.kind === "single" ? (line.plateVolts ?? null) : null,
        plateMilliamps: line.kind === "single" ? (line.plateMilliamps ?? null) : null,
        screenMilliamps: line.kind === "single" ? (line.screenMilliamps ?? null) : null,
        loadMilliamps: line.kind === "rectifier" ? (line.loadMilliamps ?? null) : null,
      });
    });
    // A line holding tubes keeps its identity: release before removing it or changing what it is.
    if (existing) {
      const held = this.sqlite.prepare("SELECT lineId, COUNT(*) AS n FROM BuildAllocation WHERE buildId = ? GROUP BY lineId").all(existing.id) as Array<{ lineId: number; n: number }>;
      for (const { lineId, n } of held) {
        const stored = existing.lines.find((line) => line.id === lineId);
        const index = lines.findIndex((line) => line.id === lineId);
        const label = stored ? `Line ${existing.lines.indexOf(stored) + 1} (${stored.count} × ${stored.designation} ${stored.kind})` : "A line";
        if (index < 0 || lines[index].kind !== stored?.kind || lines[index].typeId !== stored?.typeId) conflict = true;
        if (index < 0) errors.lines = `Lines: ${label} holds ${n} allocated ${n === 1 ? "tube" : "tubes"}; release them before removing the line`;
        else if (stored && (lines[index].kind !== stored.kind || lines[index].typeId !== stored.typeId)) {
          errors[`lines.${index}.type`] = `${buildFieldLabel(`lines.${index}.type`)}: this line holds ${n} allocated ${n === 1 ? "tube" : "tubes"}; release them before changing its kind or type`;
        }
      }
    }
    if (Object.keys(errors).length > 0) return { ok: false, errors, status: conflict || errors.name ? 409 : 422 };
    return { ok: true, value: lines };
  }

  private buildData(input: BuildInput) {
    return {
      name: input.name,
      notes: input.notes,
      heaterSupplies: JSON.stringify(input.heaterSupplies.map((supply) => ({ name: supply.name, volts: supply.volts, amps: supply.amps }))),
      bPlusVolts: input.bPlus.volts,
      bPlusMilliamps: input.bPlus.milliamps,
      negativeRailVolts: input.negativeRail?.volts ?? null,
      negativeRailMilliamps: input.negativeRail?.milliamps ?? null,
      balancePercent: input.balancePercent ?? DEFAULT_BALANCE_PERCENT,
    };
  }

  async create(input: BuildInput): Promise<BuildResult<{ id: number }>> {
    const normalized = await this.normalize({ ...input, lines: input.lines.map(({ id: _ignored, ...line }) => line) }, null);
    if (!normalized.ok) return normalized;
    try {
      const build = await this.db.build.create({
        data: { ...this.buildData(input), lines: { create: normalized.value.map(({ id: _id, designation: _designation, ...line }, position) => ({ ...line, position })) } },
      });
      return { ok: true, value: { id: build.id } };
    } catch (error) {
      if ((error as { code?: string }).code === "P2002") return { ok: false, errors: { name: `Name: a build called "${input.name}" already exists` }, status: 409 };
      throw error;
    }
  }

  /** Replaces the plan in one transaction: lines are matched by id, new ones created, removed ones deleted. */
  async update(id: number, input: BuildInput): Promise<BuildResult<{ id: number }>> {
    const existing = this.store.build(id);
    if (!existing) return { ok: false, errors: { _form: "Build not found" }, status: 404 };
    const normalized = await this.normalize(input, existing);
    if (!normalized.ok) return normalized;
    const keep = new Set(normalized.value.filter((line) => line.id !== undefined).map((line) => line.id!));
    try {
      await this.db.$transaction(async (tx) => {
        await tx.build.update({ where: { id }, data: this.buildData(input) });
        await tx.buildLine.deleteMany({ where: { buildId: id, id: { notIn: [...keep] } } });
        for (const [position, { id: lineId, designation: _designation, ...line }] of normalized.value.entries()) {
          if (lineId !== undefined) await tx.buildLine.update({ where: { id: lineId }, data: { ...line, position } });
          else await tx.buildLine.create({ data: { ...line, position, buildId: id } });
        }
      });
    } catch (error) {
      const code = (error as { code?: string }).code;
      if (code === "P2002") return { ok: false, errors: { name: `Name: a build called "${input.name}" already exists` }, status: 409 };
      if (code === "P2003" || code === "P2014") return { ok: false, errors: { lines: "Lines: a removed line holds allocated tubes; release them first" }, status: 409 };
      throw error;
    }
    return { ok: true, value: { id } };
  }

  /** Deletes a build that holds no tubes. */
  async remove(id: number): Promise<BuildResult<null>> {
    const build = this.store.build(id);
    if (!build) return { ok: false, errors: { _form: "Build not found" }, status: 404 };
    const held = (this.sqlite.prepare("SELECT COUNT(*) AS n FROM BuildAllocation WHERE buildId = ?").get(id) as { n: number }).n;
    if (held > 0) return { ok: false, errors: { _form: `This build holds ${held} allocated ${held === 1 ? "tube" : "tubes"}: release the reserved ones first; a build with installed tubes keeps their record and cannot be deleted` }, status: 409 };
    await this.db.build.delete({ where: { id } });
    return { ok: true, value: null };
  }

  /** Adds a substitute type to a line's accepted list (and allows substitutes on it). */
  async acceptSubstitute(id: number, lineId: number, designation: string): Promise<BuildResult<null>> {
    const build = this.store.build(id);
    if (!build) return { ok: false, errors: { _form: "Build not found" }, status: 404 };
    const line = build.lines.find((candidate) => candidate.id === lineId);
    if (!line) return { ok: false, errors: { lineId: "Line: not a line of this build" }, status: 422 };
    const entry = this.catalog.resolve(designation);
    if (!entry) return { ok: false, errors: { designation: `Substitute: ${designation} is not in the library` }, status: 422 };
    if (entry.designation === line.designation) return { ok: false, errors: { designation: `Substitute: ${entry.designation} is the line's own type` }, status: 422 };
    const supply = build.heaterSupplies[line.heaterSupply - 1];
    const draw = supply ? heaterDrawOnSupply(entry.spec.heater, supply.volts) : { ok: false as const, reason: "the line has no heater supply" };
    if (!draw.ok) return { ok: false, errors: { designation: `Substitute: ${entry.designation} ${draw.reason}` }, status: 422 };
    const accepted = line.acceptedSubstitutes.includes(entry.designation) ? line.acceptedSubstitutes : [...line.acceptedSubstitutes, entry.designation];
    await this.db.buildLine.update({ where: { id: lineId }, data: { allowSubstitutes: true, acceptedSubstitutes: accepted.join(" ") } });
    return { ok: true, value: null };
  }
}
