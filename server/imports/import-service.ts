/**
 * CSV import of tester readings: receive a file, map its columns (remembered per instrument),
 * preview every problem, then save all or nothing in one transaction on the raw SQLite
 * connection — in chunks, yielding between them, so a page can watch a 100,000-row commit.
 */
import { createHash } from "node:crypto";
import { withLabelSearchDeferred } from "../db/label-search.ts";
import { bulkWriteGate } from "../db/write-gate.ts";
import type Database from "better-sqlite3";
import type { TypeCatalog } from "../types/type-catalog.ts";
import type { VerdictService } from "../verdicts/verdict-service.ts";
import type { SessionService, SessionConditions } from "../sessions/session-service.ts";
import { parseConditions } from "../sessions/session-service.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import { parseWith } from "../schemas/form-parsing.ts";
import { sessionInputSchema } from "../schemas/session-schemas.ts";
import { sqlTimestamp } from "../db/sql-time.ts";
import { formatQuantity, formatTransconductance } from "../engine/units/index.ts";
import { describeConditions } from "../verdicts/verdict-service.ts";
import { BoundedStore } from "./bounded-store.ts";
import { decodeUpload, readCsvText, DELIMITER_NAMES, type CsvTable } from "./csv-table.ts";
import {
  applyStoredMapping, checkMapping, guessMapping, parseMappingJson, parseStoredMapping, toStoredMapping,
  FIELD_LABELS, GM_UNIT_NAMES, IMPORT_FIELDS, type ColumnMapping, type ImportFieldKey,
} from "./import-fields.ts";
import { planImport, type ImportPlan, type ImportProblem, type PlanLookups } from "./plan-import.ts";
import { sessionPickSchema, type ImportApiQuery } from "./import-schemas.ts";

/** Uploads wait this long for their mapping and commit (the page says so). */
export const UPLOAD_MAX_AGE_MILLISECONDS = 60 * 60 * 1000;
/** A 100,000-row upload holds some tens of MB as parsed cells; a few at once is plenty for one bench. */
export const MAX_PENDING_UPLOADS = 4;
const MAX_JOBS = 20;
/** Rows written between two yields to the event loop: small enough for a smooth bar, large enough to stay fast. */
export const COMMIT_CHUNK_ROWS = 2500;

/**
 * From this many new tubes the label-search index is rebuilt once instead of fed a row at a time
 * by its trigger: about 60 µs a row by trigger against about 3 µs a tube for a rebuild of the
 * whole stock (measured on the development machine, 2026-12-02), so past roughly a twentieth of
 * a large stock the rebuild wins.
 */
export const BULK_LABEL_INDEX_TUBES = 1000;
/** Problems shown (and returned by the API); the count is always exact. */
export const PROBLEM_DISPLAY_LIMIT = 500;
const SAMPLE_ROWS = 20;
/** Tubes per verdict recompute call: the verdict service takes up to 400 ids by index, above that it redoes every tube. */
const VERDICT_CHUNK_TUBES = 400;

export type SessionTarget =
  | { kind: "existing"; sessionId: number; date: string; instrument: string; conditionsText: string }
  | { kind: "new"; date: string; instrument: string; conditions: SessionConditions; notes: string; conditionsText: string };

export interface PendingUpload {
  fileName: string;
  fileHash: string;
  table: CsvTable;
  instrument: string;
  target: SessionTarget;
  mapping: ColumnMapping | null;
  preview: ImportPreview | null;
  jobId: string | null;
  uploadedAt: Date;
}

export interface PriorImport {
  importedAt: string;
  fileName: string;
  sessionId: number;
  sessionDate: string;
  instrument: string;
}

export interface SampleRow {
  row: number;
  label: string;
  type: string;
  isNew: boolean;
  section: number;
  gm: string;
  plate: string;
  emission: string;
  gas: string;
  leakage: string;
  shorts: string;
  heaterOpen: string;
  noise: string;
  /** The row's own conditions as display text; "session's" when it gives none. */
  conditions: string;
}

export interface ImportPreview {
  rows: number;
  readings: number;
  newTubes: number;
  updatedTubes: number;
  replacedReadings: number;
  problemCount: number;
  problems: ImportProblem[];
  sample: SampleRow[];
  alreadyImported: PriorImport | null;
  canCommit: boolean;
  mappingRows: Array<{ field: string; column: string }>;
  countsText: Record<"rows" | "readings" | "newTubes" | "updatedTubes" | "replacedReadings" | "problems", string>;
  countsLabel: Record<"rows" | "readings" | "newTubes" | "updatedTubes" | "replacedReadings" | "problems", string>;
  problemsShownText: string;
}

export type CommitOutcome =
  | { ok: true; sessionId: number; rows: number; readings: number; newTubes: number; updatedTubes: number; replacedReadings: number; seconds: number }
  | { ok: false; kind: "problems"; message: string; problemCount: number; problems: ImportProblem[] }
  | { ok: false; kind: "duplicate"; message: string; prior: PriorImport }
  | { ok: false; kind: "session"; message: string };

export interface ImportJob {
  uploadId: string;
  fileName: string;
  state: "running" | "done" | "failed";
  phase: "waiting" | "checking" | "tubes" | "readings" | "verdicts" | "finished";
  done: number;
  total: number;
  outcome: CommitOutcome | null;
  startedAt: number;
}

export interface CommitInput {
  table: CsvTable;
  mapping: ColumnMapping;
  target: SessionTarget;
  fileName: string;
  fileHash: string;
}

type Progress = (phase: ImportJob["phase"], done: number, total: number) => void;

const yieldToEventLoop = () => new Promise<void>((resolve) => setImmediate(resolve));

export function sha256(bytes: Uint8Array | string): string {
  return createHash("sha256").update(bytes).digest("hex");
}

function conditionsText(c: { plateVolts: number | null; gridVolts: number | null; screenVolts: number | null; heaterVolts: number | null }): string {
  const parts = [
    c.plateVolts !== null ? `plate ${c.plateVolts} V` : "",
    c.gridVolts !== null ? `grid ${c.gridVolts} V` : "",
    c.screenVolts !== null ? `screen ${c.screenVolts} V` : "",
    c.heaterVolts !== null ? `heater ${c.heaterVolts} V` : "",
  ].filter(Boolean);
  return parts.length ? parts.join(", ") : "no conditions recorded";
}

export class ImportService {
  readonly uploads = new BoundedStore<PendingUpload>(MAX_PENDING_UPLOADS, UPLOAD_MAX_AGE_MILLISECONDS);
  readonly jobs = new BoundedStore<ImportJob>(MAX_JOBS, UPLOAD_MAX_AGE_MILLISECONDS);
  /** Commits run one at a time: the raw connection holds one transaction. */
  private commitQueue: Promise<unknown> = Promise.resolve();

  constructor(
    private readonly sqlite: Database.Database,
    private readonly catalog: TypeCatalog,
    private readonly sessions: SessionService,
    private readonly verdicts: VerdictService,
    private readonly logError: (error: unknown, message: string) => void = () => {},
  ) {}

  // ── Upload ──────────────────────────────────────────────────────────────────────────────

  /** The session the upload goes into: an existing one, or a new one from date and conditions. */
  async resolveTarget(fields: Record<string, unknown>): Promise<{ ok: true; target: SessionTarget; instrument: string } | { ok: false; errors: FieldErrors }> {
    const picked = parseWith(sessionPickSchema, fields);
    if (!picked.ok) return picked;
    if (picked.data.sessionId !== undefined) {
      const session = await this.sessions.get(picked.data.sessionId);
      if (!session) return { ok: false, errors: { sessionId: `Session: there is no session #${picked.data.sessionId}` } };
      return {
        ok: true,
        instrument: picked.data.instrument ?? session.instrument,
        target: { kind: "existing", sessionId: session.id, date: session.date, instrument: session.instrument, conditionsText: conditionsText(session) },
      };
    }
    // Check the conditions even when the date or instrument is wrong, so every message shows at once.
    const parsed = parseWith(sessionInputSchema, fields);
    const text = (key: string) => (typeof fields[key] === "string" && (fields[key] as string).trim() !== "" ? (fields[key] as string).trim() : undefined);
    const conditions = parseConditions({ heaterVolts: text("heaterVolts"), plateVolts: text("plateVolts"), screenVolts: text("screenVolts"), gridVolts: text("gridVolts") });
    if (!parsed.ok || !conditions.ok) return { ok: false, errors: { ...(parsed.ok ? {} : parsed.errors), ...(conditions.ok ? {} : conditions.errors) } };
    return {
      ok: true,
      instrument: parsed.data.instrument,
      target: { kind: "new", date: parsed.data.date, instrument: parsed.data.instrument, conditions: conditions.value, notes: parsed.data.notes ?? "", conditionsText: conditionsText(conditions.value) },
    };
  }

  /** Checks the file and the target session, then keeps the upload for the mapping step. */
  async receiveUpload(input: { bytes: Uint8Array | undefined; fileName: string; fields: Record<string, unknown> }): Promise<{ ok: true; uploadId: string } | { ok: false; errors: FieldErrors }> {
    const errors: FieldErrors = {};
    let table: CsvTable | null = null;
    if (!input.bytes || input.bytes.length === 0) {
      errors.file = input.bytes && input.fileName ? `File: ${input.fileName} is empty.` : "File: choose a CSV file to upload.";
    } else {
      const decoded = decodeUpload(input.bytes);
      const read = decoded.ok ? readCsvText(decoded.text) : decoded;
      if (read.ok) table = read.table;
      else errors.file = `File: ${read.reason}`;
    }
    const target = await this.resolveTarget(input.fields);
    if (!target.ok) Object.assign(errors, target.errors);
    if (!table || !target.ok) return { ok: false, errors };
    const uploadId = this.uploads.add({
      fileName: input.fileName || "upload.csv", fileHash: sha256(input.bytes!), table, instrument: target.instrument, target: target.target,
      mapping: null, preview: null, jobId: null, uploadedAt: new Date(),
    });
    return { ok: true, uploadId };
  }

  describeUpload(upload: PendingUpload) {
    const t = upload.target;
    return {
      fileName: upload.fileName,
      rowCount: upload.table.rows.length,
      rowsText: upload.table.rows.length.toLocaleString("en"),
      columnCount: upload.table.headers.length,
      delimiterName: DELIMITER_NAMES[upload.table.delimiter],
      instrument: upload.instrument,
      sessionText: t.kind === "existing" ? `existing session ${t.date} (${t.instrument}), ${t.conditionsText}` : `a new session ${t.date} (${t.instrument}), ${t.conditionsText}`,
      sessionId: t.kind === "existing" ? t.sessionId : null,
    };
  }

  // ── Mapping ─────────────────────────────────────────────────────────────────────────────

  async rememberedMapping(instrument: string) {
    const row = this.sqlite.prepare("SELECT mapping FROM ImportMapping WHERE instrument = ?").get(instrument) as { mapping: string } | undefined;
    return row ? parseStoredMapping(row.mapping) : null;
  }

  /**
   * Saves the mapping for the instrument on the raw connection, after any commit in progress: a
   * write through the other connection would wait on the commit's lock while blocking the very
   * event loop the commit needs to finish.
   */
  async rememberMapping(instrument: string, mapping: ColumnMapping, headers: readonly string[]): Promise<void> {
    await this.commitQueue;
    this.sqlite
      .prepare("INSERT INTO ImportMapping (instrument, mapping) VALUES (?, ?) ON CONFLICT(instrument) DO UPDATE SET mapping = excluded.mapping")
      .run(instrument, JSON.stringify(toStoredMapping(mapping, headers)));
  }

  /** The mapping to preselect: what the user chose last for this file, else the instrument's remembered one, else a guess. */
  async initialMapping(upload: PendingUpload): Promise<{ mapping: ColumnMapping; source: "this file" | "remembered" | "guessed" }> {
    if (upload.mapping) return { mapping: upload.mapping, source: "this file" };
    const stored = await this.rememberedMapping(upload.instrument);
    if (stored) return { mapping: applyStoredMapping(stored, upload.table.headers), source: "remembered" };
    return { mapping: guessMapping(upload.table.headers), source: "guessed" };
  }

  /** Display rows for the mapping form: each field with its options and the selected column. */
  mappingForm(upload: PendingUpload, mapping: ColumnMapping, formValues?: Record<string, unknown>) {
    const sampleCells = upload.table.rows.slice(0, 3);
    const columns = upload.table.headers.map((name, index) => ({
      index: String(index),
      name,
      example: sampleCells.map((cells) => cells[index] ?? "").filter(Boolean).slice(0, 2).join(" · "),
    }));
    const fields = IMPORT_FIELDS.map((field) => {
      const fromForm = formValues?.[`col_${field.key}`];
      const selected = typeof fromForm === "string" ? fromForm : mapping.columns[field.key] !== undefined ? String(mapping.columns[field.key]) : "";
      return { ...field, name: `col_${field.key}`, selected };
    });
    const gmUnit = typeof formValues?.gmUnit === "string" ? formValues.gmUnit : mapping.gmUnit;
    return { columns, fields, gmUnit, gmUnits: Object.entries(GM_UNIT_NAMES).map(([value, name]) => ({ value, name })) };
  }

  // ── Preview ─────────────────────────────────────────────────────────────────────────────

  private lookups(sessionId: number | null): PlanLookups {
    const tubes = new Map<string, { id: number; typeId: number }>();
    for (const tube of this.sqlite.prepare("SELECT id, label, typeId FROM Tube").iterate() as IterableIterator<{ id: number; label: string; typeId: number }>) {
      tubes.set(tube.label, { id: tube.id, typeId: tube.typeId });
    }
    const sessionReadingKeys = new Set<string>();
    if (sessionId !== null) {
      for (const r of this.sqlite.prepare("SELECT tubeId, section FROM Reading WHERE sessionId = ?").iterate(sessionId) as IterableIterator<{ tubeId: number; section: number }>) {
        sessionReadingKeys.add(`${r.tubeId}:${r.section}`);
      }
    }
    return {
      tubeByLabel: (label) => tubes.get(label),
      resolveType: (name) => {
        const entry = this.catalog.resolve(name);
        return entry ? { id: entry.id, designation: entry.designation, sectionCount: entry.spec.sections.length } : undefined;
      },
      typeById: (id) => {
        const entry = this.catalog.get(id);
        return entry ? { designation: entry.designation, sectionCount: entry.spec.sections.length } : undefined;
      },
      sessionReadingKeys,
    };
  }

  plan(table: CsvTable, mapping: ColumnMapping, target: SessionTarget): ImportPlan {
    return planImport(table, mapping, this.lookups(target.kind === "existing" ? target.sessionId : null), PROBLEM_DISPLAY_LIMIT);
  }

  findImportedFile(fileHash: string): PriorImport | null {
    const row = this.sqlite
      .prepare("SELECT b.createdAt, b.fileName, b.sessionId, s.date, s.instrument FROM ImportBatch b JOIN TestSession s ON s.id = b.sessionId WHERE b.fileHash = ?")
      .get(fileHash) as { createdAt: string | number; fileName: string; sessionId: number; date: string; instrument: string } | undefined;
    if (!row) return null;
    const importedAt = typeof row.createdAt === "number" ? new Date(row.createdAt).toISOString() : row.createdAt;
    return { importedAt: importedAt.slice(0, 16).replace("T", " "), fileName: row.fileName, sessionId: row.sessionId, sessionDate: row.date, instrument: row.instrument };
  }

  /** Validates every row and prepares what the preview page shows. */
  preview(input: Pick<CommitInput, "table" | "mapping" | "target" | "fileHash">): ImportPreview {
    const plan = this.plan(input.table, input.mapping, input.target);
    const alreadyImported = this.findImportedFile(input.fileHash);
    const newLabels = new Set(plan.newTubes.map((t) => t.label));
    const sample = plan.readings.slice(0, SAMPLE_ROWS).map((r) => ({
      row: r.row,
      label: r.label,
      type: this.catalog.get(r.typeId)?.designation ?? "",
      isNew: newLabels.has(r.label),
      section: r.section,
      gm: r.gmMicroSiemens === null ? "" : formatTransconductance(r.gmMicroSiemens, "uS"),
      plate: r.plateMilliamps === null ? "" : formatQuantity(r.plateMilliamps, "milliamps"),
      emission: r.emissionValue === null ? "" : `${r.emissionValue} (pass ${r.emissionPassMark} of ${r.emissionFullScale})`,
      gas: r.gridMicroamps === null ? "" : formatQuantity(r.gridMicroamps, "microamps"),
      leakage: r.leakageMicroamps === null ? "" : formatQuantity(r.leakageMicroamps, "microamps"),
      shorts: r.shorts,
      heaterOpen: r.heaterOpen ? "open" : "",
      noise: r.noise,
      conditions: r.plateVolts === null && r.screenVolts === null && r.gridVolts === null && r.heaterVolts === null ? "session's" : describeConditions(r),
    }));
    return {
      rows: plan.rowCount,
      readings: plan.readings.length,
      newTubes: plan.newTubes.length,
      updatedTubes: plan.updatedTubeCount,
      replacedReadings: plan.replacedReadingCount,
      problemCount: plan.problemCount,
      problems: plan.problems,
      sample,
      alreadyImported,
      canCommit: plan.problemCount === 0 && !alreadyImported && plan.readings.length > 0,
      mappingRows: this.mappingRows(input.mapping, input.table.headers),
      countsText: {
        rows: plan.rowCount.toLocaleString("en"), readings: plan.readings.length.toLocaleString("en"), newTubes: plan.newTubes.length.toLocaleString("en"),
        updatedTubes: plan.updatedTubeCount.toLocaleString("en"), replacedReadings: plan.replacedReadingCount.toLocaleString("en"), problems: plan.problemCount.toLocaleString("en"),
      },
      countsLabel: {
        rows: plan.rowCount === 1 ? "row" : "rows", readings: plan.readings.length === 1 ? "reading" : "readings",
        newTubes: plan.newTubes.length === 1 ? "new tube" : "new tubes", updatedTubes: plan.updatedTubeCount === 1 ? "tube already in stock" : "tubes already in stock",
        replacedReadings: plan.replacedReadingCount === 1 ? "reading replaces an earlier one in this session" : "readings replace earlier ones in this session",
        problems: plan.problemCount === 1 ? "problem" : "problems",
      },
      problemsShownText: plan.problemCount > plan.problems.length
        ? `Showing the first ${plan.problems.length.toLocaleString("en")} of ${plan.problemCount.toLocaleString("en")} problems.`
        : plan.problemCount === 1 ? "One problem." : `All ${plan.problemCount.toLocaleString("en")} problems.`,
    };
  }

  mappingRows(mapping: ColumnMapping, headers: readonly string[]) {
    const rows = (Object.entries(mapping.columns) as Array<[ImportFieldKey, number]>).map(([key, index]) => ({
      field: FIELD_LABELS[key], column: headers[index] + (key === "gm" || key === "gmSection2" ? ` (bare numbers in ${GM_UNIT_NAMES[mapping.gmUnit]})` : ""),
    }));
    return rows;
  }

  // ── Commit ──────────────────────────────────────────────────────────────────────────────

  /**
   * Saves the whole file or nothing. The rows are checked again inside the transaction (the stock
   * may have changed since the preview); the session, new tubes with their "created" event, the
   * readings (replacing the same tube section in the same session), the batch record and the
   * cached verdicts are written under one BEGIN IMMEDIATE … COMMIT, and any error rolls it all back.
   */
  commit(input: CommitInput, progress: Progress = () => {}): Promise<CommitOutcome> {
    // Other writes wait for the gate rather than inside SQLite's busy handler.
    const run = this.commitQueue.then(() => bulkWriteGate(this.sqlite).hold(() => this.commitNow(input, progress)));
    this.commitQueue = run.catch(() => undefined);
    return run;
  }

  private async commitNow(input: CommitInput, progress: Progress): Promise<CommitOutcome> {
    const started = performance.now();
    progress("checking", 0, 1);
    const thresholds = await this.verdicts.thresholds();
    const sqlite = this.sqlite;
    await yieldToEventLoop();
    sqlite.exec("BEGIN IMMEDIATE");
    try {
      const prior = this.findImportedFile(input.fileHash);
      if (prior) {
        sqlite.exec("ROLLBACK");
        return { ok: false, kind: "duplicate", prior, message: `This file was already imported on ${prior.importedAt} into session ${prior.sessionDate} (${prior.instrument}); nothing was saved.` };
      }
      const target = input.target;
      if (target.kind === "existing" && !sqlite.prepare("SELECT 1 FROM TestSession WHERE id = ?").get(target.sessionId)) {
        sqlite.exec("ROLLBACK");
        return { ok: false, kind: "session", message: `Session ${target.date} no longer exists; nothing was saved.` };
      }
      const plan = this.plan(input.table, input.mapping, target);
      if (plan.problemCount > 0 || plan.readings.length === 0) {
        sqlite.exec("ROLLBACK");
        return {
          ok: false, kind: "problems", problemCount: plan.problemCount, problems: plan.problems,
          message: plan.problemCount ? `The file has ${plan.problemCount} problem${plan.problemCount === 1 ? "" : "s"}; nothing was saved.` : "The file has no readings; nothing was saved.",
        };
      }
      const now = sqlTimestamp();
      const sessionId =
        target.kind === "existing"
          ? target.sessionId
          : Number(
              sqlite
                .prepare("INSERT INTO TestSession (date, instrument, heaterVolts, plateVolts, screenVolts, gridVolts, notes, createdAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?)")
                .run(target.date, target.instrument, target.conditions.heaterVolts, target.conditions.plateVolts, target.conditions.screenVolts, target.conditions.gridVolts, target.notes, now).lastInsertRowid,
            );
      const total = plan.newTubes.length + plan.readings.length;
      // Every tube read gets its verdict recomputed; counting them now keeps the bar's scale fixed.
      const tubeCount = plan.newTubes.length + new Set(plan.readings.map((r) => r.tubeId).filter((id) => id !== null)).size;
      const grandTotal = total + tubeCount;
      let done = 0;

      const insertTube = sqlite.prepare("INSERT INTO Tube (label, typeId, state, createdAt, updatedAt) VALUES (?, ?, 'stock', ?, ?)");
      const insertEvent = sqlite.prepare("INSERT INTO TubeEvent (tubeId, at, kind, fromValue, toValue, note) VALUES (?, ?, 'created', '', 'stock', ?)");
      const eventNote = `imported from ${input.fileName}, session ${target.date}`;
      const newTubeIds = new Map<string, number>();
      progress("tubes", done, grandTotal);
      // Many new tubes: index their labels in one rebuild rather than a trigger per row.
      const addTubes = async () => {
        for (let start = 0; start < plan.newTubes.length; start += COMMIT_CHUNK_ROWS) {
          for (const tube of plan.newTubes.slice(start, start + COMMIT_CHUNK_ROWS)) {
            const id = Number(insertTube.run(tube.label, tube.typeId, now, now).lastInsertRowid);
            insertEvent.run(id, now, eventNote);
            newTubeIds.set(tube.label, id);
          }
          done = Math.min(plan.newTubes.length, start + COMMIT_CHUNK_ROWS);
          progress("tubes", done, grandTotal);
          await yieldToEventLoop();
        }
      };
      if (plan.newTubes.length >= BULK_LABEL_INDEX_TUBES) await withLabelSearchDeferred(sqlite, addTubes);
      else await addTubes();

      const upsertReading = sqlite.prepare(
        `INSERT INTO Reading (sessionId, tubeId, section, gmMicroSiemens, plateMilliamps, emissionValue, emissionPassMark, emissionFullScale,
                              gridMicroamps, leakageMicroamps, shorts, heaterOpen, noise, heaterVolts, plateVolts, screenVolts, gridVolts, createdAt)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
         ON CONFLICT(sessionId, tubeId, section) DO UPDATE SET
           gmMicroSiemens = excluded.gmMicroSiemens, plateMilliamps = excluded.plateMilliamps, emissionValue = excluded.emissionValue,
           emissionPassMark = excluded.emissionPassMark, emissionFullScale = excluded.emissionFullScale, gridMicroamps = excluded.gridMicroamps,
           leakageMicroamps = excluded.leakageMicroamps, shorts = excluded.shorts, heaterOpen = excluded.heaterOpen, noise = excluded.noise,
           heaterVolts = excluded.heaterVolts, plateVolts = excluded.plateVolts, screenVolts = excluded.screenVolts, gridVolts = excluded.gridVolts,
           createdAt = excluded.createdAt`,
      );
      const tubeIds = new Set<number>();
      for (let start = 0; start < plan.readings.length; start += COMMIT_CHUNK_ROWS) {
        for (const r of plan.readings.slice(start, start + COMMIT_CHUNK_ROWS)) {
          const tubeId = r.tubeId ?? newTubeIds.get(r.label)!;
          tubeIds.add(tubeId);
          upsertReading.run(sessionId, tubeId, r.section, r.gmMicroSiemens, r.plateMilliamps, r.emissionValue, r.emissionPassMark, r.emissionFullScale,
            r.gridMicroamps, r.leakageMicroamps, r.shorts, r.heaterOpen ? 1 : 0, r.noise, r.heaterVolts, r.plateVolts, r.screenVolts, r.gridVolts, now);
        }
        done = plan.newTubes.length + Math.min(plan.readings.length, start + COMMIT_CHUNK_ROWS);
        progress("readings", done, grandTotal);
        await yieldToEventLoop();
      }

      sqlite.prepare("INSERT INTO ImportBatch (fileHash, fileName, sessionId, rows, createdAt) VALUES (?, ?, ?, ?, ?)").run(input.fileHash, input.fileName, sessionId, plan.rowCount, now);
      // Verdicts in chunks too, so the bar keeps moving; still inside the one transaction.
      const affected = [...tubeIds];
      progress("verdicts", done, grandTotal);
      for (let start = 0; start < affected.length; start += VERDICT_CHUNK_TUBES) {
        this.verdicts.recomputeWith(thresholds, affected.slice(start, start + VERDICT_CHUNK_TUBES));
        progress("verdicts", total + Math.min(affected.length, start + VERDICT_CHUNK_TUBES), grandTotal);
        await yieldToEventLoop();
      }
      sqlite.exec("COMMIT");
      progress("finished", grandTotal, grandTotal);
      return {
        ok: true, sessionId, rows: plan.rowCount, readings: plan.readings.length, newTubes: plan.newTubes.length,
        updatedTubes: plan.updatedTubeCount, replacedReadings: plan.replacedReadingCount, seconds: (performance.now() - started) / 1000,
      };
    } catch (error) {
      if (sqlite.inTransaction) sqlite.exec("ROLLBACK");
      throw error;
    }
  }

  /** Starts the commit of a previewed upload as a job the page can poll; a second click returns the same job. */
  startCommitJob(uploadId: string): { ok: true; jobId: string } | { ok: false; message: string } {
    const upload = this.uploads.get(uploadId);
    if (!upload) return { ok: false, message: "This upload has expired; upload the file again." };
    // A second click while saving (or after saving) shows the same job; after a failure a new attempt may start.
    const earlier = upload.jobId ? this.jobs.get(upload.jobId) : undefined;
    if (upload.jobId && earlier && earlier.state !== "failed") return { ok: true, jobId: upload.jobId };
    if (!upload.mapping || !upload.preview) return { ok: false, message: "Preview the file before saving it." };
    if (!upload.preview.canCommit) return { ok: false, message: "The preview lists problems; fix the file and upload it again." };
    const job: ImportJob = { uploadId, fileName: upload.fileName, state: "running", phase: "waiting", done: 0, total: 1, outcome: null, startedAt: Date.now() };
    const jobId = this.jobs.add(job);
    upload.jobId = jobId;
    const input: CommitInput = { table: upload.table, mapping: upload.mapping, target: upload.target, fileName: upload.fileName, fileHash: upload.fileHash };
    this.commit(input, (phase, done, total) => Object.assign(job, { phase, done, total })).then(
      (outcome) => {
        Object.assign(job, { outcome, state: outcome.ok ? "done" : "failed", phase: "finished" });
        // The saved file is done with; a failed one stays so its problems can be looked at again.
        if (outcome.ok) this.uploads.delete(uploadId);
      },
      (error: unknown) => {
        Object.assign(job, { state: "failed", phase: "finished", outcome: { ok: false, kind: "session", message: "Saving failed on the server; nothing was saved." } });
        upload.jobId = null;
        this.logError(error, "import commit failed");
      },
    );
    return { ok: true, jobId };
  }

  /** What the job page shows: state, a percentage and the outcome, as display text. */
  presentJob(job: ImportJob) {
    const percent = job.total > 0 ? Math.floor((100 * job.done) / job.total) : 0;
    const phaseText: Record<ImportJob["phase"], string> = {
      waiting: "Waiting for an earlier import to finish…",
      checking: "Checking every row again…",
      tubes: "Creating the new tubes…",
      readings: "Saving the readings…",
      verdicts: "Working out the verdicts…",
      finished: "Finished.",
    };
    const outcome = job.outcome;
    return {
      state: job.state,
      running: job.state === "running",
      percent,
      phaseText: phaseText[job.phase],
      fileName: job.fileName,
      uploadId: job.uploadId,
      result: outcome && outcome.ok ? {
        sessionId: outcome.sessionId,
        summary: `${outcome.readings.toLocaleString("en")} readings from ${outcome.rows.toLocaleString("en")} rows are in the ledger: ${outcome.newTubes.toLocaleString("en")} new tubes, ${outcome.updatedTubes.toLocaleString("en")} tubes already in stock${outcome.replacedReadings ? `, ${outcome.replacedReadings.toLocaleString("en")} earlier readings of this session replaced` : ""}.`,
        secondsText: `${outcome.seconds.toFixed(1)} s`,
      } : null,
      failure: outcome && !outcome.ok ? { message: outcome.message, problems: outcome.kind === "problems" ? outcome.problems : [], sessionId: outcome.kind === "duplicate" ? outcome.prior.sessionId : null } : null,
    };
  }

  recentImports(limit = 10) {
    const rows = this.sqlite
      .prepare("SELECT b.fileName, b.rows, b.createdAt, b.sessionId, s.date, s.instrument FROM ImportBatch b JOIN TestSession s ON s.id = b.sessionId ORDER BY b.id DESC LIMIT ?")
      .all(limit) as Array<{ fileName: string; rows: number; createdAt: string; sessionId: number; date: string; instrument: string }>;
    return rows.map((r) => ({ ...r, importedAt: String(r.createdAt).slice(0, 16).replace("T", " "), rowsText: r.rows.toLocaleString("en") }));
  }

  async sessionChoices() {
    const list = await this.sessions.list(1, 100);
    return list.sessions.map((s) => ({ id: String(s.id), text: `${s.date} · ${s.instrument} · ${conditionsText(s)} · ${s._count.readings} readings` }));
  }

  // ── API ─────────────────────────────────────────────────────────────────────────────────

  /**
   * The API's whole import in one call: text in, a preview (dry run) or the saved counts out.
   * Returns the HTTP status with the body; request mistakes name their field, file problems their row and column.
   */
  async importText(query: ImportApiQuery, text: string): Promise<{ status: number; body: Record<string, unknown> }> {
    const invalid = (status: number, fields: FieldErrors, extra: Record<string, unknown> = {}) => ({
      status, body: { error: "Invalid input", message: Object.values(fields).join("; "), fields, ...extra },
    });
    if (!text || text.trim() === "") return invalid(400, { body: "body: send the CSV file as the text/csv request body" });
    const read = readCsvText(text);
    if (!read.ok) return invalid(422, { body: `body: ${read.reason}` });
    const table = read.table;
    const target = await this.resolveTarget(query as Record<string, unknown>);
    if (!target.ok) return invalid(400, target.errors);

    let mapping: ColumnMapping;
    if (query.mapping) {
      const parsed = parseMappingJson(query.mapping, table.headers);
      if (!parsed.ok) return invalid(400, parsed.errors);
      mapping = parsed.mapping;
      await this.rememberMapping(target.instrument, mapping, table.headers);
    } else {
      const stored = await this.rememberedMapping(target.instrument);
      mapping = stored ? applyStoredMapping(stored, table.headers) : guessMapping(table.headers);
      const errors: FieldErrors = {};
      checkMapping(mapping, errors);
      if (Object.keys(errors).length) {
        return invalid(400, Object.fromEntries(Object.entries(errors).map(([key, message]) => [`mapping.${key}`, `mapping: ${message} (send a mapping parameter; columns: ${table.headers.join(", ")})`])));
      }
    }
    const fileHash = sha256(text);
    const fileName = query.fileName ?? "api-upload.csv";
    const preview = this.preview({ table, mapping, target: target.target, fileHash });
    const mappingNames = Object.fromEntries((Object.entries(mapping.columns) as Array<[ImportFieldKey, number]>).map(([k, i]) => [k, table.headers[i]]));
    const report = {
      dryRun: query.dryRun === "true", saved: false, sessionId: target.target.kind === "existing" ? target.target.sessionId : null,
      rows: preview.rows, readings: preview.readings, newTubes: preview.newTubes, updatedTubes: preview.updatedTubes, replacedReadings: preview.replacedReadings,
      problemCount: preview.problemCount, problems: preview.problems, alreadyImported: preview.alreadyImported,
      mapping: { ...mappingNames, gmUnit: mapping.gmUnit },
    };
    if (query.dryRun === "true") return { status: 200, body: report };
    if (preview.alreadyImported) {
      const p = preview.alreadyImported;
      return { status: 409, body: { ...report, error: "Already imported", message: `This file was already imported on ${p.importedAt} into session ${p.sessionDate} (#${p.sessionId}); nothing was saved.` } };
    }
    if (preview.problemCount > 0) {
      return { status: 422, body: { ...report, error: "Invalid input", message: `The file has ${preview.problemCount} problem${preview.problemCount === 1 ? "" : "s"} (listed by row and column); nothing was saved.` } };
    }
    const outcome = await this.commit({ table, mapping, target: target.target, fileName, fileHash });
    if (!outcome.ok) {
      const status = outcome.kind === "duplicate" ? 409 : 422;
      return { status, body: { ...report, error: "Invalid input", message: outcome.message, ...(outcome.kind === "problems" ? { problemCount: outcome.problemCount, problems: outcome.problems } : {}) } };
    }
    return { status: 201, body: { ...report, saved: true, sessionId: outcome.sessionId, rows: outcome.rows, readings: outcome.readings, newTubes: outcome.newTubes, updatedTubes: outcome.updatedTubes, replacedReadings: outcome.replacedReadings } };
  }
}
