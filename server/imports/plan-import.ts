/**
 * Checks every row of an import with the same unit parsers as the bench and turns the file
 * into the readings it would save. Every problem is kept with its row (as the file numbers it,
 * header = row 1), its column and a reason; nothing is saved while any problem remains.
 */
import { parseQuantity, parseTransconductance } from "../engine/units/index.ts";
import { parseShorts } from "../sessions/bench-row.ts";
import { parseConditionVolts, type ConditionField } from "../sessions/reading-conditions.ts";
import type { CsvTable } from "./csv-table.ts";
import { FIELD_LABELS, type ColumnMapping, type ImportFieldKey } from "./import-fields.ts";

export interface ImportProblem {
  row: number;
  column: string;
  reason: string;
}

export interface PlannedReading {
  row: number;
  label: string;
  /** Existing tube, or null for a tube this import creates. */
  tubeId: number | null;
  typeId: number;
  section: number;
  gmMicroSiemens: number | null;
  plateMilliamps: number | null;
  emissionValue: number | null;
  emissionPassMark: number | null;
  emissionFullScale: number | null;
  gridMicroamps: number | null;
  leakageMicroamps: number | null;
  shorts: string;
  heaterOpen: boolean;
  noise: string;
  /** The row's own test conditions (mapped condition columns); null: the session's. */
  heaterVolts: number | null;
  plateVolts: number | null;
  screenVolts: number | null;
  gridVolts: number | null;
}

export interface ImportPlan {
  rowCount: number;
  readings: PlannedReading[];
  newTubes: Array<{ label: string; typeId: number }>;
  updatedTubeCount: number;
  /** Readings that replace ones already in the target session (same tube and section). */
  replacedReadingCount: number;
  /** The first `problemLimit` problems, in file order. */
  problems: ImportProblem[];
  /** Exact number of problems, however many were kept. */
  problemCount: number;
}

export interface PlanLookups {
  tubeByLabel(label: string): { id: number; typeId: number } | undefined;
  resolveType(name: string): { id: number; designation: string; sectionCount: number } | undefined;
  typeById(id: number): { designation: string; sectionCount: number } | undefined;
  /** Keys `tubeId:section` already read in the target session (empty for a new session). */
  sessionReadingKeys: ReadonlySet<string>;
}

const LABEL_PATTERN = /^[\w.\-/#]+$/;
const MAX_LABEL_LENGTH = 60;
const MAX_NOISE_LENGTH = 200;
/** Sections are numbered from 1; no receiving tube has more than a handful (common practice, no source). */
const MAX_SECTION = 9;
const PLAIN_NUMBER = /^\d+(\.\d+)?$/;
const HEATER_OPEN_WORDS = new Map<string, boolean>([
  ["", false], ["no", false], ["n", false], ["0", false], ["false", false], ["ok", false], ["closed", false], ["-", false],
  ["yes", true], ["y", true], ["1", true], ["true", true], ["x", true], ["open", true],
]);

/** A parser's reason starts with the field name; the problem list shows the column separately. */
const withoutPrefix = (reason: string, prefix: string) => (reason.startsWith(`${prefix}: `) ? reason.slice(prefix.length + 2) : reason);

/**
 * Validates every row against the mapping and the stock, returning the readings to save and the
 * problems found. Pure apart from the lookups it is given; never throws on bad cells.
 */
export function planImport(table: CsvTable, mapping: ColumnMapping, lookups: PlanLookups, problemLimit = 500): ImportPlan {
  const { headers, rows, lineNumbers } = table;
  const c = mapping.columns;
  const problems: ImportProblem[] = [];
  let problemCount = 0;
  const columnName = (key: ImportFieldKey) => (c[key] !== undefined ? headers[c[key]!] : FIELD_LABELS[key]);

  // Pass 1: the type each new label is given somewhere in the file, so a tube's later rows may leave it blank.
  const declaredTypes = new Map<string, { typeId: number; row: number }>();
  if (c.type !== undefined && c.label !== undefined) {
    for (let i = 0; i < rows.length; i++) {
      const label = rows[i][c.label!] ?? "";
      const typeText = rows[i][c.type!] ?? "";
      if (!label || !typeText || declaredTypes.has(label) || lookups.tubeByLabel(label)) continue;
      const type = lookups.resolveType(typeText);
      if (type) declaredTypes.set(label, { typeId: type.id, row: lineNumbers[i] });
    }
  }

  const readings: PlannedReading[] = [];
  const seen = new Map<string, number>();
  const newLabels = new Set<string>();
  const updatedTubes = new Set<number>();
  let replacedReadingCount = 0;

  // Per-row state read by the helpers below; the helpers are made once, not once per row.
  let cells: string[] = [];
  let row = 0;
  let rowOk = true;
  let passMark: number | null = null;
  let fullScale: number | null = null;
  const problem = (column: string, reason: string) => {
    rowOk = false;
    problemCount += 1;
    if (problems.length < problemLimit) problems.push({ row, column, reason });
  };
  const cell = (key: ImportFieldKey) => (c[key] === undefined ? "" : (cells[c[key]!] ?? ""));
  const gm = (key: "gm" | "gmSection2"): number | null => {
    const text = cell(key);
    if (!text) return null;
    const name = columnName(key);
    const parsed = parseTransconductance(text, name, mapping.gmUnit);
    if (parsed.ok) return parsed.microSiemens;
    problem(name, withoutPrefix(parsed.reason, name));
    return null;
  };
  const quantity = (key: ImportFieldKey, dimension: "milliamps" | "microamps"): number | null => {
    const text = cell(key);
    if (!text) return null;
    const name = columnName(key);
    const parsed = parseQuantity(text, dimension, name);
    if (parsed.ok) return parsed.value;
    problem(name, withoutPrefix(parsed.reason, name));
    return null;
  };
  const plain = (key: ImportFieldKey): number | null => {
    const text = cell(key);
    if (!text) return null;
    if (PLAIN_NUMBER.test(text)) return Number(text);
    problem(columnName(key), `'${text}' is not a plain number on the instrument's scale`);
    return null;
  };
  const conditionVolts = (key: ConditionField): number | null => {
    const text = cell(key);
    if (!text) return null;
    const name = columnName(key);
    const parsed = parseConditionVolts(text, key, name);
    if (parsed.ok) return parsed.value;
    problem(name, withoutPrefix(parsed.reason, name));
    return null;
  };
  const emission = (key: "emissionValue" | "emissionSection2"): number | null => {
    const value = plain(key);
    if (value === null) return null;
    if (passMark === null && cell("emissionPassMark") === "") problem(columnName("emissionPassMark"), "needed when emission is given");
    if (fullScale !== null && value > fullScale) problem(columnName(key), `${value} is above the full scale ${fullScale}`);
    return value;
  };

  for (let i = 0; i < rows.length; i++) {
    cells = rows[i];
    row = lineNumbers[i];
    rowOk = true;

    if (cells.length > headers.length && cells.slice(headers.length).some((value) => value !== "")) {
      problem(`column ${headers.length + 1}`, `this row has ${cells.length} cells but the header names only ${headers.length} columns`);
    }

    // ── The tube ──
    const label = cell("label");
    const typeText = cell("type");
    let typeId: number | null = null;
    let tubeId: number | null = null;
    if (label === "") problem(columnName("label"), "the label is empty");
    else if (label.length > MAX_LABEL_LENGTH) problem(columnName("label"), `the label is longer than ${MAX_LABEL_LENGTH} characters`);
    else if (!LABEL_PATTERN.test(label)) problem(columnName("label"), `'${label}' — labels use letters, digits and . - / # only, no spaces`);
    const namedType = typeText ? lookups.resolveType(typeText) : undefined;
    if (typeText && !namedType) problem(columnName("type"), `unknown type '${typeText}' — it is not in the library (add it on the Types page first)`);
    const existing = label ? lookups.tubeByLabel(label) : undefined;
    if (existing) {
      tubeId = existing.id;
      typeId = existing.typeId;
      if (namedType && namedType.id !== existing.typeId) {
        problem(columnName("type"), `tube ${label} is recorded as ${lookups.typeById(existing.typeId)?.designation ?? "another type"}, not ${namedType.designation}; edit the tube to change its type`);
      }
    } else if (label && LABEL_PATTERN.test(label)) {
      const declared = declaredTypes.get(label);
      if (declared) {
        typeId = declared.typeId;
        if (namedType && namedType.id !== declared.typeId) {
          problem(columnName("type"), `row ${declared.row} gives ${label} the type ${lookups.typeById(declared.typeId)?.designation}, this row ${namedType.designation}`);
        }
      } else if (!typeText) {
        problem(c.type !== undefined ? columnName("type") : columnName("label"), `${label} is not in stock and no type is given — give its type so the tube can be created${c.type === undefined ? " (map a type column)" : ""}`);
      }
    }
    const sectionCount = typeId !== null ? (lookups.typeById(typeId)?.sectionCount ?? null) : null;
    const designation = typeId !== null ? (lookups.typeById(typeId)?.designation ?? "") : "";

    // ── The section ──
    const sectionText = cell("section");
    let section = 1;
    if (sectionText !== "") {
      if (!/^\d+$/.test(sectionText) || Number(sectionText) < 1 || Number(sectionText) > MAX_SECTION) {
        problem(columnName("section"), `'${sectionText}' is not a section number (1, 2 …)`);
      } else section = Number(sectionText);
    }
    if (sectionCount !== null && section > sectionCount) {
      problem(columnName("section"), `${designation} has ${sectionCount} section${sectionCount === 1 ? "" : "s"}; there is no section ${section}`);
    }

    // ── The readings ──
    passMark = plain("emissionPassMark");
    fullScale = plain("emissionFullScale") ?? (passMark !== null ? 100 : null);
    if (passMark !== null && fullScale !== null && passMark > fullScale) problem(columnName("emissionPassMark"), `pass mark ${passMark} is above the full scale ${fullScale}`);

    const heaterText = cell("heaterOpen").toLowerCase();
    const heaterOpen = HEATER_OPEN_WORDS.get(heaterText);
    if (heaterOpen === undefined) problem(columnName("heaterOpen"), `'${cell("heaterOpen")}' — write yes, no, 1, 0 or x (x = open)`);
    const shortsText = cell("shorts");
    const shorts = parseShorts(shortsText, columnName("shorts"));
    if (!shorts.ok) problem(columnName("shorts"), withoutPrefix(shorts.reason, columnName("shorts")));
    const noise = cell("noise");
    if (noise.length > MAX_NOISE_LENGTH) problem(columnName("noise"), `longer than ${MAX_NOISE_LENGTH} characters`);
    // The row's own conditions apply to every section the row fills; blank cells mean the session's.
    const plateVolts = conditionVolts("plateVolts");
    const screenVolts = conditionVolts("screenVolts");
    const gridVolts = conditionVolts("gridVolts");
    const heaterVolts = conditionVolts("heaterVolts");

    const first = {
      gmMicroSiemens: gm("gm"),
      plateMilliamps: quantity("plateMilliamps", "milliamps"),
      emissionValue: emission("emissionValue"),
      gridMicroamps: quantity("gridMicroamps", "microamps"),
      leakageMicroamps: quantity("leakageMicroamps", "microamps"),
    };
    const second = {
      gmMicroSiemens: gm("gmSection2"),
      plateMilliamps: quantity("plateMilliampsSection2", "milliamps"),
      emissionValue: emission("emissionSection2"),
    };
    const firstAny = !!(cell("gm") || cell("plateMilliamps") || cell("emissionValue") || cell("gridMicroamps") || cell("leakageMicroamps") || shortsText || heaterOpen);
    const secondAny = !!(cell("gmSection2") || cell("plateMilliampsSection2") || cell("emissionSection2"));
    if (!firstAny && !secondAny) problem(c.gm !== undefined ? columnName("gm") : columnName("label"), "no reading in this row");
    if (secondAny) {
      if (section !== 1) problem(columnName("section"), "the section-2 columns are filled, so this row must be section 1");
      else if (sectionCount !== null && sectionCount < 2) {
        const key = (["gmSection2", "plateMilliampsSection2", "emissionSection2"] as const).find((k) => cell(k) !== "")!;
        problem(columnName(key), `${designation} has only 1 section`);
      }
    }

    const sectionsOfRow: number[] = [];
    if (firstAny) sectionsOfRow.push(section);
    if (secondAny) sectionsOfRow.push(2);
    if (label) {
      for (const s of sectionsOfRow) {
        const key = `${label}\u0000${s}`;
        const earlier = seen.get(key);
        if (earlier !== undefined) problem(columnName("label"), `${label} section ${s} is already on row ${earlier}`);
        else seen.set(key, row);
      }
    }

    if (!rowOk || typeId === null) continue;
    // Plain literals rather than spreads: with 100,000 rows the spread copies cost seconds.
    const heater = heaterOpen ?? false;
    if (firstAny) {
      readings.push({
        row, label, tubeId, typeId, section,
        gmMicroSiemens: first.gmMicroSiemens, plateMilliamps: first.plateMilliamps, emissionValue: first.emissionValue,
        emissionPassMark: first.emissionValue !== null ? passMark : null, emissionFullScale: first.emissionValue !== null ? fullScale : null,
        gridMicroamps: first.gridMicroamps, leakageMicroamps: first.leakageMicroamps, shorts: shorts.ok ? shorts.value : "", heaterOpen: heater, noise,
        heaterVolts, plateVolts, screenVolts, gridVolts,
      });
    }
    if (secondAny) {
      readings.push({
        row, label, tubeId, typeId, section: 2,
        gmMicroSiemens: second.gmMicroSiemens, plateMilliamps: second.plateMilliamps, emissionValue: second.emissionValue,
        emissionPassMark: second.emissionValue !== null ? passMark : null, emissionFullScale: second.emissionValue !== null ? fullScale : null,
        gridMicroamps: null, leakageMicroamps: null, shorts: "", heaterOpen: heater, noise,
        heaterVolts, plateVolts, screenVolts, gridVolts,
      });
    }
    if (tubeId === null) newLabels.add(label);
    else {
      updatedTubes.add(tubeId);
      for (const s of sectionsOfRow) if (lookups.sessionReadingKeys.has(`${tubeId}:${s}`)) replacedReadingCount += 1;
    }
  }

  const newTubes = [...newLabels].map((label) => ({ label, typeId: declaredTypes.get(label)!.typeId }));
  return { rowCount: rows.length, readings, newTubes, updatedTubeCount: updatedTubes.size, replacedReadingCount, problems, problemCount };
}
