/**
 * The type list's filters and the "add a type" form. The form is flat text (units allowed);
 * server/types/type-form.ts assembles a `TubeTypeSpec` from it, which is then validated by the
 * same schema as the reference library (tube-type-schema.ts) and the library consistency checks.
 */
import { z } from "zod";
import { parseTransconductance } from "../engine/units/index.ts";
import { requiredText } from "./form-parsing.ts";
import { checkboxField, numberField, quantityField } from "./substitute-schemas.ts";
import { BASE_FAMILIES, SECTION_CUTOFFS, SECTION_KINDS, TUBE_CLASSES, tubeTypeSpecSchema } from "./tube-type-schema.ts";

/** An optional trimmed text field; "" is absent; the message names the field. */
const optionalField = (label: string, max: number) =>
  z.preprocess(
    (value) => (typeof value === "string" ? (value.trim() === "" ? undefined : value.trim()) : value),
    z.string({ error: `${label} must be given once, as text` }).max(max, `${label}: at most ${max} characters`).optional(),
  );

// ── List filters ──────────────────────────────────────────────────────────────────────────

const blankAsAbsent = (value: unknown) => (value === "" ? undefined : value);

export const typeListQuerySchema = z.object({
  q: optionalField("Search", 40),
  class: z.preprocess(blankAsAbsent, z.enum(TUBE_CLASSES, { error: `Class must be one of ${TUBE_CLASSES.join(", ")}` }).optional()),
  base: z.preprocess(blankAsAbsent, z.enum(BASE_FAMILIES, { error: `Base must be one of ${BASE_FAMILIES.join(", ")}` }).optional()),
});
export type TypeListQuery = z.infer<typeof typeListQuerySchema>;

// ── The add-a-type form ───────────────────────────────────────────────────────────────────

/** Sections the form offers: a seven-segment display with its dot has eight, the most in the library. */
export const TYPE_FORM_SECTIONS = 8;

/** Form field → the `MaxRatings` key it fills, with its label and unit. */
export const MAX_RATING_FIELDS = [
  { field: "maxPlateVolts", key: "plateVolts", label: "Maximum plate volts", short: "Plate V", dimension: "volts" },
  { field: "maxPlateWatts", key: "plateWatts", label: "Maximum plate watts (per section)", short: "Plate W, per section", dimension: "watts" },
  { field: "maxScreenVolts", key: "screenVolts", label: "Maximum screen volts", short: "Screen V", dimension: "volts" },
  { field: "maxScreenWatts", key: "screenWatts", label: "Maximum screen watts", short: "Screen W", dimension: "watts" },
  { field: "maxCathodeMilliamps", key: "cathodeMilliamps", label: "Maximum cathode mA (per section)", short: "Cathode mA, per section", dimension: "milliamps" },
  { field: "maxHeaterCathodeVolts", key: "heaterCathodeVolts", label: "Maximum heater–cathode volts", short: "Heater–cathode V", dimension: "volts" },
  { field: "maxPeakInverseVolts", key: "peakInverseVolts", label: "Maximum peak inverse volts", short: "Peak inverse V", dimension: "volts" },
  { field: "maxOutputMilliamps", key: "outputMilliamps", label: "Maximum output mA", short: "Output mA", dimension: "milliamps" },
] as const;

/** One section row's fields: s1Kind, s1PlateVolts, … */
export const TYPICAL_FIELDS = ["PlateVolts", "GridVolts", "ScreenVolts", "PlateMilliamps", "ScreenMilliamps", "Gm", "Mu", "Rp"] as const;
export type TypicalField = (typeof TYPICAL_FIELDS)[number];
export const typicalFieldName = (section: number, field: TypicalField | "Kind" | "Label" | "Cutoff") => `s${section}${field}`;

/** The glow discharge of the type's regulator section (regulators have one section). */
export const GLOW_FIELDS = [
  { field: "glowOperatingVolts", key: "operatingVolts", label: "Glow operating volts", short: "Holds V", dimension: "volts" },
  { field: "glowStrikingVolts", key: "strikingVolts", label: "Glow striking volts", short: "Strikes at V", dimension: "volts" },
  { field: "glowMinMilliamps", key: "minMilliamps", label: "Glow minimum mA", short: "From mA", dimension: "milliamps" },
  { field: "glowMaxMilliamps", key: "maxMilliamps", label: "Glow maximum mA", short: "To mA", dimension: "milliamps" },
] as const;

const upperText = (label: string, max: number) => optionalField(label, max).transform((value) => value?.toUpperCase());

function transconductanceField(label: string) {
  return z
    .string({ error: `${label} must be given once, as text` })
    .max(60, `${label}: at most 60 characters`)
    .optional()
    .transform((text, context) => {
      if (text === undefined || text.trim() === "") return undefined;
      const parsed = parseTransconductance(text, label, "uS");
      if (!parsed.ok) {
        context.addIssue({ code: "custom", message: parsed.reason });
        return z.NEVER;
      }
      if (parsed.microSiemens === 0) {
        context.addIssue({ code: "custom", message: `${label} must be greater than zero` });
        return z.NEVER;
      }
      return parsed.microSiemens;
    });
}

function sectionShape() {
  const shape: Record<string, z.ZodType> = {};
  for (let section = 1; section <= TYPE_FORM_SECTIONS; section += 1) {
    const name = (field: TypicalField | "Kind") => typicalFieldName(section, field);
    shape[name("Kind")] = z.preprocess(blankAsAbsent, z.enum(SECTION_KINDS, { error: `Section ${section} kind must be one of ${SECTION_KINDS.join(", ")}` }).optional());
    shape[typicalFieldName(section, "Label")] = optionalField(`Section ${section} label`, 24).transform((value) => value?.toLowerCase());
    shape[typicalFieldName(section, "Cutoff")] = z.preprocess(blankAsAbsent, z.enum(SECTION_CUTOFFS, { error: `Section ${section} cutoff must be sharp or remote` }).optional());
    shape[name("PlateVolts")] = quantityField(`Section ${section} plate volts`, "volts", { max: 5000 });
    shape[name("GridVolts")] = quantityField(`Section ${section} grid volts`, "volts", { allowNegative: true, min: -1000, max: 1000 });
    shape[name("ScreenVolts")] = quantityField(`Section ${section} screen volts`, "volts", { max: 5000 });
    shape[name("PlateMilliamps")] = quantityField(`Section ${section} plate mA`, "milliamps", { max: 2000 });
    shape[name("ScreenMilliamps")] = quantityField(`Section ${section} screen mA`, "milliamps", { max: 2000 });
    shape[name("Gm")] = transconductanceField(`Section ${section} transconductance`);
    shape[name("Mu")] = numberField(`Section ${section} µ`, { min: 0, max: 10_000, minExclusive: true });
    shape[name("Rp")] = quantityField(`Section ${section} plate resistance`, "ohms", { max: 1e9 });
  }
  return shape;
}

function glowShape() {
  const shape: Record<string, z.ZodType> = {};
  for (const glow of GLOW_FIELDS) shape[glow.field] = quantityField(glow.label, glow.dimension, { max: 5000 });
  return shape;
}

function ratingShape() {
  const shape: Record<string, z.ZodType> = {};
  for (const rating of MAX_RATING_FIELDS) shape[rating.field] = quantityField(rating.label, rating.dimension, { max: 100_000 });
  return shape;
}

const typeFormShape = {
  designation: requiredText("Designation", 30).transform((value) => value.toUpperCase()),
  aliases: upperText("Aliases", 200),
  class: z.enum(TUBE_CLASSES, { error: `Class: choose one of ${TUBE_CLASSES.join(", ")}` }),
  base: z.enum(BASE_FAMILIES, { error: `Base: choose one of ${BASE_FAMILIES.join(", ")}` }),
  basingCode: upperText("Basing code", 8),
  pins: requiredText("Pins", 2000),
  heaterVolts: quantityField("Heater volts", "volts", { max: 200 }),
  heaterAmps: quantityField("Heater amps", "amps", { max: 20 }),
  heaterHalfVolts: quantityField("Heater half volts", "volts", { max: 200 }),
  heaterHalfAmps: quantityField("Heater half amps", "amps", { max: 20 }),
  warmUpSeconds: numberField("Heater warm-up seconds", { min: 0, max: 120, minExclusive: true }),
  directlyHeated: checkboxField,
  ...ratingShape(),
  ...sectionShape(),
  ...glowShape(),
  variantOf: upperText("Variant of", 30),
  notes: optionalField("Notes", 2000),
  source: requiredText("Source", 300),
};

/** The whole form at once (every field valid); the page uses `parseTypeFormFields` to report every field in one answer. */
export const typeFormSchema = z.object(typeFormShape);
export type TypeForm = z.infer<typeof typeFormSchema>;

/**
 * Parses each field of the form on its own, so that one bad field does not hide the others:
 * returns the fields that parsed and a message for each that did not, plus the cross-field
 * rules (heater volts and amps required; centre-tap half volts and amps together).
 *
 * Example: `parseTypeFormFields({ designation: "6ab4", heaterVolts: "x" })` → values.designation "6AB4",
 * errors.heaterVolts "Heater volts: 'x' …", errors.class "Class: choose one of …".
 */
export function parseTypeFormFields(input: unknown): { values: Partial<TypeForm>; errors: Record<string, string> } {
  const body = (input ?? {}) as Record<string, unknown>;
  const values: Record<string, unknown> = {};
  const errors: Record<string, string> = {};
  for (const [field, schema] of Object.entries(typeFormShape)) {
    const result = (schema as z.ZodType).safeParse(body[field]);
    if (result.success) values[field] = result.data;
    else errors[field] = result.error.issues[0]?.message ?? `${field} is not valid`;
  }
  const glowGiven = GLOW_FIELDS.filter((glow) => values[glow.field] !== undefined);
  if (glowGiven.length > 0) {
    for (const glow of GLOW_FIELDS) {
      if (values[glow.field] === undefined && !errors[glow.field]) errors[glow.field] = `${glow.label} is required with the other glow values (a regulator needs all four)`;
    }
  }
  if (values.heaterVolts === undefined && !errors.heaterVolts) errors.heaterVolts = "Heater volts is required (0 only for a cold-cathode type)";
  if (values.heaterAmps === undefined && !errors.heaterAmps) errors.heaterAmps = "Heater amps is required (0 only for a cold-cathode type)";
  if (!errors.heaterHalfVolts && !errors.heaterHalfAmps && (values.heaterHalfVolts === undefined) !== (values.heaterHalfAmps === undefined)) {
    errors[values.heaterHalfVolts === undefined ? "heaterHalfVolts" : "heaterHalfAmps"] = "Centre-tapped heater: give both the half volts and the half amps, or neither";
  }
  return { values: values as Partial<TypeForm>, errors };
}

/** The JSON body of POST /api/types: a whole tube type, as in the reference library. */
export const newTypeBodySchema = tubeTypeSpecSchema;
