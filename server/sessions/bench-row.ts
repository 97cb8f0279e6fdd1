/**
 * Turns one bench row as typed (text with units) into section readings, collecting a message
 * per field. Nothing is saved unless every field parses.
 */
import { parseQuantity, parseTransconductance, type TransconductanceUnit } from "../engine/units/index.ts";
import type { BenchRowInput } from "../schemas/session-schemas.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import { CONDITION_FIELDS, NO_CONDITIONS, parseAtToken, parseConditionVolts, type ConditionValues } from "./reading-conditions.ts";

export interface ParsedSection {
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
  /** The row's own test conditions; null fields fall back to the session's. */
  heaterVolts: number | null;
  plateVolts: number | null;
  screenVolts: number | null;
  gridVolts: number | null;
}

const ELEMENTS = new Set(["a", "g1", "g2", "g3", "k", "h", "s"]);

/** "g1-k, h-k" → "g1-k,h-k"; each pair must name two different known elements. */
export function parseShorts(text: string | undefined, fieldName: string): { ok: true; value: string } | { ok: false; reason: string } {
  if (!text) return { ok: true, value: "" };
  const pairs = text.split(/[,;\s]+/).filter(Boolean);
  const cleaned: string[] = [];
  for (const pair of pairs) {
    const parts = pair.toLowerCase().split("-");
    if (parts.length !== 2 || !ELEMENTS.has(parts[0]) || !ELEMENTS.has(parts[1]) || parts[0] === parts[1]) {
      return { ok: false, reason: `${fieldName}: '${pair}' is not a pair of elements like g1-k (elements: a, g1, g2, g3, k, h, s)` };
    }
    cleaned.push(parts.sort().join("-"));
  }
  return { ok: true, value: [...new Set(cleaned)].join(",") };
}

const CONDITION_LABELS: Readonly<Record<keyof ConditionValues, string>> = { heaterVolts: "Heater volts", plateVolts: "Plate volts", screenVolts: "Screen volts", gridVolts: "Grid volts" };

/**
 * The row's own conditions: the page's "at" token, or (from the API) the four separate fields —
 * not both, so a row never carries two answers for one knob. Every section of the row gets them.
 */
export function parseRowConditions(row: Pick<BenchRowInput, "at" | "heaterVolts" | "plateVolts" | "screenVolts" | "gridVolts">, errors: FieldErrors): ConditionValues {
  const separate = CONDITION_FIELDS.filter((field) => row[field] !== undefined);
  if (row.at !== undefined && separate.length > 0) {
    errors.at = `At: give the conditions either as at (such as @250/-8.5) or as ${separate.join(", ")}, not both`;
    return { ...NO_CONDITIONS };
  }
  if (row.at !== undefined) {
    const parsed = parseAtToken(row.at, "At");
    if (!parsed.ok) errors.at = parsed.reason;
    return parsed.ok && parsed.value ? parsed.value : { ...NO_CONDITIONS };
  }
  const value: ConditionValues = { ...NO_CONDITIONS };
  for (const field of separate) {
    const parsed = parseConditionVolts(row[field]!, field, CONDITION_LABELS[field]);
    if (parsed.ok) value[field] = parsed.value;
    else errors[field] = parsed.reason;
  }
  return value;
}

export function parseBenchSections(row: BenchRowInput, sectionCount: number): { ok: true; sections: ParsedSection[] } | { ok: false; errors: FieldErrors } {
  const errors: FieldErrors = {};
  const conditions = parseRowConditions(row, errors);
  const unit = row.gmUnit as TransconductanceUnit;
  const number = (text: string | undefined, field: string, label: string, dimension: "milliamps" | "microamps" | "volts"): number | null => {
    if (!text) return null;
    const parsed = parseQuantity(text, dimension, label);
    if (!parsed.ok) {
      errors[field] = parsed.reason;
      return null;
    }
    return parsed.value;
  };
  const plain = (text: string | undefined, field: string, label: string): number | null => {
    if (!text) return null;
    const value = Number(text);
    if (!/^\d+(\.\d+)?$/.test(text) || !Number.isFinite(value)) {
      errors[field] = `${label}: '${text}' is not a plain number on the instrument's scale`;
      return null;
    }
    return value;
  };
  const passMark = plain(row.emissionPassMark, "emissionPassMark", "Emission pass mark");
  const fullScale = plain(row.emissionFullScale, "emissionFullScale", "Emission full scale") ?? (row.emissionPassMark ? 100 : null);
  if (passMark !== null && fullScale !== null && passMark > fullScale) errors.emissionPassMark = "Emission pass mark: above the full scale";

  const sections: ParsedSection[] = [];
  for (const index of [1, 2] as const) {
    const p = `s${index}` as "s1" | "s2";
    const gmText = row[`${p}Gm`];
    const fields = [gmText, row[`${p}Ia`], row[`${p}Emission`], row[`${p}Gas`], row[`${p}Leakage`], row[`${p}Shorts`]];
    const any = fields.some(Boolean);
    if (index > sectionCount) {
      if (any) errors[`${p}Gm`] = `Section ${index}: this type has only ${sectionCount} section${sectionCount === 1 ? "" : "s"}`;
      continue;
    }
    let gm: number | null = null;
    if (gmText) {
      const parsed = parseTransconductance(gmText, `Section ${index} transconductance`, unit);
      if (parsed.ok) gm = parsed.microSiemens;
      else errors[`${p}Gm`] = parsed.reason;
    }
    const emission = plain(row[`${p}Emission`], `${p}Emission`, `Section ${index} emission`);
    if (emission !== null && passMark === null) errors.emissionPassMark = "Emission pass mark: needed when emission is entered";
    if (emission !== null && fullScale !== null && emission > fullScale) errors[`${p}Emission`] = `Section ${index} emission: above the full scale ${fullScale}`;
    const shorts = parseShorts(row[`${p}Shorts`], `Section ${index} shorts`);
    if (!shorts.ok) errors[`${p}Shorts`] = shorts.reason;
    const section: ParsedSection = {
      section: index,
      gmMicroSiemens: gm,
      plateMilliamps: number(row[`${p}Ia`], `${p}Ia`, `Section ${index} plate current`, "milliamps"),
      emissionValue: emission,
      emissionPassMark: emission !== null ? passMark : null,
      emissionFullScale: emission !== null ? fullScale : null,
      gridMicroamps: number(row[`${p}Gas`], `${p}Gas`, `Section ${index} grid (gas) current`, "microamps"),
      leakageMicroamps: number(row[`${p}Leakage`], `${p}Leakage`, `Section ${index} leakage`, "microamps"),
      shorts: shorts.ok ? shorts.value : "",
      heaterOpen: row.heaterOpen,
      noise: row.noise ?? "",
      heaterVolts: conditions.heaterVolts,
      plateVolts: conditions.plateVolts,
      screenVolts: conditions.screenVolts,
      gridVolts: conditions.gridVolts,
    };
    if (any || row.heaterOpen) sections.push(section);
  }
  if (!sections.length && !Object.keys(errors).length) errors.s1Gm = "Section 1: enter at least one reading (or tick heater open)";
  return Object.keys(errors).length ? { ok: false, errors } : { ok: true, sections };
}
