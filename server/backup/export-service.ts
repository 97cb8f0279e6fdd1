/**
 * Stock and readings as CSV or JSON, streamed row by row from a read-only snapshot so a ledger
 * of 200,000 readings never sits in memory at once.
 */
import { Readable, pipeline } from "node:stream";
import { stringify } from "csv-stringify";
import type Database from "better-sqlite3";
import { inChunks, readSnapshot } from "./read-snapshot.ts";

export const EXPORT_FORMATS = ["csv", "json"] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];
export const EXPORT_KINDS = ["tubes", "readings"] as const;
export type ExportKind = (typeof EXPORT_KINDS)[number];

// ── Stock ──────────────────────────────────────────────────────────────────────────────────

interface TubeExportRow {
  id: number;
  label: string;
  type: string;
  maker: string;
  dateCode: string;
  location: string;
  state: string;
  verdict: string;
  percent: number | null;
  notes: string;
}

const tubeQuery = `SELECT t.id, t.label, tt.designation AS type, t.maker, t.dateCode, t.location, t.state, t.verdict, t.percent, t.notes
  FROM Tube t JOIN TubeType tt ON tt.id = t.typeId ORDER BY t.label`;

/** CSV header → how to get the value from a row. */
export const TUBE_CSV_COLUMNS: ReadonlyArray<readonly [string, (row: TubeExportRow) => string | number | null]> = [
  ["label", (row) => row.label],
  ["type", (row) => row.type],
  ["maker", (row) => row.maker],
  ["date_code", (row) => row.dateCode],
  ["location", (row) => row.location],
  ["state", (row) => row.state],
  ["verdict", (row) => row.verdict],
  ["percent_of_reference", (row) => roundPercent(row.percent)],
  ["notes", (row) => row.notes],
];

/** One decimal is finer than any tester scale can be read. */
function roundPercent(percent: number | null): number | null {
  return percent === null ? null : Math.round(percent * 10) / 10;
}

function tubeJson(row: TubeExportRow) {
  return {
    id: row.id, label: row.label, type: row.type, maker: row.maker, dateCode: row.dateCode, location: row.location,
    state: row.state, verdict: row.verdict, percentOfReference: roundPercent(row.percent), notes: row.notes,
  };
}

// ── Readings ───────────────────────────────────────────────────────────────────────────────

interface ReadingExportRow {
  sessionId: number;
  date: string;
  instrument: string;
  heaterVolts: number | null;
  plateVolts: number | null;
  screenVolts: number | null;
  gridVolts: number | null;
  tubeId: number;
  label: string;
  type: string;
  section: number;
  gmMicroSiemens: number | null;
  plateMilliamps: number | null;
  emissionValue: number | null;
  emissionPassMark: number | null;
  emissionFullScale: number | null;
  gridMicroamps: number | null;
  leakageMicroamps: number | null;
  shorts: string;
  heaterOpen: number;
  noise: string;
  /** The reading's own conditions; null: read at the session's. */
  readingHeaterVolts: number | null;
  readingPlateVolts: number | null;
  readingScreenVolts: number | null;
  readingGridVolts: number | null;
}

const readingQuery = `SELECT s.id AS sessionId, s.date, s.instrument, s.heaterVolts, s.plateVolts, s.screenVolts, s.gridVolts,
    t.id AS tubeId, t.label, tt.designation AS type, r.section, r.gmMicroSiemens, r.plateMilliamps, r.emissionValue,
    r.emissionPassMark, r.emissionFullScale, r.gridMicroamps, r.leakageMicroamps, r.shorts, r.heaterOpen, r.noise,
    r.heaterVolts AS readingHeaterVolts, r.plateVolts AS readingPlateVolts, r.screenVolts AS readingScreenVolts, r.gridVolts AS readingGridVolts
  FROM Reading r JOIN TestSession s ON s.id = r.sessionId JOIN Tube t ON t.id = r.tubeId JOIN TubeType tt ON tt.id = t.typeId
  ORDER BY s.date, s.id, t.label, r.section`;

/**
 * One row per section reading. The reading columns carry the names a bench CSV is expected to
 * use, so this file can be imported again (reading_*_V are the reading's own conditions, blank
 * when it was read at the session's; the importer maps them before the session's columns); the
 * session columns say where each row was read.
 */
export const READING_CSV_COLUMNS: ReadonlyArray<readonly [string, (row: ReadingExportRow) => string | number | null]> = [
  ["label", (row) => row.label],
  ["type", (row) => row.type],
  ["section", (row) => row.section],
  ["gm (uS)", (row) => row.gmMicroSiemens],
  ["plate_mA", (row) => row.plateMilliamps],
  ["emission", (row) => row.emissionValue],
  ["pass_mark", (row) => row.emissionPassMark],
  ["full_scale", (row) => row.emissionFullScale],
  ["gas_uA", (row) => row.gridMicroamps],
  ["leakage_uA", (row) => row.leakageMicroamps],
  ["shorts", (row) => row.shorts],
  ["heater_open", (row) => (row.heaterOpen === 1 ? 1 : 0)],
  ["noise", (row) => row.noise],
  ["reading_heater_V", (row) => row.readingHeaterVolts],
  ["reading_plate_V", (row) => row.readingPlateVolts],
  ["reading_screen_V", (row) => row.readingScreenVolts],
  ["reading_grid_V", (row) => row.readingGridVolts],
  ["date", (row) => row.date],
  ["instrument", (row) => row.instrument],
  ["heater_V", (row) => row.heaterVolts],
  ["plate_V", (row) => row.plateVolts],
  ["screen_V", (row) => row.screenVolts],
  ["grid_V", (row) => row.gridVolts],
  ["session_id", (row) => row.sessionId],
];

function readingJson(row: ReadingExportRow) {
  return { ...row, heaterOpen: row.heaterOpen === 1 };
}

// ── Streams ────────────────────────────────────────────────────────────────────────────────

function rowsOf<T>(databaseFile: string, sql: string): Generator<T> {
  return readSnapshot(databaseFile, (db: Database.Database) => db.prepare(sql).iterate() as IterableIterator<T>);
}

function csvStream<T>(rows: Iterable<T>, columns: ReadonlyArray<readonly [string, (row: T) => string | number | null]>): Readable {
  const records = (function* () {
    for (const row of rows) yield columns.map(([, value]) => value(row));
  })();
  const stringifier = stringify({ header: true, columns: columns.map(([header]) => header) });
  // pipeline destroys the source (and so closes the snapshot) when the client goes away.
  pipeline(Readable.from(records), stringifier, () => {});
  return stringifier;
}

/** A JSON array, written a chunk of rows at a time. */
function jsonArrayStream<T>(rows: Iterable<T>, toJson: (row: T) => unknown): Readable {
  return Readable.from(
    (function* () {
      yield "[";
      let first = true;
      for (const chunk of inChunks(rows)) {
        yield (first ? "\n" : ",\n") + chunk.map((row) => JSON.stringify(toJson(row))).join(",\n");
        first = false;
      }
      yield "\n]\n";
    })(),
    { objectMode: false },
  );
}

export interface ExportDownload {
  stream: Readable;
  contentType: string;
  fileName: string;
}

/** "2026-05-01" in the server's local time, for file names. */
export function fileDate(now: Date): string {
  const pad = (value: number) => String(value).padStart(2, "0");
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

/** `attachment; filename="…"` — file names here are plain ASCII by construction. */
export function attachmentHeader(fileName: string): string {
  return `attachment; filename="${fileName}"`;
}

export class ExportService {
  constructor(private readonly databaseFile: string, private readonly sqlite: Database.Database) {}

  /**
   * The stock or the readings as a stream in the asked format, with a dated file name such as
   * tubeledger-readings-2026-05-01.csv.
   */
  download(kind: ExportKind, format: ExportFormat, now = new Date()): ExportDownload {
    const fileName = `tubeledger-${kind === "tubes" ? "stock" : "readings"}-${fileDate(now)}.${format}`;
    const contentType = format === "csv" ? "text/csv; charset=utf-8" : "application/json; charset=utf-8";
    if (kind === "tubes") {
      const rows = rowsOf<TubeExportRow>(this.databaseFile, tubeQuery);
      return { stream: format === "csv" ? csvStream(rows, TUBE_CSV_COLUMNS) : jsonArrayStream(rows, tubeJson), contentType, fileName };
    }
    const rows = rowsOf<ReadingExportRow>(this.databaseFile, readingQuery);
    return { stream: format === "csv" ? csvStream(rows, READING_CSV_COLUMNS) : jsonArrayStream(rows, readingJson), contentType, fileName };
  }

  /** Row counts for the export page. */
  counts(): { tubes: number; sessions: number; readings: number; types: number; userTypes: number; events: number; mappings: number; batches: number } {
    return this.sqlite
      .prepare(
        `SELECT (SELECT count(*) FROM Tube) AS tubes, (SELECT count(*) FROM TestSession) AS sessions, (SELECT count(*) FROM Reading) AS readings,
                (SELECT count(*) FROM TubeType) AS types, (SELECT count(*) FROM TubeType WHERE userAdded = 1) AS userTypes,
                (SELECT count(*) FROM TubeEvent) AS events, (SELECT count(*) FROM ImportMapping) AS mappings, (SELECT count(*) FROM ImportBatch) AS batches`,
      )
      .get() as ReturnType<ExportService["counts"]>;
  }
}
