/**
 * The fields a CSV column can fill, and the column mapping: which column feeds which field.
 * A mapping is held by column index while working on one file and remembered per instrument by
 * header name, so it still applies when the instrument's next export orders its columns differently.
 */
import type { TransconductanceUnit } from "../engine/units/index.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";

export const IMPORT_FIELD_KEYS = [
  "label", "type", "section", "gm", "plateMilliamps", "emissionValue", "emissionPassMark", "emissionFullScale",
  "gridMicroamps", "leakageMicroamps", "shorts", "heaterOpen", "noise", "gmSection2", "plateMilliampsSection2", "emissionSection2",
  "plateVolts", "screenVolts", "gridVolts", "heaterVolts",
] as const;
export type ImportFieldKey = (typeof IMPORT_FIELD_KEYS)[number];

export interface ImportFieldInfo {
  key: ImportFieldKey;
  label: string;
  hint: string;
  group: "tube" | "reading" | "second-section" | "conditions";
  /** Normalised header names (lower case, letters and digits only) that select this field when guessing. */
  guesses: readonly string[];
}

export const IMPORT_FIELDS: readonly ImportFieldInfo[] = [
  { key: "label", group: "tube", label: "Label", hint: "required; what is written on the tube or its box", guesses: ["label", "tube", "tubelabel", "tubeid", "id", "serial", "no", "number", "tag"] },
  { key: "type", group: "tube", label: "Type", hint: "needed for labels not yet in stock (those tubes are created)", guesses: ["type", "tubetype", "designation", "kind", "model"] },
  { key: "section", group: "tube", label: "Section", hint: "1, 2 …; section 1 when not mapped", guesses: ["section", "sec", "sect", "half"] },
  { key: "gm", group: "reading", label: "Transconductance", hint: "bare numbers take the unit chosen below", guesses: ["gm", "transconductance", "mutualconductance", "mutual", "gm1", "gms1", "s1gm", "gmsection1", "transconductance1"] },
  { key: "plateMilliamps", group: "reading", label: "Plate current (mA)", hint: "bare numbers are mA", guesses: ["ia", "ip", "platecurrent", "anodecurrent", "current", "ma", "ia1", "s1ia", "iama", "platema"] },
  { key: "emissionValue", group: "reading", label: "Emission reading", hint: "on the instrument's own scale", guesses: ["emission", "emis", "quality", "emission1", "s1emission"] },
  { key: "emissionPassMark", group: "reading", label: "Emission pass mark", hint: "needed when emission is mapped", guesses: ["passmark", "pass", "emissionpass", "minimum"] },
  { key: "emissionFullScale", group: "reading", label: "Emission full scale", hint: "100 when not mapped", guesses: ["fullscale", "scale", "emissionscale"] },
  { key: "gridMicroamps", group: "reading", label: "Gas — grid current (µA)", hint: "bare numbers are µA", guesses: ["gas", "gridcurrent", "ig", "gasua", "gridua"] },
  { key: "leakageMicroamps", group: "reading", label: "Leakage (µA)", hint: "bare numbers are µA", guesses: ["leakage", "leak", "leakageua", "hk", "hkleakage"] },
  { key: "shorts", group: "reading", label: "Shorts", hint: "element pairs such as g1-k, h-k", guesses: ["shorts", "short", "shorted"] },
  { key: "heaterOpen", group: "reading", label: "Heater open", hint: "yes / no / 1 / 0 / x", guesses: ["heateropen", "open", "heater", "filamentopen", "continuity"] },
  { key: "noise", group: "reading", label: "Noise remark", hint: "free text", guesses: ["noise", "microphonics", "microphonic", "remark", "remarks", "note", "notes", "comment"] },
  { key: "gmSection2", group: "second-section", label: "Transconductance, section 2", hint: "wide files: one row per tube", guesses: ["gm2", "gms2", "s2gm", "gmsection2", "transconductance2"] },
  { key: "plateMilliampsSection2", group: "second-section", label: "Plate current section 2 (mA)", hint: "wide files", guesses: ["ia2", "ip2", "s2ia", "platecurrent2"] },
  { key: "emissionSection2", group: "second-section", label: "Emission section 2", hint: "wide files", guesses: ["emission2", "s2emission", "emis2"] },
  // Per-row test conditions. The "reading…" names come first in the export, ahead of the session's own columns.
  { key: "plateVolts", group: "conditions", label: "Plate volts", hint: "this row's plate volts; blank cell or not mapped: the session's", guesses: ["readingplatev", "platev", "platevolts", "platevoltage", "anodev", "anodevolts"] },
  { key: "screenVolts", group: "conditions", label: "Screen volts", hint: "this row's screen volts; blank: the session's", guesses: ["readingscreenv", "screenv", "screenvolts", "screenvoltage", "g2v", "g2volts"] },
  { key: "gridVolts", group: "conditions", label: "Grid volts (bias)", hint: "this row's grid bias, signed (e.g. -8.5); blank: the session's", guesses: ["readinggridv", "gridv", "gridvolts", "gridbias", "bias", "biasv", "biasvolts"] },
  { key: "heaterVolts", group: "conditions", label: "Heater volts", hint: "this row's heater volts; blank: the session's", guesses: ["readingheaterv", "heaterv", "heatervolts", "filamentv", "filamentvolts"] },
];

export const FIELD_LABELS: Readonly<Record<ImportFieldKey, string>> = Object.fromEntries(IMPORT_FIELDS.map((f) => [f.key, f.label])) as Record<ImportFieldKey, string>;

export const GM_UNITS: readonly TransconductanceUnit[] = ["uS", "umho", "mA/V"];
export const GM_UNIT_NAMES: Readonly<Record<TransconductanceUnit, string>> = { uS: "µS", umho: "µmho", "mA/V": "mA/V" };

/** Which column (0-based index into the file's headers) feeds each field, and the gm unit of bare numbers. */
export interface ColumnMapping {
  columns: Partial<Record<ImportFieldKey, number>>;
  gmUnit: TransconductanceUnit;
}

/** The mapping as remembered for an instrument: by header name; null = deliberately left out. */
export interface StoredMapping {
  columns: Partial<Record<ImportFieldKey, string | null>>;
  gmUnit: TransconductanceUnit;
}

const normalise = (header: string) => header.toLowerCase().replace(/µ/g, "u").replace(/[^a-z0-9]/g, "");

/** Header text that names a gm unit, e.g. "Gm (mA/V)" → "mA/V". */
function unitInHeader(header: string): TransconductanceUnit | null {
  const text = header.toLowerCase().replace(/µ/g, "u");
  if (/ma\/v|mmho|\bms\b/.test(text)) return "mA/V";
  if (/umho|micromho/.test(text)) return "umho";
  if (/\bus\b|microsiemens/.test(text)) return "uS";
  return null;
}

/** Strips unit words in brackets or after the name ("Ia (mA)", "Gm µmho") before matching. */
function headerKey(header: string): string {
  return normalise(header.replace(/\(.*?\)|\[.*?\]/g, "").replace(/\s(µ|u|m)?(mho|mhos|s|a\/v|a|ua|ma)\s*$/i, ""));
}

/**
 * Guesses a mapping from header names: an exact match on a field's known names first, then a
 * header that starts with one. Each column feeds at most one field.
 *
 * @example guessMapping(["Tube", "Type", "Gm (mA/V)"]).columns // { label: 0, type: 1, gm: 2 }
 */
export function guessMapping(headers: readonly string[]): ColumnMapping {
  const keys = headers.map(headerKey);
  const used = new Set<number>();
  const columns: Partial<Record<ImportFieldKey, number>> = {};
  for (const pass of ["exact", "prefix"] as const) {
    for (const field of IMPORT_FIELDS) {
      if (columns[field.key] !== undefined) continue;
      const index = keys.findIndex((key, i) => !used.has(i) && field.guesses.some((g) => (pass === "exact" ? key === g : g.length >= 3 && key.startsWith(g))));
      if (index >= 0) {
        columns[field.key] = index;
        used.add(index);
      }
    }
  }
  const gmHeader = columns.gm !== undefined ? headers[columns.gm] : undefined;
  return { columns, gmUnit: (gmHeader && unitInHeader(gmHeader)) || "uS" };
}

/** The remembered mapping applied to this file's headers; fields whose column is absent fall back to the guess. */
export function applyStoredMapping(stored: StoredMapping, headers: readonly string[]): ColumnMapping {
  const guessed = guessMapping(headers);
  const columns: Partial<Record<ImportFieldKey, number>> = {};
  for (const key of IMPORT_FIELD_KEYS) {
    const name = stored.columns[key];
    if (name === null) continue;
    const index = name === undefined ? -1 : headers.indexOf(name);
    if (index >= 0) columns[key] = index;
  }
  // A field the remembered mapping never had, or whose column this file lacks, falls back to the guess.
  for (const key of IMPORT_FIELD_KEYS) {
    const guess = guessed.columns[key];
    if (stored.columns[key] === null || columns[key] !== undefined || guess === undefined) continue;
    if (!Object.values(columns).includes(guess)) columns[key] = guess;
  }
  return { columns, gmUnit: stored.gmUnit };
}

export function toStoredMapping(mapping: ColumnMapping, headers: readonly string[]): StoredMapping {
  const columns: Partial<Record<ImportFieldKey, string | null>> = {};
  for (const key of IMPORT_FIELD_KEYS) columns[key] = mapping.columns[key] !== undefined ? headers[mapping.columns[key]!] : null;
  return { columns, gmUnit: mapping.gmUnit };
}

/** Reads a remembered mapping back; anything malformed counts as no mapping. */
export function parseStoredMapping(json: string): StoredMapping | null {
  try {
    const value = JSON.parse(json) as { columns?: Record<string, unknown>; gmUnit?: unknown };
    if (!value || typeof value !== "object" || !value.columns || typeof value.columns !== "object") return null;
    const columns: Partial<Record<ImportFieldKey, string | null>> = {};
    for (const key of IMPORT_FIELD_KEYS) {
      const name = value.columns[key];
      if (typeof name === "string" || name === null) columns[key] = name;
    }
    const gmUnit = GM_UNITS.includes(value.gmUnit as TransconductanceUnit) ? (value.gmUnit as TransconductanceUnit) : "uS";
    return { columns, gmUnit };
  } catch {
    return null;
  }
}

/** Rules every mapping must meet, whatever it came from; problems are added to `errors` by field. */
export function checkMapping(mapping: ColumnMapping, errors: FieldErrors): void {
  const c = mapping.columns;
  if (c.label === undefined) errors.label ??= "Label: choose the column that holds each tube's label";
  if (c.emissionValue !== undefined || c.emissionSection2 !== undefined) {
    if (c.emissionPassMark === undefined) errors.emissionPassMark ??= "Emission pass mark: choose its column — emission is mapped";
  }
  const readingKeys: ImportFieldKey[] = ["gm", "plateMilliamps", "emissionValue", "gridMicroamps", "leakageMicroamps", "shorts", "heaterOpen", "gmSection2", "plateMilliampsSection2", "emissionSection2"];
  if (c.label !== undefined && !readingKeys.some((key) => c[key] !== undefined)) errors.gm ??= "Transconductance: map at least one reading column (gm, plate current, emission, gas, leakage, shorts or heater)";
  const byColumn = new Map<number, ImportFieldKey>();
  for (const key of IMPORT_FIELD_KEYS) {
    const index = c[key];
    if (index === undefined) continue;
    const other = byColumn.get(index);
    if (other) errors[key] ??= `${FIELD_LABELS[key]}: the same column already feeds ${FIELD_LABELS[other]}`;
    else byColumn.set(index, key);
  }
}

/**
 * Reads the mapping form: one select per field named `col_<field>` holding a column index or ""
 * (not in the file), and `gmUnit`. Errors are keyed by field.
 */
export function parseMappingForm(body: Record<string, unknown>, headers: readonly string[]): { ok: true; mapping: ColumnMapping } | { ok: false; errors: FieldErrors } {
  const errors: FieldErrors = {};
  const columns: Partial<Record<ImportFieldKey, number>> = {};
  for (const key of IMPORT_FIELD_KEYS) {
    const raw = body[`col_${key}`];
    if (raw === undefined || raw === "") continue;
    const index = typeof raw === "string" && /^\d+$/.test(raw) ? Number(raw) : -1;
    if (index < 0 || index >= headers.length) errors[key] = `${FIELD_LABELS[key]}: choose one of the file's columns`;
    else columns[key] = index;
  }
  const unit = body.gmUnit ?? "uS";
  if (!GM_UNITS.includes(unit as TransconductanceUnit)) errors.gmUnit = "Transconductance unit: choose µS, µmho or mA/V";
  const mapping: ColumnMapping = { columns, gmUnit: GM_UNITS.includes(unit as TransconductanceUnit) ? (unit as TransconductanceUnit) : "uS" };
  checkMapping(mapping, errors);
  return Object.keys(errors).length ? { ok: false, errors } : { ok: true, mapping };
}

/**
 * Reads a mapping given to the API as JSON: `{ "label": "Tube", "gm": "Gm", "gmUnit": "umho" }`,
 * each field naming a header of the file. Errors are keyed `mapping.<field>`.
 */
export function parseMappingJson(json: string, headers: readonly string[]): { ok: true; mapping: ColumnMapping } | { ok: false; errors: FieldErrors } {
  let value: unknown;
  try {
    value = JSON.parse(json);
  } catch {
    return { ok: false, errors: { mapping: "mapping: not valid JSON — send an object such as {\"label\":\"Tube\",\"gm\":\"Gm\"}" } };
  }
  if (!value || typeof value !== "object" || Array.isArray(value)) return { ok: false, errors: { mapping: "mapping: send an object of field → column name" } };
  const errors: FieldErrors = {};
  const columns: Partial<Record<ImportFieldKey, number>> = {};
  let gmUnit: TransconductanceUnit = "uS";
  for (const [key, name] of Object.entries(value as Record<string, unknown>)) {
    if (key === "gmUnit") {
      if (GM_UNITS.includes(name as TransconductanceUnit)) gmUnit = name as TransconductanceUnit;
      else errors["mapping.gmUnit"] = "mapping.gmUnit: use uS, umho or mA/V";
      continue;
    }
    if (!(IMPORT_FIELD_KEYS as readonly string[]).includes(key)) {
      errors[`mapping.${key}`] = `mapping.${key}: unknown field (fields: ${IMPORT_FIELD_KEYS.join(", ")}, gmUnit)`;
      continue;
    }
    const index = typeof name === "string" ? headers.indexOf(name) : -1;
    if (index < 0) errors[`mapping.${key}`] = `mapping.${key}: the file has no column ${JSON.stringify(name)} (columns: ${headers.join(", ")})`;
    else columns[key as ImportFieldKey] = index;
  }
  const mapping: ColumnMapping = { columns, gmUnit };
  const ruleErrors: FieldErrors = {};
  checkMapping(mapping, ruleErrors);
  for (const [key, message] of Object.entries(ruleErrors)) errors[`mapping.${key}`] ??= `mapping: ${message}`;
  return Object.keys(errors).length ? { ok: false, errors } : { ok: true, mapping };
}
