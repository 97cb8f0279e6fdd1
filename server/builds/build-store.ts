/**
 * Reads for builds through the raw SQLite connection: synchronous, so the same code serves a
 * page and runs inside a reservation's write transaction (where the check must be recomputed
 * on exactly the rows it then allocates).
 */
import type Database from "better-sqlite3";
import type { AllocatedTube, AllocationSlot, HeaterSupplyPlan, SectionBalanceReading, StockTube } from "../engine/build-check/index.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import { mergeTestConditions } from "../engine/verdicts/index.ts";

export interface StoredLine {
  id: number;
  position: number;
  kind: "bistable" | "single" | "rectifier";
  typeId: number;
  designation: string;
  count: number;
  heaterSupply: number;
  sparesPercent: number;
  sparesSource: string;
  allowSubstitutes: boolean;
  acceptedSubstitutes: string[];
  plateLoadOhms: number | null;
  couplingOhms: number | null;
  gridReturnOhms: number | null;
  cathodeOhms: number | null;
  plateVolts: number | null;
  plateMilliamps: number | null;
  screenMilliamps: number | null;
  loadMilliamps: number | null;
}

export interface StoredBuild {
  id: number;
  name: string;
  notes: string;
  heaterSupplies: HeaterSupplyPlan[];
  bPlusVolts: number;
  bPlusMilliamps: number;
  negativeRailVolts: number | null;
  negativeRailMilliamps: number | null;
  balancePercent: number;
  updatedAt: string;
  lines: StoredLine[];
}

interface ReadingRow {
  tubeId: number;
  sessionId: number;
  section: number;
  gmMicroSiemens: number | null;
  emissionValue: number | null;
  emissionFullScale: number | null;
}

interface SessionRow {
  id: number;
  plateVolts: number | null;
  gridVolts: number | null;
  screenVolts: number | null;
}

export function parseSlots(text: string): AllocationSlot[] {
  try {
    const value = JSON.parse(text) as AllocationSlot[];
    return Array.isArray(value) ? value : [];
  } catch {
    return [];
  }
}

/** "stage 3 A", "stage 5 A+B", "spare 1 B", "stage 2", "tube 1" — how slots read on the pick list and in a tube's history. */
export function slotText(slots: AllocationSlot[]): string {
  const groups = new Map<string, string[]>();
  for (const slot of slots) {
    // A whole tube (rectifier/regulator lines) is "tube 3", not a stage.
    const key = `${slot.role === "stage" && slot.section === 0 ? "tube" : slot.role} ${slot.number}`;
    const sides = groups.get(key) ?? [];
    if (slot.side) sides.push(slot.side);
    groups.set(key, sides);
  }
  return [...groups].map(([key, sides]) => (sides.length > 0 ? `${key} ${[...sides].sort().join("+")}` : key)).join(", ");
}

function volts(value: number | null): string {
  return value === null ? "?" : String(value);
}

/** What readings must share to be compared: the quantity and the test conditions (the reading's own over the session's). */
function basisOf(reading: ReadingRow, session: SessionRow | undefined): { value: number | null; basis: string } {
  const conditions = session ? `${volts(session.plateVolts)} V / ${volts(session.gridVolts)} V${session.screenVolts !== null ? ` / screen ${session.screenVolts} V` : ""}` : "unknown conditions";
  if (reading.gmMicroSiemens !== null) return { value: reading.gmMicroSiemens, basis: `gm µS at ${conditions}` };
  if (reading.emissionValue !== null) return { value: reading.emissionValue, basis: `emission of ${reading.emissionFullScale ?? "?"} at ${conditions}` };
  return { value: null, basis: "none" };
}

export class BuildStore {
  constructor(
    private readonly sqlite: Database.Database,
    private readonly catalog: TypeCatalog,
  ) {}

  build(id: number): StoredBuild | null {
    const row = this.sqlite.prepare("SELECT * FROM Build WHERE id = ?").get(id) as (Omit<StoredBuild, "heaterSupplies" | "lines"> & { heaterSupplies: string }) | undefined;
    if (!row) return null;
    const lines = (this.sqlite.prepare("SELECT * FROM BuildLine WHERE buildId = ? ORDER BY position, id").all(id) as Array<Omit<StoredLine, "designation" | "acceptedSubstitutes" | "allowSubstitutes"> & { acceptedSubstitutes: string; allowSubstitutes: number }>).map(
      (line): StoredLine => ({
        ...line,
        designation: this.catalog.get(line.typeId)?.designation ?? `type #${line.typeId}`,
        allowSubstitutes: line.allowSubstitutes === 1,
        acceptedSubstitutes: line.acceptedSubstitutes.split(" ").filter(Boolean),
      }),
    );
    let heaterSupplies: HeaterSupplyPlan[] = [];
    try {
      heaterSupplies = JSON.parse(row.heaterSupplies) as HeaterSupplyPlan[];
    } catch {
      heaterSupplies = [];
    }
    return { ...row, heaterSupplies, lines };
  }

  /** Per build: lines, reserved, installed, and allocated tubes that need attention (same rule as the check's flags). */
  summaries(): Array<{ id: number; name: string; updatedAt: string; lines: number; reserved: number; installed: number; flagged: number; lineText: string }> {
    const builds = this.sqlite.prepare("SELECT id, name, updatedAt FROM Build ORDER BY name COLLATE NOCASE").all() as Array<{ id: number; name: string; updatedAt: string }>;
    const lines = this.sqlite.prepare("SELECT buildId, kind, typeId, count FROM BuildLine ORDER BY buildId, position").all() as Array<{ buildId: number; kind: string; typeId: number; count: number }>;
    const allocations = this.sqlite
      .prepare(
        `SELECT a.buildId, a.status,
           CASE WHEN t.verdict IN ('worn', 'failed') OR t.state NOT IN ('reserved', 'installed') THEN 1 ELSE 0 END AS flagged
         FROM BuildAllocation a JOIN Tube t ON t.id = a.tubeId`,
      )
      .all() as Array<{ buildId: number; status: string; flagged: number }>;
    return builds.map((build) => {
      const own = lines.filter((line) => line.buildId === build.id);
      const allocated = allocations.filter((allocation) => allocation.buildId === build.id);
      return {
        ...build,
        lines: own.length,
        lineText: own.map((line) => `${line.count} × ${this.catalog.get(line.typeId)?.designation ?? "?"} ${line.kind}`).join(", "),
        reserved: allocated.filter((allocation) => allocation.status === "reserved").length,
        installed: allocated.filter((allocation) => allocation.status === "installed").length,
        flagged: allocated.filter((allocation) => allocation.flagged === 1).length,
      };
    });
  }

  /**
   * Tubes with their newest session's balance readings, from one query over `tubeWhereSql`
   * (which names Tube as t). Rows come back as arrays and basis texts are made once per
   * session, so a 20,000-tube stock loads quickly.
   */
  private tubesWithReadings(tubeWhereSql: string, parameters: unknown[]): StockTube[] {
    const sessions = this.sqlite.prepare("SELECT id, plateVolts, gridVolts, screenVolts FROM TestSession ORDER BY date DESC, id DESC").all() as SessionRow[];
    const rank = new Map(sessions.map((session, index) => [session.id, index]));
    const sessionById = new Map(sessions.map((session) => [session.id, session]));
    const basisCache = new Map<string, string>();
    const basisText = (sessionId: number, kind: "gm" | "emission", fullScale: number | null, own: Pick<SessionRow, "plateVolts" | "gridVolts" | "screenVolts">): string => {
      const key = `${sessionId}|${kind}|${fullScale}|${own.plateVolts}|${own.gridVolts}|${own.screenVolts}`;
      let text = basisCache.get(key);
      if (text === undefined) {
        const probe: ReadingRow = { tubeId: 0, sessionId, section: 0, gmMicroSiemens: kind === "gm" ? 1 : null, emissionValue: kind === "emission" ? 1 : null, emissionFullScale: fullScale };
        const session = sessionById.get(sessionId);
        // A reading's own conditions override the session's field by field, as its verdict does.
        const judged = session === undefined ? undefined : { id: session.id, ...mergeTestConditions(session, own) };
        text = basisOf(probe, judged).basis;
        basisCache.set(key, text);
      }
      return text;
    };
    type Row = [number, string, number, string, string, string, number | null, number | null, number | null, number | null, number | null, number | null, number | null, number | null, number | null];
    const rows = this.sqlite
      .prepare(
        `SELECT t.id, t.label, t.typeId, t.location, t.state, t.verdict, t.percent, r.sessionId, r.section, r.gmMicroSiemens, r.emissionValue, r.emissionFullScale,
                r.plateVolts, r.gridVolts, r.screenVolts
         FROM Tube t LEFT JOIN Reading r ON r.tubeId = t.id WHERE ${tubeWhereSql} ORDER BY t.id`,
      )
      .raw()
      .all(...parameters) as Row[];
    const tubes: StockTube[] = [];
    let start = 0;
    while (start < rows.length) {
      let end = start + 1;
      while (end < rows.length && rows[end][0] === rows[start][0]) end++;
      const [id, label, typeId, location, state, verdict, percent] = rows[start];
      let newest: number | null = null;
      for (let index = start; index < end; index++) {
        const sessionId = rows[index][7];
        if (sessionId !== null && (newest === null || (rank.get(sessionId) ?? Infinity) < (rank.get(newest) ?? Infinity))) newest = sessionId;
      }
      const sections: SectionBalanceReading[] = [];
      for (let index = start; index < end && newest !== null; index++) {
        const row = rows[index];
        if (row[7] !== newest) continue;
        const [gm, emission, fullScale] = [row[9], row[10], row[11]];
        const own = { plateVolts: row[12], gridVolts: row[13], screenVolts: row[14] };
        if (gm !== null) sections.push({ section: row[8]!, balanceValue: gm, balanceBasis: basisText(newest, "gm", null, own) });
        else if (emission !== null) sections.push({ section: row[8]!, balanceValue: emission, balanceBasis: basisText(newest, "emission", fullScale, own) });
        else sections.push({ section: row[8]!, balanceValue: null, balanceBasis: "none" });
      }
      sections.sort((left, right) => left.section - right.section);
      tubes.push({ id, label, designation: this.catalog.get(typeId)?.designation ?? `type #${typeId}`, location, verdict, state, percentOfReference: percent, sections });
      start = end;
    }
    return tubes;
  }

  /** Tubes any build may take: good, in stock, allocated to no build (only of the given types when named). */
  freeStock(typeIds?: number[]): StockTube[] {
    const free = "t.state = 'stock' AND t.verdict = 'good' AND NOT EXISTS (SELECT 1 FROM BuildAllocation a WHERE a.tubeId = t.id)";
    if (typeIds === undefined) return this.tubesWithReadings(free, []);
    if (typeIds.length === 0) return [];
    return this.tubesWithReadings(`${free} AND t.typeId IN (${typeIds.map(() => "?").join(", ")})`, typeIds);
  }

  /** The build's allocated tubes with their slots and newest readings. */
  allocations(buildId: number): AllocatedTube[] {
    const rows = this.sqlite.prepare("SELECT id AS allocationId, lineId, tubeId, slots, status FROM BuildAllocation WHERE buildId = ? ORDER BY id").all(buildId) as Array<{ allocationId: number; lineId: number; tubeId: number; slots: string; status: string }>;
    const tubes = new Map(this.tubesWithReadings("t.id IN (SELECT tubeId FROM BuildAllocation WHERE buildId = ?)", [buildId]).map((tube) => [tube.id, tube]));
    return rows.flatMap((row) => {
      const tube = tubes.get(row.tubeId);
      if (!tube) return [];
      return [{ ...tube, allocationId: row.allocationId, lineKey: String(row.lineId), status: row.status === "installed" ? ("installed" as const) : ("reserved" as const), slots: parseSlots(row.slots) }];
    });
  }

  /** Allocations with what the pick list and the install form show. */
  allocationRows(buildId: number): Array<{ allocationId: number; lineId: number; tubeId: number; label: string; typeId: number; location: string; state: string; verdict: string; status: string; position: string; slots: AllocationSlot[] }> {
    const rows = this.sqlite
      .prepare(
        `SELECT a.id AS allocationId, a.lineId, a.slots, a.status, a.position, t.id AS tubeId, t.label, t.typeId, t.location, t.state, t.verdict
         FROM BuildAllocation a JOIN Tube t ON t.id = a.tubeId WHERE a.buildId = ?`,
      )
      .all(buildId) as Array<{ allocationId: number; lineId: number; slots: string; status: string; position: string; tubeId: number; label: string; typeId: number; location: string; state: string; verdict: string }>;
    return rows.map((row) => ({ ...row, slots: parseSlots(row.slots) }));
  }
}
