/**
 * The full-backup file: every row of every ledger table, ids included, so a restore puts the
 * ledger back exactly as it was.
 *
 * Format (JSON, UTF-8), version 2:
 *
 *   {
 *     "format": "tubeledger-backup",
 *     "version": 2,
 *     "createdAt": "2026-05-01T14:22:33.000Z",
 *     "tables": {
 *       "TubeType":  { "columns": ["id", "designation", …], "rows": [[1, "12AU7", …], …] },
 *       "Tube":      { … }, "TubeEvent": { … }, "TestSession": { … }, "Reading": { … },
 *       "ImportMapping": { … }, "ImportBatch": { … }, "Setting": { … }
 *     }
 *   }
 *
 * Each table lists its column names once and then one array per row, values in column order —
 * half the size of one object per row, which keeps a 200,000-reading ledger well inside the
 * upload limit. Values are the stored SQLite values: numbers, text, null; boolean columns are
 * written as true/false; timestamps are the stored text. Every table must be present and list
 * exactly the columns below, in this order; a new column means a new version.
 *
 * Versions: 2 added each reading's own test conditions (Reading.gridVolts, heaterVolts,
 * plateVolts, screenVolts, after createdAt; null = the session's). A version 1 file is still
 * read: its readings get null for those four columns, which is what they meant.
 */
import { z } from "zod";
import { TUBE_STATES, VERDICTS } from "../schemas/tube-schemas.ts";
import { tubeTypeSpecSchema } from "../schemas/tube-type-schema.ts";

export const BACKUP_FORMAT = "tubeledger-backup";
export const BACKUP_VERSION = 2;
/** Older versions this ledger still restores, each upgraded to the current layout before checking. */
export const READABLE_BACKUP_VERSIONS: readonly number[] = [1, BACKUP_VERSION];

/** How a column's value is checked and stored. */
export type ColumnKind =
  | { kind: "id" }
  | { kind: "reference"; table: BackupTableName }
  | { kind: "integer"; min: number }
  | { kind: "number?" }
  | { kind: "number" }
  | { kind: "text"; oneOf?: readonly string[]; pattern?: RegExp; patternHint?: string }
  | { kind: "boolean" }
  | { kind: "timestamp" }
  | { kind: "timestamp?" }
  | { kind: "json"; schema?: z.ZodType };

export type BackupTableName =
  | "TubeType" | "Tube" | "TubeEvent" | "TestSession" | "Reading" | "ImportMapping" | "ImportBatch" | "Setting"
  | "Build" | "BuildLine" | "BuildAllocation";

export interface TableLayout {
  name: BackupTableName;
  columns: ReadonlyArray<readonly [string, ColumnKind]>;
  /** The column that identifies a row (its primary key). */
  key: string;
  /** Column sets that must be unique, as in the database's unique indexes. */
  unique: ReadonlyArray<readonly string[]>;
}

const id = { kind: "id" } as const;
const text = { kind: "text" } as const;
const optionalNumber = { kind: "number?" } as const;
const number = { kind: "number" } as const;
const timestamp = { kind: "timestamp" } as const;
const optionalTimestamp = { kind: "timestamp?" } as const;
const bool = { kind: "boolean" } as const;
const reference = (table: BackupTableName) => ({ kind: "reference", table }) as const;

/** Parent tables come before the tables that point at them; restore inserts in this order. */
export const BACKUP_TABLES: readonly TableLayout[] = [
  {
    name: "TubeType",
    key: "id",
    unique: [["designation"]],
    columns: [
      ["id", id], ["designation", text], ["aliases", text], ["tubeClass", text], ["base", text],
      ["sections", { kind: "integer", min: 1 }], ["spec", { kind: "json", schema: tubeTypeSpecSchema }], ["userAdded", bool], ["updatedAt", timestamp],
    ],
  },
  {
    name: "Tube",
    key: "id",
    unique: [["label"]],
    columns: [
      ["id", id], ["label", text], ["typeId", reference("TubeType")], ["maker", text], ["dateCode", text], ["location", text],
      ["state", { kind: "text", oneOf: TUBE_STATES }], ["notes", text], ["verdict", { kind: "text", oneOf: VERDICTS }],
      ["percent", optionalNumber], ["createdAt", timestamp], ["updatedAt", timestamp],
    ],
  },
  {
    name: "TubeEvent",
    key: "id",
    unique: [],
    columns: [["id", id], ["tubeId", reference("Tube")], ["at", timestamp], ["kind", text], ["fromValue", text], ["toValue", text], ["note", text]],
  },
  {
    name: "TestSession",
    key: "id",
    unique: [],
    columns: [
      ["id", id], ["date", { kind: "text", pattern: /^\d{4}-\d{2}-\d{2}$/, patternHint: "a date as YYYY-MM-DD" }], ["instrument", text],
      ["heaterVolts", optionalNumber], ["plateVolts", optionalNumber], ["screenVolts", optionalNumber], ["gridVolts", optionalNumber],
      ["notes", text], ["createdAt", timestamp],
    ],
  },
  {
    name: "Reading",
    key: "id",
    unique: [["sessionId", "tubeId", "section"]],
    columns: [
      ["id", id], ["sessionId", reference("TestSession")], ["tubeId", reference("Tube")], ["section", { kind: "integer", min: 1 }],
      ["gmMicroSiemens", optionalNumber], ["plateMilliamps", optionalNumber], ["emissionValue", optionalNumber],
      ["emissionPassMark", optionalNumber], ["emissionFullScale", optionalNumber], ["gridMicroamps", optionalNumber],
      ["leakageMicroamps", optionalNumber], ["shorts", text], ["heaterOpen", bool], ["noise", text], ["createdAt", timestamp],
      // Version 2: the reading's own conditions, in the order the migration added them.
      ["gridVolts", optionalNumber], ["heaterVolts", optionalNumber], ["plateVolts", optionalNumber], ["screenVolts", optionalNumber],
    ],
  },
  {
    name: "ImportMapping",
    key: "id",
    unique: [["instrument"]],
    columns: [["id", id], ["instrument", text], ["mapping", { kind: "json" }]],
  },
  {
    name: "ImportBatch",
    key: "id",
    unique: [["fileHash"]],
    columns: [
      ["id", id], ["fileHash", text], ["fileName", text], ["sessionId", reference("TestSession")],
      ["rows", { kind: "integer", min: 0 }], ["createdAt", timestamp],
    ],
  },
  {
    name: "Setting",
    key: "key",
    unique: [],
    columns: [["key", { kind: "text", pattern: /^.+$/, patternHint: "a non-empty key" }], ["value", { kind: "json" }]],
  },
  {
    name: "Build",
    key: "id",
    unique: [["name"]],
    columns: [
      ["id", id], ["name", text], ["notes", text], ["heaterSupplies", { kind: "json" }], ["bPlusVolts", number],
      ["bPlusMilliamps", number], ["negativeRailVolts", optionalNumber], ["negativeRailMilliamps", optionalNumber],
      ["balancePercent", number], ["createdAt", timestamp], ["updatedAt", timestamp],
    ],
  },
  {
    name: "BuildLine",
    key: "id",
    unique: [],
    columns: [
      ["id", id], ["buildId", reference("Build")], ["position", { kind: "integer", min: 0 }], ["kind", text], ["typeId", reference("TubeType")],
      ["count", { kind: "integer", min: 0 }], ["heaterSupply", { kind: "integer", min: 0 }], ["sparesPercent", number], ["sparesSource", text],
      ["allowSubstitutes", bool], ["acceptedSubstitutes", text], ["plateLoadOhms", optionalNumber], ["couplingOhms", optionalNumber],
      ["gridReturnOhms", optionalNumber], ["cathodeOhms", optionalNumber], ["plateVolts", optionalNumber], ["plateMilliamps", optionalNumber],
      ["screenMilliamps", optionalNumber], ["loadMilliamps", optionalNumber],
    ],
  },
  {
    name: "BuildAllocation",
    key: "id",
    unique: [["tubeId"]],
    columns: [
      ["id", id], ["buildId", reference("Build")], ["lineId", reference("BuildLine")], ["tubeId", reference("Tube")], ["slots", text],
      ["status", text], ["position", text], ["createdAt", timestamp], ["installedAt", optionalTimestamp],
    ],
  },
];

export type BackupValue = string | number | boolean | null;
export interface BackupTable {
  columns: string[];
  rows: BackupValue[][];
}
export interface BackupDocument {
  format: typeof BACKUP_FORMAT;
  version: typeof BACKUP_VERSION;
  createdAt: string;
  tables: Record<BackupTableName, BackupTable>;
}

export function columnNames(layout: TableLayout): string[] {
  return layout.columns.map(([name]) => name);
}

// ── Validation ─────────────────────────────────────────────────────────────────────────────

/** Prisma and sqlTimestamp() write ISO text; SQLite's CURRENT_TIMESTAMP writes "YYYY-MM-DD HH:MM:SS". */
const TIMESTAMP_PATTERN = /^\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}:\d{2}(?:\.\d{1,9})?(?:Z|[+-]\d{2}:\d{2})?$/;

function parsesAsJson(value: string): { ok: true; value: unknown } | { ok: false } {
  try {
    return { ok: true, value: JSON.parse(value) };
  } catch {
    return { ok: false };
  }
}

function valueSchema(column: string, kind: ColumnKind): z.ZodType {
  switch (kind.kind) {
    case "id":
    case "reference":
      return z.number({ error: `${column} must be a whole number` }).int(`${column} must be a whole number`).positive(`${column} must be positive`);
    case "integer":
      return z.number({ error: `${column} must be a whole number` }).int(`${column} must be a whole number`).min(kind.min, `${column} must be at least ${kind.min}`);
    case "number?":
      return z.number({ error: `${column} must be a number or null` }).nullable();
    case "number":
      return z.number({ error: `${column} must be a number` });
    case "boolean":
      return z.boolean({ error: `${column} must be true or false` });
    case "timestamp":
      return z.string({ error: `${column} must be a timestamp` }).regex(TIMESTAMP_PATTERN, `${column} must be a timestamp like 2026-05-01T14:22:33.000+00:00`);
    case "timestamp?":
      return z.string({ error: `${column} must be a timestamp or null` }).regex(TIMESTAMP_PATTERN, `${column} must be a timestamp like 2026-05-01T14:22:33.000+00:00`).nullable();
    case "text": {
      let schema: z.ZodType<string> = z.string({ error: `${column} must be text` });
      if (kind.oneOf) schema = z.enum(kind.oneOf as [string, ...string[]], { error: `${column} must be one of ${kind.oneOf.join(", ")}` });
      else if (kind.pattern) schema = z.string({ error: `${column} must be text` }).regex(kind.pattern, `${column} must be ${kind.patternHint}`);
      return schema;
    }
    case "json":
      return z.string({ error: `${column} must be JSON text` }).superRefine((value, context) => {
        const parsed = parsesAsJson(value);
        if (!parsed.ok) {
          context.addIssue({ code: "custom", message: `${column} must be JSON text` });
          return;
        }
        if (!kind.schema) return;
        const result = kind.schema.safeParse(parsed.value);
        if (!result.success) {
          const issue = result.error.issues[0];
          context.addIssue({ code: "custom", message: `${column}${issue.path.length ? "." + issue.path.join(".") : ""}: ${issue.message}` });
        }
      });
  }
}

function tableSchema(layout: TableLayout) {
  const names = columnNames(layout);
  const rowSchema = z.tuple(layout.columns.map(([name, kind]) => valueSchema(name, kind)) as [z.ZodType, ...z.ZodType[]], {
    error: `must be a list of ${names.length} values, one per column`,
  });
  return z.object(
    {
      columns: z.array(z.string(), { error: "must be a list of names" }).refine(
        (given) => given.length === names.length && given.every((name, position) => name === names[position]),
        `must be exactly ${names.join(", ")}`,
      ),
      rows: z.array(rowSchema, { error: "must be a list" }),
    },
    { error: "missing, or not an object with columns and rows" },
  );
}

/** The header alone: checked first so that a foreign file gets one plain message, not hundreds. */
const headerSchema = z.object(
  {
    format: z.literal(BACKUP_FORMAT, { error: `not a Tubeledger backup (format must be "${BACKUP_FORMAT}")` }),
    version: z.number({ error: "version must be a number" }),
  },
  { error: "not a Tubeledger backup (expected a JSON object)" },
);

const documentSchema = z
  .object({
    format: z.literal(BACKUP_FORMAT),
    version: z.literal(BACKUP_VERSION, { error: `version must be ${BACKUP_VERSION}` }),
    createdAt: z.string({ error: "createdAt must be a timestamp" }).regex(TIMESTAMP_PATTERN, "createdAt must be a timestamp"),
    tables: z.strictObject(
      Object.fromEntries(BACKUP_TABLES.map((layout) => [layout.name, tableSchema(layout)])) as Record<BackupTableName, ReturnType<typeof tableSchema>>,
      { error: "tables must be an object with one entry per table" },
    ),
  })
  .superRefine((document, context) => checkKeysAndReferences(document.tables as Record<BackupTableName, BackupTable>, context));

/**
 * Keys unique, unique indexes respected, and every reference pointing at a row in the file —
 * the database would refuse these too, but only with a bare constraint name.
 */
function checkKeysAndReferences(tables: Record<BackupTableName, BackupTable>, context: z.RefinementCtx): void {
  const keysOf = new Map<BackupTableName, Set<BackupValue>>();
  for (const layout of BACKUP_TABLES) {
    const rows = tables[layout.name].rows;
    const names = columnNames(layout);
    const keyIndex = names.indexOf(layout.key);
    const keys = new Set<BackupValue>();
    rows.forEach((row, position) => {
      if (keys.has(row[keyIndex])) {
        context.addIssue({ code: "custom", path: ["tables", layout.name, "rows", position, keyIndex], message: `${layout.key} ${row[keyIndex]} is used by two rows` });
      }
      keys.add(row[keyIndex]);
    });
    keysOf.set(layout.name, keys);

    for (const unique of layout.unique) {
      const indexes = unique.map((name) => names.indexOf(name));
      const seen = new Set<string>();
      rows.forEach((row, position) => {
        const value = JSON.stringify(indexes.map((index) => row[index]));
        if (seen.has(value)) {
          context.addIssue({ code: "custom", path: ["tables", layout.name, "rows", position, indexes[0]], message: `${unique.join(" + ")} ${indexes.map((index) => row[index]).join(" / ")} is used by two rows` });
        }
        seen.add(value);
      });
    }
  }
  for (const layout of BACKUP_TABLES) {
    layout.columns.forEach(([name, kind], columnIndex) => {
      if (kind.kind !== "reference") return;
      const targets = keysOf.get(kind.table)!;
      tables[layout.name].rows.forEach((row, position) => {
        if (!targets.has(row[columnIndex])) {
          context.addIssue({ code: "custom", path: ["tables", layout.name, "rows", position, columnIndex], message: `${name} ${row[columnIndex]} names no row of ${kind.table}` });
        }
      });
    });
  }
}

export type BackupParse = { ok: true; document: BackupDocument } | { ok: false; message: string; problems: string[] };

/** The Reading columns version 2 appended; a version 1 file has every other column as now. */
const READING_COLUMNS_ADDED_IN_VERSION_2 = ["gridVolts", "heaterVolts", "plateVolts", "screenVolts"];

/**
 * A version 1 document in the version 2 layout: each Reading row gets null for the four
 * condition columns (it was read at its session's conditions). Anything that does not look
 * like a version 1 Reading table is left alone for the full check to name.
 */
function upgradeFromVersion1(input: Record<string, unknown>): Record<string, unknown> {
  const tables = input.tables as Record<string, unknown> | undefined;
  const reading = tables?.Reading as { columns?: unknown; rows?: unknown } | undefined;
  const current = columnNames(BACKUP_TABLES.find((layout) => layout.name === "Reading")!);
  const older = current.filter((name) => !READING_COLUMNS_ADDED_IN_VERSION_2.includes(name));
  const isOlderLayout = Array.isArray(reading?.columns) && reading.columns.length === older.length && reading.columns.every((name, index) => name === older[index]);
  if (!tables || !reading || !isOlderLayout) return { ...input, version: BACKUP_VERSION };
  const rows = Array.isArray(reading.rows)
    ? reading.rows.map((row) => (Array.isArray(row) && row.length === older.length ? [...row, ...READING_COLUMNS_ADDED_IN_VERSION_2.map(() => null)] : row))
    : reading.rows;
  return { ...input, version: BACKUP_VERSION, tables: { ...tables, Reading: { ...reading, columns: current, rows } } };
}

/** How many problems a failed check lists; the first few are enough to find the fault. */
export const MAX_PROBLEMS_SHOWN = 8;

/** "tables.Reading.rows.12.4" → "Reading row 13, column gmMicroSiemens". */
function describePath(path: readonly PropertyKey[]): string {
  if (path[0] !== "tables" || path.length < 2) return path.length ? path.map(String).join(".") : "file";
  const layout = BACKUP_TABLES.find((candidate) => candidate.name === path[1]);
  if (path[2] !== "rows" || path.length < 4 || !layout) return `table ${String(path[1])}${path.length > 2 ? ", " + path.slice(2).map(String).join(".") : ""}`;
  const row = `${layout.name} row ${Number(path[3]) + 1}`;
  if (path.length < 5) return row;
  const column = layout.columns[Number(path[4])]?.[0];
  return column ? `${row}, column ${column}` : row;
}

/**
 * Checks a parsed JSON value against the backup format: header, every column of every row,
 * unique keys and references. Returns the typed document, or a message and the first
 * problems as "where: what" lines.
 *
 * Example: `parseBackupDocument({ format: "other" })` →
 * `{ ok: false, message: 'not a Tubeledger backup (format must be "tubeledger-backup")', problems: [] }`.
 */
export function parseBackupDocument(input: unknown): BackupParse {
  const header = headerSchema.safeParse(input);
  if (!header.success) return { ok: false, message: header.error.issues[0].message, problems: [] };
  if (!READABLE_BACKUP_VERSIONS.includes(header.data.version)) {
    return { ok: false, message: `backup version ${header.data.version} is not one this ledger reads (it reads versions ${READABLE_BACKUP_VERSIONS.join(" and ")})`, problems: [] };
  }
  const current = header.data.version === 1 ? upgradeFromVersion1(input as Record<string, unknown>) : input;
  const result = documentSchema.safeParse(current);
  if (result.success) return { ok: true, document: result.data as BackupDocument };
  const problems = result.error.issues.slice(0, MAX_PROBLEMS_SHOWN).map((issue) => `${describePath(issue.path)}: ${issue.message}`);
  const count = result.error.issues.length;
  return { ok: false, message: `the backup has ${count} problem${count === 1 ? "" : "s"}; nothing was changed`, problems };
}

/**
 * Parses the bytes of an uploaded backup file: JSON first, then `parseBackupDocument`.
 *
 * Example: `parseBackupText('{"format":')` → `{ ok: false, message: "not valid JSON (…)", problems: [] }`.
 */
export function parseBackupText(text: string): BackupParse {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (error) {
    return { ok: false, message: `not valid JSON — the file may be cut short or damaged (${(error as Error).message})`, problems: [] };
  }
  return parseBackupDocument(json);
}

/** The document's outline for the OpenAPI description (the full check is `parseBackupDocument`). */
export const backupDocumentOutlineSchema = z.object({
  format: z.literal(BACKUP_FORMAT),
  version: z.literal(READABLE_BACKUP_VERSIONS as [number, ...number[]]).describe(`written as ${BACKUP_VERSION}; a restore also reads ${READABLE_BACKUP_VERSIONS.filter((v) => v !== BACKUP_VERSION).join(", ")}`),
  createdAt: z.string(),
  tables: z.object(
    Object.fromEntries(
      BACKUP_TABLES.map((layout) => [
        layout.name,
        z.object({
          columns: z.array(z.string()).describe(columnNames(layout).join(", ")),
          rows: z.array(z.array(z.union([z.string(), z.number(), z.boolean(), z.null()]))),
        }),
      ]),
    ),
  ),
});
