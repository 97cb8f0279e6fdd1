/**
 * Reserve, release, install and swap: each one write transaction on the raw connection, taken
 * with BEGIN IMMEDIATE so the check that decides which tubes to allocate runs on exactly the
 * rows it then writes. Two reservations racing for the same tubes are serialised by SQLite's
 * write lock, and the unique BuildAllocation.tubeId would refuse a second allocation anyway.
 * Any failure rolls the whole transaction back: nothing is half-reserved.
 */
import type Database from "better-sqlite3";
import { checkBuild, type PlannedTube } from "../engine/build-check/index.ts";
import { sqlTimestamp } from "../db/sql-time.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import type { TubeTypeSpec } from "../engine/tube-types/index.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import { checkInputOf, type BuildResult } from "./build-service.ts";
import { slotText, type BuildStore } from "./build-store.ts";

/** Thrown inside a transaction to roll it back with a message for the user. */
class Refusal extends Error {
  constructor(
    readonly status: number,
    readonly errors: FieldErrors,
  ) {
    super(Object.values(errors).join("; "));
  }
}

export interface ReservedTube {
  tubeId: number;
  label: string;
  line: string;
  slots: string;
}

function isConstraintError(error: unknown): boolean {
  return typeof (error as { code?: unknown })?.code === "string" && (error as { code: string }).code.startsWith("SQLITE_CONSTRAINT");
}

export class Reservations {
  constructor(
    private readonly sqlite: Database.Database,
    private readonly store: BuildStore,
    private readonly library: () => TubeTypeSpec[],
    private readonly catalog: TypeCatalog,
  ) {}

  private run<T>(work: () => T): BuildResult<T> {
    // An import or restore holds the raw connection's transaction: joining it would tie this
    // change to that one's fate, so refuse and let the owner try again.
    if (this.sqlite.inTransaction) {
      return { ok: false, errors: { _form: "An import or restore is being saved right now; nothing was changed — try again in a moment" }, status: 409 };
    }
    try {
      return { ok: true, value: this.sqlite.transaction(work).immediate() };
    } catch (error) {
      if (error instanceof Refusal) return { ok: false, errors: error.errors, status: error.status };
      if (isConstraintError(error)) return { ok: false, errors: { _form: "Another reservation took some of these tubes at the same moment; nothing was changed — check again" }, status: 409 };
      throw error;
    }
  }

  private buildName(buildId: number): string {
    const row = this.sqlite.prepare("SELECT name FROM Build WHERE id = ?").get(buildId) as { name: string } | undefined;
    if (!row) throw new Refusal(404, { _form: "Build not found" });
    return row.name;
  }

  /**
   * Allocates every tube the check plans for the build's missing stages and spares, in one
   * transaction. Refused (409, nothing written) when a line is still short of stages or has a
   * problem: a reservation never leaves a build half-covered.
   */
  reserve(buildId: number): BuildResult<{ reserved: ReservedTube[] }> {
    return this.run(() => {
      const build = this.store.build(buildId);
      if (!build) throw new Refusal(404, { _form: "Build not found" });
      const result = checkBuild(checkInputOf(build, this.store, this.library(), this.catalog, true));
      const blocking = result.lines.filter((line) => line.shortfallStages > 0 || line.problems.length > 0);
      if (blocking.length > 0) {
        const why = blocking.map((line) => (line.problems.length > 0 ? line.problems.join("; ") : `${line.label} is ${line.shortfallStages} ${line.kind === "rectifier" ? "tubes" : "stages"} short`)).join("; ");
        throw new Refusal(409, { _form: `Nothing reserved: ${why}. Accept a substitute, buy tubes or change the plan, then reserve again.` });
      }
      const now = sqlTimestamp();
      const labels = new Map(result.lines.map((line) => [line.key, line.label]));
      const insert = this.sqlite.prepare("INSERT INTO BuildAllocation (buildId, lineId, tubeId, slots, status, position, createdAt) VALUES (?, ?, ?, ?, 'reserved', '', ?)");
      const claim = this.sqlite.prepare("UPDATE Tube SET state = 'reserved', updatedAt = ? WHERE id = ? AND state = 'stock' AND verdict = 'good'");
      const event = this.sqlite.prepare("INSERT INTO TubeEvent (tubeId, at, kind, fromValue, toValue, note) VALUES (?, ?, 'state', 'stock', 'reserved', ?)");
      const reserved: ReservedTube[] = result.reservationPlan.map((tube: PlannedTube) => {
        insert.run(buildId, Number(tube.lineKey), tube.tubeId, JSON.stringify(tube.slots), now);
        if (claim.run(now, tube.tubeId).changes !== 1) throw new Refusal(409, { _form: `Tube ${tube.label} is no longer good and in stock; nothing was changed — check again` });
        const line = labels.get(tube.lineKey) ?? "a line";
        event.run(tube.tubeId, now, `reserved for build "${build.name}", ${line}: ${slotText(tube.slots)}`);
        return { tubeId: tube.tubeId, label: tube.label, line, slots: slotText(tube.slots) };
      });
      return { reserved };
    });
  }

  /** Returns every reserved (not installed) tube of the build to stock, in one transaction. */
  release(buildId: number): BuildResult<{ released: number }> {
    return this.run(() => {
      const name = this.buildName(buildId);
      const now = sqlTimestamp();
      const rows = this.sqlite.prepare("SELECT a.id, a.tubeId, t.state FROM BuildAllocation a JOIN Tube t ON t.id = a.tubeId WHERE a.buildId = ? AND a.status = 'reserved'").all(buildId) as Array<{ id: number; tubeId: number; state: string }>;
      const remove = this.sqlite.prepare("DELETE FROM BuildAllocation WHERE id = ?");
      const back = this.sqlite.prepare("UPDATE Tube SET state = 'stock', updatedAt = ? WHERE id = ? AND state = 'reserved'");
      const event = this.sqlite.prepare("INSERT INTO TubeEvent (tubeId, at, kind, fromValue, toValue, note) VALUES (?, ?, 'state', 'reserved', 'stock', ?)");
      for (const row of rows) {
        remove.run(row.id);
        if (back.run(now, row.tubeId).changes === 1) event.run(row.tubeId, now, `released from build "${name}"`);
      }
      return { released: rows.length };
    });
  }

  /** Marks reserved tubes installed, recording where each went (the position text) in one transaction. */
  install(buildId: number, rows: Array<{ allocationId: number; position: string }>): BuildResult<{ installed: number }> {
    return this.run(() => {
      const name = this.buildName(buildId);
      const now = sqlTimestamp();
      const find = this.sqlite.prepare("SELECT a.id, a.tubeId, a.status, t.location, t.state FROM BuildAllocation a JOIN Tube t ON t.id = a.tubeId WHERE a.id = ? AND a.buildId = ?");
      const errors: FieldErrors = {};
      const found = rows.map((row) => {
        const allocation = find.get(row.allocationId, buildId) as { id: number; tubeId: number; status: string; location: string; state: string } | undefined;
        if (!allocation) errors[`position.${row.allocationId}`] = "Position: not a tube of this build";
        else if (allocation.status !== "reserved") errors[`position.${row.allocationId}`] = "Position: this tube is already installed";
        return { row, allocation };
      });
      if (Object.keys(errors).length > 0) throw new Refusal(422, errors);
      const mark = this.sqlite.prepare("UPDATE BuildAllocation SET status = 'installed', position = ?, installedAt = ? WHERE id = ?");
      const tube = this.sqlite.prepare("UPDATE Tube SET state = 'installed', location = ?, updatedAt = ? WHERE id = ?");
      const event = this.sqlite.prepare("INSERT INTO TubeEvent (tubeId, at, kind, fromValue, toValue, note) VALUES (?, ?, ?, ?, ?, ?)");
      for (const { row, allocation } of found) {
        const place = `${name}: ${row.position}`;
        mark.run(row.position, now, allocation!.id);
        tube.run(place, now, allocation!.tubeId);
        event.run(allocation!.tubeId, now, "state", allocation!.state, "installed", `installed in build "${name}" at ${row.position}`);
        event.run(allocation!.tubeId, now, "location", allocation!.location, place, `installed in build "${name}"`);
      }
      return { installed: found.length };
    });
  }

  /**
   * Swaps a flagged allocated tube for the replacement the check proposes: the replacement takes
   * its slots (on the sections that match best) as reserved, the old tube goes back to stock.
   * Refused (409, nothing changed) when the tube is not flagged or the proposal is no longer that
   * tube — the stock moved since the page was drawn.
   */
  swap(buildId: number, allocationId: number, replacementTubeId: number): BuildResult<{ label: string; replacementLabel: string }> {
    return this.run(() => {
      const build = this.store.build(buildId);
      if (!build) throw new Refusal(404, { _form: "Build not found" });
      const result = checkBuild(checkInputOf(build, this.store, this.library(), this.catalog, true));
      const flagged = result.flagged.find((tube) => tube.allocationId === allocationId);
      if (!flagged) throw new Refusal(409, { allocationId: "Allocation: that tube is not flagged in this build (it reads good, or it was swapped already)" });
      const replacement = flagged.replacement;
      if (!replacement || replacement.tubeId !== replacementTubeId) {
        throw new Refusal(409, { tubeId: `Replacement: the stock changed and the proposal for ${flagged.label} is now ${replacement ? replacement.label : "none"}; check again` });
      }
      const now = sqlTimestamp();
      const lineId = Number(flagged.lineKey);
      this.sqlite.prepare("DELETE FROM BuildAllocation WHERE id = ?").run(allocationId);
      this.sqlite.prepare("INSERT INTO BuildAllocation (buildId, lineId, tubeId, slots, status, position, createdAt) VALUES (?, ?, ?, ?, 'reserved', '', ?)").run(buildId, lineId, replacement.tubeId, JSON.stringify(replacement.slots), now);
      if (this.sqlite.prepare("UPDATE Tube SET state = 'reserved', updatedAt = ? WHERE id = ? AND state = 'stock' AND verdict = 'good'").run(now, replacement.tubeId).changes !== 1) {
        throw new Refusal(409, { tubeId: `Replacement: ${replacement.label} is no longer good and in stock; check again` });
      }
      const event = this.sqlite.prepare("INSERT INTO TubeEvent (tubeId, at, kind, fromValue, toValue, note) VALUES (?, ?, 'state', ?, ?, ?)");
      event.run(replacement.tubeId, now, "stock", "reserved", `reserved for build "${build.name}" in place of ${flagged.label}: ${slotText(replacement.slots)}`);
      if (flagged.state === "reserved" || flagged.state === "installed") {
        this.sqlite.prepare("UPDATE Tube SET state = 'stock', updatedAt = ? WHERE id = ?").run(now, flagged.tubeId);
        event.run(flagged.tubeId, now, flagged.state, "stock", `swapped out of build "${build.name}" for ${replacement.label} (${flagged.reason})`);
      }
      return { label: flagged.label, replacementLabel: replacement.label };
    });
  }
}
