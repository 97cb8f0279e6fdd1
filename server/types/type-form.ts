/**
 * The "add a type" form: from its parsed fields to a `TubeTypeSpec`, and from the spec's field
 * paths back to the form's fields, so that every message lands beside the field it is about.
 * Pure: no IO.
 */
import type { GlowDischarge, HeaterSpec, MaxRatings, OperatingPoint, PinAssignment, PinElement, SectionSpec, TubeTypeSpec } from "../engine/tube-types/index.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import { PIN_ELEMENTS } from "../schemas/tube-type-schema.ts";
import { GLOW_FIELDS, MAX_RATING_FIELDS, TYPE_FORM_SECTIONS, TYPICAL_FIELDS, typicalFieldName, type TypeForm, type TypicalField } from "../schemas/type-form-schemas.ts";

// ── Pins ──────────────────────────────────────────────────────────────────────────────────

export type PinLines = { ok: true; pins: PinAssignment[]; lineNumbers: number[] } | { ok: false; message: string };

const PIN_LINE = /^([A-Za-z0-9-]+)\s*=\s*([A-Za-z0-9]+)(?:\s*:\s*([0-9]+))?$/;
const MAX_REPORTED_LINES = 4;

/**
 * Parses the pins textarea: one `pin=element[:section]` a line (`1=a:2`, `4=h`, `9=hct`,
 * `cap=g1:1`); blank lines and lines starting with # are skipped. Element names are those of
 * the library (a, g1, g2, g3, k, bp, h, hct, f, fct, s, ts, ic, nc), any case.
 *
 * Returns every bad line (up to four) in one message naming the line. Never throws.
 *
 * Example: `parsePinLines("1=a:2\n4=h")` → pins [{ pin: "1", element: "a", section: 2 }, { pin: "4", element: "h" }], lineNumbers [1, 2].
 */
export function parsePinLines(text: string): PinLines {
  const pins: PinAssignment[] = [];
  const lineNumbers: number[] = [];
  const problems: string[] = [];
  text.split(/\r?\n/).forEach((raw, position) => {
    const line = raw.trim();
    if (line === "" || line.startsWith("#")) return;
    const lineNumber = position + 1;
    const match = PIN_LINE.exec(line);
    if (!match) {
      problems.push(`line ${lineNumber} ("${line}") is not pin=element or pin=element:section, e.g. 1=a:2`);
      return;
    }
    const element = match[2].toLowerCase();
    if (!(PIN_ELEMENTS as readonly string[]).includes(element)) {
      problems.push(`line ${lineNumber} ("${line}"): "${match[2]}" is not an element; use ${PIN_ELEMENTS.join(", ")}`);
      return;
    }
    const label = /^[0-9]+$/.test(match[1]) ? String(Number(match[1])) : match[1].toLowerCase();
    pins.push({ pin: label, element: element as PinElement, ...(match[3] !== undefined ? { section: Number(match[3]) } : {}) });
    lineNumbers.push(lineNumber);
  });
  if (problems.length > 0) {
    const more = problems.length > MAX_REPORTED_LINES ? `; and ${problems.length - MAX_REPORTED_LINES} more` : "";
    return { ok: false, message: `Pins: ${problems.slice(0, MAX_REPORTED_LINES).join("; ")}${more}` };
  }
  if (pins.length === 0) return { ok: false, message: "Pins: list every pin, one pin=element[:section] a line (e.g. 1=a:2)" };
  return { ok: true, pins, lineNumbers };
}

/**
 * The pins as the textarea shows them.
 *
 * Example: `formatPinLines([{ pin: "1", element: "a", section: 2 }, { pin: "4", element: "h" }])` → "1=a:2\n4=h".
 */
export function formatPinLines(pins: readonly PinAssignment[]): string {
  return pins.map((pin) => `${pin.pin}=${pin.element}${pin.section !== undefined ? `:${pin.section}` : ""}`).join("\n");
}

// ── Form → spec ───────────────────────────────────────────────────────────────────────────

/** The spec as far as it could be built (null when the pins or sections cannot be read), and the form's own errors. */
export interface FormSpec {
  spec: TubeTypeSpec | null;
  errors: FieldErrors;
  pinLineNumbers: number[];
}

const TYPICAL_KEYS: Record<TypicalField, keyof OperatingPoint> = {
  PlateVolts: "plateVolts",
  GridVolts: "gridVolts",
  ScreenVolts: "screenVolts",
  PlateMilliamps: "plateMilliamps",
  ScreenMilliamps: "screenMilliamps",
  Gm: "transconductanceMicroSiemens",
  Mu: "mu",
  Rp: "plateResistanceOhms",
};

const TYPICAL_LABELS: Record<"PlateVolts" | "GridVolts" | "PlateMilliamps", string> = {
  PlateVolts: "plate volts",
  GridVolts: "grid volts",
  PlateMilliamps: "plate mA",
};

/**
 * Assembles the spec from the parsed form: aliases split on spaces or commas, pins from the
 * textarea, sections 1..N from the rows that have a kind (each with at most one typical
 * point), and the one source text for every value group entered.
 *
 * Returns form-field errors for what only the form can get wrong (a bad pin line, a section
 * row without a kind, a typical point missing its plate volts, grid volts or plate mA). The
 * spec is still built when the pins and sections can be read — an incomplete typical point
 * left out — so that the library checks can report their problems in the same answer.
 */
export function typeFormToSpec(form: Partial<TypeForm>, fieldErrors: FieldErrors = {}): FormSpec {
  const record = form as Record<string, unknown>;
  const errors: FieldErrors = { ...fieldErrors };

  const pinLines = form.pins !== undefined ? parsePinLines(form.pins) : null;
  if (pinLines !== null && !pinLines.ok) errors.pins = pinLines.message;

  const sections: SectionSpec[] = [];
  let lastKindSection = 0;
  let sectionsReadable = true;
  for (let section = 1; section <= TYPE_FORM_SECTIONS; section += 1) {
    const kind = record[typicalFieldName(section, "Kind")] as SectionSpec["kind"] | undefined;
    const given = TYPICAL_FIELDS.filter((field) => record[typicalFieldName(section, field)] !== undefined);
    if (kind === undefined) {
      if (errors[typicalFieldName(section, "Kind")] !== undefined) sectionsReadable = false;
      else if (given.length > 0) errors[typicalFieldName(section, "Kind")] = `Section ${section} kind: choose the kind of section ${section}, or clear its values`;
      continue;
    }
    if (section !== lastKindSection + 1) {
      errors[typicalFieldName(section, "Kind")] = `Section ${section} kind: sections are numbered in order; fill in section ${lastKindSection + 1} first`;
      sectionsReadable = false;
    }
    lastKindSection = section;
    const typical: OperatingPoint[] = [];
    if (given.length > 0) {
      let complete = true;
      for (const needed of ["PlateVolts", "GridVolts", "PlateMilliamps"] as const) {
        const name = typicalFieldName(section, needed);
        if (record[name] === undefined) {
          errors[name] ??= `Section ${section} ${TYPICAL_LABELS[needed]} is required for its typical point`;
          complete = false;
        }
      }
      const point: Record<string, number> = {};
      for (const field of given) point[TYPICAL_KEYS[field]] = record[typicalFieldName(section, field)] as number;
      // A field of the row that did not parse leaves the point out, like an incomplete one.
      if (complete && !TYPICAL_FIELDS.some((field) => errors[typicalFieldName(section, field)] !== undefined)) typical.push(point as unknown as OperatingPoint);
    }
    const label = record[typicalFieldName(section, "Label")] as string | undefined;
    const cutoff = record[typicalFieldName(section, "Cutoff")] as SectionSpec["cutoff"];
    sections.push({ index: section, kind, ...(label !== undefined ? { label } : {}), ...(cutoff !== undefined ? { cutoff } : {}), typical });
  }
  const glowValues = GLOW_FIELDS.map((glow) => record[glow.field] as number | undefined);
  if (glowValues.every((value) => value !== undefined)) {
    const glow = Object.fromEntries(GLOW_FIELDS.map((entry, position) => [entry.key, glowValues[position]])) as unknown as GlowDischarge;
    const regulator = sections.find((section) => section.kind === "regulator");
    if (regulator === undefined) errors.glowOperatingVolts ??= "Glow values belong to a regulator: set a section's kind to regulator, or clear them";
    else regulator.glow = glow;
  }
  if (sections.length === 0 && !errors[typicalFieldName(1, "Kind")]) errors[typicalFieldName(1, "Kind")] = "Section 1 kind: a type needs at least one section";
  const { designation, class: tubeClass, base } = form;
  // A missing source is already reported; a stand-in lets the other checks run (nothing is saved while errors remain).
  const source = form.source ?? (errors.source !== undefined ? "entered by (source missing)" : undefined);
  if (pinLines === null || !pinLines.ok || sections.length === 0 || !sectionsReadable) return { spec: null, errors, pinLineNumbers: [] };
  if (designation === undefined || tubeClass === undefined || base === undefined || source === undefined) return { spec: null, errors, pinLineNumbers: pinLines.lineNumbers };
  if (record.heaterVolts === undefined || record.heaterAmps === undefined) return { spec: null, errors, pinLineNumbers: pinLines.lineNumbers };

  const heater: HeaterSpec = { volts: record.heaterVolts as number, amps: record.heaterAmps as number };
  if (record.heaterHalfVolts !== undefined && record.heaterHalfAmps !== undefined) {
    heater.centreTap = { half: { volts: record.heaterHalfVolts as number, amps: record.heaterHalfAmps as number } };
  }
  if (form.warmUpSeconds !== undefined) heater.warmUpSeconds = form.warmUpSeconds;
  if (form.directlyHeated) heater.directlyHeated = true;
  // 0 V and 0 A is how the form says "no heater".
  if (heater.volts === 0 && heater.amps === 0) heater.coldCathode = true;

  const maxRatings: MaxRatings = {};
  for (const rating of MAX_RATING_FIELDS) {
    const value = record[rating.field];
    if (value !== undefined) maxRatings[rating.key] = value as number;
  }

  const aliases = (form.aliases ?? "").split(/[\s,;]+/).filter((alias) => alias !== "");
  const sources: Record<string, string> = { pins: source, heater: source };
  if (Object.keys(maxRatings).length > 0) sources.maxRatings = source;
  if (sections.some((section) => section.typical.length > 0 || section.glow !== undefined || section.cutoff !== undefined)) sources.sections = source;
  if (aliases.length > 0) sources.aliases = source;

  const spec: TubeTypeSpec = {
    designation,
    aliases,
    class: tubeClass,
    base,
    ...(form.basingCode !== undefined ? { basingCode: form.basingCode } : {}),
    pins: pinLines.pins,
    sections,
    heater,
    maxRatings,
    ...(form.variantOf !== undefined ? { variantOf: form.variantOf } : {}),
    ...(form.notes !== undefined ? { notes: form.notes } : {}),
    sources,
  };
  return { spec, errors, pinLineNumbers: pinLines.lineNumbers };
}

// ── Spec paths → form fields ──────────────────────────────────────────────────────────────

const HEATER_FIELDS: Record<string, string> = {
  volts: "heaterVolts",
  amps: "heaterAmps",
  warmUpSeconds: "warmUpSeconds",
  directlyHeated: "directlyHeated",
  coldCathode: "heaterVolts",
};

const TYPICAL_FIELD_OF_KEY = Object.fromEntries(Object.entries(TYPICAL_KEYS).map(([field, key]) => [key, field])) as Record<string, TypicalField>;

/**
 * The form field a spec-path error belongs beside, and a prefix naming the pin line when the
 * path points into the pin list.
 *
 * Example: `formFieldForSpecPath("pins.2.pin", [1, 2, 4])` → { field: "pins", prefix: "Pins, line 4: ", shortPrefix: "line 4: " };
 * `formFieldForSpecPath("sections.1.typical.0.plateVolts", [])` → { field: "s2PlateVolts", prefix: "Section 2: ", shortPrefix: "" }.
 */
export function formFieldForSpecPath(path: string, pinLineNumbers: readonly number[]): { field: string; prefix: string; shortPrefix: string } {
  const found = fieldForSpecPath(path, pinLineNumbers);
  const line = /line ([0-9]+)/.exec(found.prefix);
  return { ...found, shortPrefix: line ? `line ${line[1]}: ` : "" };
}

function fieldForSpecPath(path: string, pinLineNumbers: readonly number[]): { field: string; prefix: string } {
  const parts = path.split(".");
  switch (parts[0]) {
    case "designation":
    case "class":
    case "base":
    case "basingCode":
    case "variantOf":
    case "notes":
      return { field: parts[0], prefix: "" };
    case "aliases":
      return { field: "aliases", prefix: "Aliases: " };
    case "pins": {
      const line = parts[1] !== undefined ? pinLineNumbers[Number(parts[1])] : undefined;
      return { field: "pins", prefix: line !== undefined ? `Pins, line ${line}: ` : "Pins: " };
    }
    case "heater":
      if (parts[1] === "centreTap") return { field: parts[3] === "amps" ? "heaterHalfAmps" : "heaterHalfVolts", prefix: "Heater: " };
      return { field: HEATER_FIELDS[parts[1] ?? ""] ?? "heaterVolts", prefix: "Heater: " };
    case "maxRatings": {
      const rating = MAX_RATING_FIELDS.find((entry) => entry.key === parts[1]);
      return { field: rating?.field ?? "maxPlateVolts", prefix: "Maximum ratings: " };
    }
    case "sections": {
      const section = parts[1] !== undefined ? Number(parts[1]) + 1 : 1;
      if (parts[2] === "kind" || parts[2] === "index" || parts[2] === undefined) return { field: typicalFieldName(section, "Kind"), prefix: `Section ${section}: ` };
      if (parts[2] === "label") return { field: typicalFieldName(section, "Label"), prefix: `Section ${section}: ` };
      if (parts[2] === "cutoff") return { field: typicalFieldName(section, "Cutoff"), prefix: `Section ${section}: ` };
      if (parts[2] === "glow") return { field: GLOW_FIELDS.find((entry) => entry.key === parts[3])?.field ?? "glowOperatingVolts", prefix: "Glow discharge: " };
      const field = TYPICAL_FIELD_OF_KEY[parts[4] ?? ""] ?? "PlateVolts";
      return { field: typicalFieldName(section, field), prefix: `Section ${section}: ` };
    }
    case "sources":
      return { field: "source", prefix: "Source: " };
    default:
      return { field: "_form", prefix: "" };
  }
}

/**
 * Re-keys spec-path errors by form field, joining messages that land on one field. A field that
 * already has a message in `formErrors` keeps it alone (the form's own message is the one to fix first).
 */
export function formErrorsFromSpecErrors(errors: FieldErrors, pinLineNumbers: readonly number[], formErrors: FieldErrors = {}): FieldErrors {
  const byField: FieldErrors = { ...formErrors };
  for (const [path, message] of Object.entries(errors)) {
    const { field, prefix, shortPrefix } = formFieldForSpecPath(path, pinLineNumbers);
    if (formErrors[field] !== undefined) continue;
    byField[field] = byField[field] ? `${byField[field]}; ${shortPrefix}${message}` : `${prefix}${message}`;
  }
  return byField;
}
