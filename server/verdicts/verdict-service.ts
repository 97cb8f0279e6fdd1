/**
 * Applies the verdict engine to stored readings. Each tube's `verdict`/`percent` columns cache
 * the evaluation of its newest session, so the stock list can filter by verdict through an index;
 * they are recomputed whenever that tube's readings or the thresholds change.
 */
import type Database from "better-sqlite3";
import type { TypeCatalog } from "../types/type-catalog.ts";
import type { SettingsService } from "../settings/settings-service.ts";
import { evaluateTube, mergeTestConditions, type SectionReading, type TestConditions, type TubeResult, type VerdictThresholds } from "../engine/verdicts/index.ts";
import { formatQuantity } from "../engine/units/index.ts";
import { bulkWriteGate } from "../db/write-gate.ts";
import type { TubeTypeSpec } from "../engine/tube-types/index.ts";

export interface StoredReading {
  section: number;
  gmMicroSiemens: number | null;
  plateMilliamps: number | null;
  emissionValue: number | null;
  emissionPassMark: number | null;
  emissionFullScale: number | null;
  gridMicroamps: number | null;
  leakageMicroamps: number | null;
  shorts: string;
  heaterOpen: boolean | number;
  /** The reading's own conditions (null: the session's); optional so rows read without them still judge. */
  heaterVolts?: number | null;
  plateVolts?: number | null;
  screenVolts?: number | null;
  gridVolts?: number | null;
}

export interface StoredConditions {
  heaterVolts: number | null;
  plateVolts: number | null;
  screenVolts: number | null;
  gridVolts: number | null;
}

/** The reading's own conditions, or null when it gives none (it was read at the session's). */
export function ownConditions(reading: StoredReading): StoredConditions | null {
  const own = {
    heaterVolts: reading.heaterVolts ?? null,
    plateVolts: reading.plateVolts ?? null,
    screenVolts: reading.screenVolts ?? null,
    gridVolts: reading.gridVolts ?? null,
  };
  return own.heaterVolts === null && own.plateVolts === null && own.screenVolts === null && own.gridVolts === null ? null : own;
}

/**
 * The conditions a reading is judged at. Rule: the reading's own conditions override the
 * session's field by field — a reading that gives only plate volts takes grid, screen and heater
 * volts from its session (testers are usually re-set one knob at a time per type; see
 * mergeTestConditions in the verdicts engine, which applies the same rule while judging).
 */
export function judgedConditions(session: StoredConditions, reading: StoredReading): StoredConditions {
  return mergeTestConditions(session, ownConditions(reading));
}

/** "plate 250 V, grid −8.5 V, screen 150 V, heater 6.3 V" — only the recorded fields; "none recorded" otherwise. */
export function describeConditions(conditions: StoredConditions): string {
  const volts = (value: number) => formatQuantity(value, "volts");
  const parts = [
    conditions.plateVolts !== null ? `plate ${volts(conditions.plateVolts)}` : "",
    conditions.gridVolts !== null ? `grid ${volts(conditions.gridVolts)}` : "",
    conditions.screenVolts !== null ? `screen ${volts(conditions.screenVolts)}` : "",
    conditions.heaterVolts !== null ? `heater ${volts(conditions.heaterVolts)}` : "",
  ].filter(Boolean);
  return parts.length ? parts.join(", ") : "none recorded";
}

/**
 * Display text of the conditions a reading was judged at, and whether they are its own (at
 * least one field set on the reading) or the session's.
 */
export function presentJudgedConditions(session: StoredConditions, reading: StoredReading): { own: boolean; text: string; sourceText: string } {
  const own = ownConditions(reading) !== null;
  return { own, text: describeConditions(judgedConditions(session, reading)), sourceText: own ? "own" : "session" };
}

export function toSectionReading(reading: StoredReading): SectionReading {
  return {
    section: reading.section,
    conditions: ownConditions(reading),
    transconductanceMicroSiemens: reading.gmMicroSiemens,
    plateMilliamps: reading.plateMilliamps,
    emission:
      reading.emissionValue !== null && reading.emissionPassMark !== null && reading.emissionFullScale !== null
        ? { value: reading.emissionValue, passMark: reading.emissionPassMark, fullScale: reading.emissionFullScale }
        : null,
    gridCurrentMicroamps: reading.gridMicroamps,
    leakageMicroamps: reading.leakageMicroamps,
    shorts: reading.shorts ? reading.shorts.split(",").filter(Boolean) : [],
    heaterOpen: reading.heaterOpen === true || reading.heaterOpen === 1,
  };
}

export function toConditions(session: StoredConditions): TestConditions {
  return { heaterVolts: session.heaterVolts, plateVolts: session.plateVolts, screenVolts: session.screenVolts, gridVolts: session.gridVolts };
}

/**
 * Judges one tube's readings of one session, each reading at its own conditions where it has
 * them (field by field over the session's; see {@link judgedConditions}). Stored readings were validated on entry, so an
 * engine refusal here means data changed underneath (e.g. a type lost a section): the tube is
 * then shown as untested with the engine's reason rather than failing the page.
 */
export function judgeTube(spec: TubeTypeSpec, conditions: StoredConditions, readings: StoredReading[], thresholds: VerdictThresholds): TubeResult {
  const result = evaluateTube(spec.sections, toConditions(conditions), readings.map(toSectionReading), thresholds, { heater: spec.heater });
  if (result.ok) return result;
  return { sections: [], balancePercent: null, balanceBasis: null, balanceOk: null, unbalanced: false, verdict: "untested", reasons: [result.reason] };
}

/** The lowest percent-of-reference over the sections, or null when none was comparable. */
export function lowestPercent(result: TubeResult): number | null {
  const values = result.sections.map((s) => s.percentOfReference).filter((p): p is number => p !== null);
  return values.length ? Math.min(...values) : null;
}

/** Adds display text (rounded percent, balance) to an evaluation, so templates only print. */
export function presentEvaluation(result: TubeResult) {
  return {
    ...result,
    sections: result.sections.map((section) => ({
      ...section,
      percentText: section.percentOfReference === null ? "" : `${Math.round(section.percentOfReference)} %`,
    })),
    balanceText: result.balancePercent === null ? "" : `sections differ by ${result.balancePercent.toFixed(1)} %`,
  };
}


export class VerdictService {
  constructor(
    private readonly sqlite: Database.Database,
    private readonly catalog: TypeCatalog,
    private readonly settings: SettingsService,
  ) {}

  thresholds(): Promise<VerdictThresholds> {
    return this.settings.thresholds();
  }

  evaluate(spec: TubeTypeSpec, conditions: StoredConditions, readings: StoredReading[], thresholds: VerdictThresholds) {
    return presentEvaluation(judgeTube(spec, conditions, readings, thresholds));
  }

  /**
   * Recomputes the cached verdict of the given tubes (or all tubes) from their newest session.
   * Runs in its own transaction unless the caller is already inside one on this connection.
   */
  async recompute(tubeIds?: number[]): Promise<void> {
    // Not inside an import's or a restore's transaction: wait until it has ended.
    await bulkWriteGate(this.sqlite).idle();
    const thresholds = await this.settings.thresholds();
    this.recomputeWith(thresholds, tubeIds);
  }

  recomputeWith(thresholds: VerdictThresholds, tubeIds?: number[]): void {
    const all = !tubeIds || tubeIds.length > 400;
    if (tubeIds && tubeIds.length === 0) return;
    // Sessions are few: rank them newest first in memory, so the readings need no sorted join.
    const sessions = this.sqlite
      .prepare("SELECT id, heaterVolts, plateVolts, screenVolts, gridVolts FROM TestSession ORDER BY date DESC, id DESC")
      .all() as Array<StoredConditions & { id: number }>;
    const sessionRank = new Map(sessions.map((session, rank) => [session.id, rank]));
    const sessionById = new Map(sessions.map((session) => [session.id, session]));
    const where = all ? "" : `WHERE tubeId IN (${tubeIds!.map(() => "?").join(",")}) `;
    const readings = this.sqlite
      .prepare(
        `SELECT tubeId, sessionId, section, gmMicroSiemens, plateMilliamps, emissionValue, emissionPassMark, emissionFullScale,
                gridMicroamps, leakageMicroamps, shorts, heaterOpen, heaterVolts, plateVolts, screenVolts, gridVolts
           FROM Reading ${where}ORDER BY tubeId`,
      )
      .all(...(all ? [] : tubeIds!)) as Array<StoredReading & { tubeId: number; sessionId: number }>;
    const typeOfTube = new Map(
      (this.sqlite.prepare(`SELECT id, typeId FROM Tube ${all ? "" : `WHERE id IN (${tubeIds!.map(() => "?").join(",")})`}`).all(...(all ? [] : tubeIds!)) as Array<{ id: number; typeId: number }>).map((row) => [row.id, row.typeId]),
    );
    const updates: Array<[string, number | null, number]> = [];
    const judge = (group: Array<StoredReading & { tubeId: number; sessionId: number }>) => {
      // Only the newest session of each tube counts.
      let newest = group[0].sessionId;
      for (const reading of group) if (sessionRank.get(reading.sessionId)! < sessionRank.get(newest)!) newest = reading.sessionId;
      const spec = this.catalog.get(typeOfTube.get(group[0].tubeId)!)?.spec;
      if (!spec) return;
      const result = judgeTube(spec, sessionById.get(newest)!, group.filter((reading) => reading.sessionId === newest).sort((a, b) => a.section - b.section), thresholds);
      updates.push([result.verdict, lowestPercent(result), group[0].tubeId]);
    };
    let start = 0;
    for (let index = 1; index <= readings.length; index++) {
      if (index === readings.length || readings[index].tubeId !== readings[start].tubeId) {
        judge(readings.slice(start, index));
        start = index;
      }
    }
    const update = this.sqlite.prepare("UPDATE Tube SET verdict = ?, percent = ? WHERE id = ?");
    const run = () => {
      if (all) this.sqlite.prepare("UPDATE Tube SET verdict = 'untested', percent = NULL WHERE verdict <> 'untested' OR percent IS NOT NULL").run();
      else for (const id of tubeIds!) update.run("untested", null, id);
      for (const values of updates) update.run(...values);
    };
    if (this.sqlite.inTransaction) run();
    else this.sqlite.transaction(run)();
  }
}
