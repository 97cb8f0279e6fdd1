/**
 * Turns one bench row as typed (text with units) into section readings, collecting a message
 * per field. Nothing is saved unless every field parses.
 */
import { parseQuantity, parseTransconductance, type TransconductanceUnit } from "../engine/units/index.ts";
import type { BenchRowInput } from "../schemas/session-schemas.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";

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

export function parseBenchSections(row: BenchRowInput, sectionCount: number): { ok: true; sections: ParsedSection[] } | { ok: false; errors: FieldErrors } {
  const errors: FieldErrors = {};
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
    };
    if (any || row.heaterOpen) sections.push(section);
  }
  if (!sections.length && !Object.keys(errors).length) errors.s1Gm = "Section 1: enter at least one reading (or tick heater open)";
  return Object.keys(errors).length ? { ok: false, errors } : { ok: true, sections };
}
