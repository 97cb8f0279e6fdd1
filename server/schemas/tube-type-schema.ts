/**
 * The zod mirror of `TubeTypeSpec` (server/engine/tube-types): validates one entry of the
 * reference library in data/tube-types/*.json, and user-added types from forms and the API.
 *
 * This schema checks each type on its own (forms, ranges, pins and sections that refer to
 * each other). Rules that need the whole library or physics across fields (aliases unique
 * across types, variant chains, dissipation, Barkhausen's µ = gm·rp) live in
 * server/library/load-library.ts `checkLibraryConsistency`.
 */
import { z } from "zod";
import type {
  BaseFamily,
  GlowDischarge,
  HeaterSpec,
  MaxRatings,
  OperatingPoint,
  PinAssignment,
  PinElement,
  SectionKind,
  SectionSpec,
  TubeClass,
  TubeTypeSpec,
} from "../engine/tube-types/index.ts";
import { PIN_ELEMENT_NAMES } from "../engine/tube-types/index.ts";

// ── Enumerations (also used to build forms) ────────────────────────────────────────────────

export const TUBE_CLASSES = [
  "triode",
  "dual-triode",
  "pentode",
  "dual-pentode",
  "triode-pentode",
  "beam-tetrode",
  "diode",
  "dual-diode",
  "diode-triode",
  "diode-pentode",
  "heptode",
  "rectifier",
  "thyratron",
  "voltage-regulator",
  "indicator",
  "vacuum-fluorescent",
] as const satisfies readonly TubeClass[];

export const BASE_FAMILIES = ["B7G", "B9A", "octal", "loctal", "subminiature", "B8G", "other"] as const satisfies readonly BaseFamily[];

export const PIN_ELEMENTS = [
  "a",
  "g1",
  "g2",
  "g3",
  "g4",
  "g5",
  "k",
  "bp",
  "h",
  "hct",
  "f",
  "fct",
  "s",
  "ts",
  "ic",
  "nc",
] as const satisfies readonly PinElement[];

export const SECTION_KINDS = [
  "triode",
  "pentode",
  "beam-tetrode",
  "heptode",
  "diode",
  "rectifier",
  "thyratron",
  "regulator",
  "indicator",
] as const satisfies readonly SectionKind[];

/** How a pentode's plate current falls with grid bias: at a knee, or gradually for gain control. */
export const SECTION_CUTOFFS = ["sharp", "remote"] as const satisfies ReadonlyArray<NonNullable<SectionSpec["cutoff"]>>;

/** Elements that belong to one section; the others (heater, filament, shield, IC, NC) belong to the envelope. */
export const SECTION_ELEMENTS: readonly PinElement[] = ["a", "g1", "g2", "g3", "g4", "g5", "k", "bp", "ts"];

/** Plain-English names of the elements, for forms and messages (defined with the engine's shape). */
export { PIN_ELEMENT_NAMES };

// ── Field forms ────────────────────────────────────────────────────────────────────────────

/**
 * EIA, Pro Electron, CV and maker's numbers: upper-case letters and digits, optionally joined by
 * a dash or slash ("12AU7", "ECC82", "6SN7GT", "OA2" with the letter O, "5U4GB", "CV4003").
 */
export const DESIGNATION_PATTERN = /^[0-9A-Z]+(?:[-/][0-9A-Z]+)*$/;

/** Pin labels: "1".."14" on based types, "cap" for a top cap, short lead names on wire-ended types. */
export const PIN_LABEL_PATTERN = /^(?:[0-9]{1,2}|cap|[a-z][a-z0-9-]{0,11})$/;

/** EIA basing codes: a pin count and one to three letters ("9A", "7BK", "8BD", "5T"). */
export const BASING_CODE_PATTERN = /^[0-9]{1,2}[A-Z]{1,3}$/;

/**
 * `sources` keys are field paths: "pins", "heater", "maxRatings" or "maxRatings.plateVolts",
 * "sections.<section index>.typical.<0-based point>", "aliases". A key covers the fields below it.
 */
export const SOURCE_KEY_PATTERN =
  /^(?:pins|heater(?:\.[a-zA-Z]+)?|maxRatings(?:\.[a-zA-Z]+)?|aliases|class|basingCode|sections(?:\.[0-9]+(?:\.typical(?:\.[0-9]+)?|\.maxRatings(?:\.[a-zA-Z]+)?|\.glow|\.cutoff)?)?)$/;

/** Section labels: short lower-case names such as "segment a" or "dot". */
export const SECTION_LABEL_PATTERN = /^[a-z0-9][a-z0-9 .-]{0,23}$/;

/** A source names a document with its year, or says "derived: …" (from other sourced values), "entered by …" (user-added types), "common practice, no source" or the honest "from memory". */
export const SOURCE_TEXT_PATTERN = /^(?:from memory|common practice, no source|derived: .+|entered by .+|.*\b(?:18|19|20)[0-9]{2}\b.*)$/;

const designationSchema = (field: string) =>
  z
    .string({ error: `${field} must be text` })
    .regex(DESIGNATION_PATTERN, `${field} must be upper-case letters and digits, optionally joined by - or / (e.g. 12AU7, ECC82)`);

const positive = (field: string) =>
  z.number({ error: `${field} must be a number` }).finite(`${field} must be finite`).positive(`${field} must be greater than zero`);

const nonNegative = (field: string) =>
  z.number({ error: `${field} must be a number` }).finite(`${field} must be finite`).nonnegative(`${field} must not be negative`);

// ── Parts ──────────────────────────────────────────────────────────────────────────────────

export const pinAssignmentSchema = z
  .strictObject({
    pin: z.string({ error: "pin label must be text" }).regex(PIN_LABEL_PATTERN, "pin label must be a number, \"cap\" or a short lead name"),
    element: z.enum(PIN_ELEMENTS, { error: `pin element must be one of ${PIN_ELEMENTS.join(", ")}` }),
    section: z.number({ error: "pin section must be a number" }).int("pin section must be a whole number").positive("pin section must be 1 or more").optional(),
  })
  .superRefine((pin, context) => {
    if (pin.section !== undefined && !SECTION_ELEMENTS.includes(pin.element)) {
      context.addIssue({
        code: "custom",
        path: ["section"],
        message: `pin section is only for section electrodes (${SECTION_ELEMENTS.join(", ")}), not "${pin.element}"`,
      });
    }
  });

export const operatingPointSchema = z.strictObject({
  plateVolts: positive("plate volts"),
  gridVolts: z.number({ error: "grid volts must be a number" }).finite("grid volts must be finite"),
  screenVolts: positive("screen volts").optional(),
  plateMilliamps: nonNegative("plate milliamps"),
  screenMilliamps: nonNegative("screen milliamps").optional(),
  transconductanceMicroSiemens: positive("transconductance (µS)").optional(),
  mu: positive("amplification factor µ").optional(),
  plateResistanceOhms: positive("plate resistance (Ω)").optional(),
  cathodeResistorOhms: positive("cathode resistor (Ω)").optional(),
});

export const glowDischargeSchema = z
  .strictObject({
    operatingVolts: positive("glow operating volts"),
    strikingVolts: positive("glow striking volts"),
    minMilliamps: nonNegative("glow minimum milliamps"),
    maxMilliamps: positive("glow maximum milliamps"),
  })
  .superRefine((glow, context) => {
    if (glow.strikingVolts < glow.operatingVolts) {
      context.addIssue({ code: "custom", path: ["strikingVolts"], message: "glow striking volts must be at least the operating volts (a glow tube fires above the voltage it holds)" });
    }
    if (glow.minMilliamps >= glow.maxMilliamps) {
      context.addIssue({ code: "custom", path: ["maxMilliamps"], message: "glow maximum milliamps must be above the minimum" });
    }
  });

export const heaterSpecSchema = z.strictObject({
  // Zero only on cold-cathode types (glow regulators); the library check enforces that.
  volts: nonNegative("heater volts"),
  amps: nonNegative("heater amps"),
  centreTap: z
    .strictObject({
      half: z.strictObject({ volts: positive("heater half volts"), amps: positive("heater half amps") }),
    })
    .optional(),
  warmUpSeconds: positive("heater warm-up seconds").optional(),
  directlyHeated: z.boolean({ error: "directlyHeated must be true or false" }).optional(),
  coldCathode: z.boolean({ error: "coldCathode must be true or false" }).optional(),
});

export const maxRatingsSchema = z.strictObject({
  plateVolts: positive("maximum plate volts").optional(),
  plateWatts: positive("maximum plate watts").optional(),
  screenVolts: positive("maximum screen volts").optional(),
  screenWatts: positive("maximum screen watts").optional(),
  cathodeMilliamps: positive("maximum cathode milliamps").optional(),
  heaterCathodeVolts: positive("maximum heater–cathode volts").optional(),
  peakInverseVolts: positive("maximum peak inverse volts").optional(),
  outputMilliamps: positive("maximum output milliamps").optional(),
});

export const sectionSpecSchema = z
  .strictObject({
    index: z.number({ error: "section index must be a number" }).int("section index must be a whole number").positive("section index must be 1 or more"),
    kind: z.enum(SECTION_KINDS, { error: `section kind must be one of ${SECTION_KINDS.join(", ")}` }),
    label: z.string({ error: "section label must be text" }).regex(SECTION_LABEL_PATTERN, "section label must be lower-case letters, digits, spaces, dots or dashes, at most 24 characters (e.g. segment a)").optional(),
    typical: z.array(operatingPointSchema, { error: "section typical must be a list of operating points" }),
    cutoff: z.enum(SECTION_CUTOFFS, { error: 'section cutoff must be "sharp" or "remote"' }).optional(),
    maxRatings: maxRatingsSchema.optional(),
    glow: glowDischargeSchema.optional(),
  })
  .superRefine((section, context) => {
    if (section.cutoff !== undefined && section.kind !== "pentode" && section.kind !== "heptode") {
      context.addIssue({ code: "custom", path: ["cutoff"], message: `cutoff describes pentode and heptode sections, not a ${section.kind}` });
    }
    if (section.glow !== undefined && section.kind !== "regulator") {
      context.addIssue({ code: "custom", path: ["glow"], message: `glow data belong to regulator sections, not to a ${section.kind}` });
    }
  });

// ── One type ───────────────────────────────────────────────────────────────────────────────

export const tubeTypeSpecSchema = z
  .strictObject({
    designation: designationSchema("designation"),
    aliases: z.array(designationSchema("alias"), { error: "aliases must be a list" }),
    class: z.enum(TUBE_CLASSES, { error: `class must be one of ${TUBE_CLASSES.join(", ")}` }),
    base: z.enum(BASE_FAMILIES, { error: `base must be one of ${BASE_FAMILIES.join(", ")}` }),
    basingCode: z.string({ error: "basing code must be text" }).regex(BASING_CODE_PATTERN, "basing code must be a pin count and letters (e.g. 9A, 7BK)").optional(),
    pins: z.array(pinAssignmentSchema, { error: "pins must be a list" }).min(1, "pins must list every pin"),
    sections: z.array(sectionSpecSchema, { error: "sections must be a list" }).min(1, "sections must list at least one section"),
    heater: heaterSpecSchema,
    maxRatings: maxRatingsSchema,
    variantOf: designationSchema("variantOf").optional(),
    notes: z.string({ error: "notes must be text" }).max(2000, "notes must be at most 2000 characters").optional(),
    sources: z.record(
      z.string().regex(SOURCE_KEY_PATTERN),
      z.string({ error: "source must be text" }).regex(SOURCE_TEXT_PATTERN, 'source must name a document with its year, or start with "derived: " or "entered by ", or say "from memory"'),
      {
        error: (issue) =>
          issue.code === "invalid_key"
            ? "sources key must be a field path such as heater, maxRatings.plateVolts or sections.1.typical.0"
            : "sources must map field paths to where the values came from",
      },
    ),
    userAdded: z.boolean({ error: "userAdded must be true or false" }).optional(),
  })
  .superRefine((spec, context) => {
    const seenPins = new Set<string>();
    spec.pins.forEach((pin, position) => {
      if (seenPins.has(pin.pin)) context.addIssue({ code: "custom", path: ["pins", position, "pin"], message: `pin ${pin.pin} is listed twice` });
      seenPins.add(pin.pin);
    });

    const seenAliases = new Set<string>();
    spec.aliases.forEach((alias, position) => {
      if (alias === spec.designation) context.addIssue({ code: "custom", path: ["aliases", position], message: `alias ${alias} repeats the designation` });
      if (seenAliases.has(alias)) context.addIssue({ code: "custom", path: ["aliases", position], message: `alias ${alias} is listed twice` });
      seenAliases.add(alias);
    });

    const sectionIndexes = spec.sections.map((section) => section.index);
    spec.sections.forEach((section, position) => {
      if (section.index !== position + 1) {
        context.addIssue({ code: "custom", path: ["sections", position, "index"], message: `section index must be ${position + 1} (sections are numbered 1, 2, 3… in order)` });
      }
    });
    spec.pins.forEach((pin, position) => {
      if (pin.section !== undefined && !sectionIndexes.includes(pin.section)) {
        context.addIssue({ code: "custom", path: ["pins", position, "section"], message: `pin ${pin.pin} names section ${pin.section}, which is not in sections` });
      }
    });

    if (spec.variantOf === spec.designation) context.addIssue({ code: "custom", path: ["variantOf"], message: "variantOf must name another type" });

    const labels = new Set<string>();
    spec.sections.forEach((section, position) => {
      if (section.label === undefined) return;
      if (labels.has(section.label)) context.addIssue({ code: "custom", path: ["sections", position, "label"], message: `section label ${section.label} is used twice` });
      labels.add(section.label);
    });

    const heater = spec.heater;
    const zero = heater.volts === 0 && heater.amps === 0;
    if ((heater.volts === 0) !== (heater.amps === 0)) {
      context.addIssue({ code: "custom", path: ["heater"], message: "heater volts and amps must both be zero (cold cathode) or both be positive" });
    } else if (zero && heater.coldCathode !== true) {
      context.addIssue({ code: "custom", path: ["heater", "coldCathode"], message: "a heater of 0 V and 0 A must say coldCathode: true (no heater)" });
    } else if (!zero && heater.coldCathode === true) {
      context.addIssue({ code: "custom", path: ["heater", "coldCathode"], message: "a cold-cathode type has no heater: give 0 V and 0 A" });
    }
  });

/** A library file: an optional comment and its types. */
export const tubeLibraryFileSchema = z.strictObject({
  $comment: z.string({ error: "$comment must be text" }).optional(),
  types: z.array(tubeTypeSpecSchema, { error: "types must be a list of tube types" }),
});

export type TubeLibraryFile = z.infer<typeof tubeLibraryFileSchema>;

// ── The schema and the engine's shape must stay the same type, both ways ─────────────────

type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const sameTubeTypeSpec: Same<z.infer<typeof tubeTypeSpecSchema>, TubeTypeSpec> = true;
const samePinAssignment: Same<z.infer<typeof pinAssignmentSchema>, PinAssignment> = true;
const sameSectionSpec: Same<z.infer<typeof sectionSpecSchema>, SectionSpec> = true;
const sameOperatingPoint: Same<z.infer<typeof operatingPointSchema>, OperatingPoint> = true;
const sameHeaterSpec: Same<z.infer<typeof heaterSpecSchema>, HeaterSpec> = true;
const sameMaxRatings: Same<z.infer<typeof maxRatingsSchema>, MaxRatings> = true;
const sameGlowDischarge: Same<z.infer<typeof glowDischargeSchema>, GlowDischarge> = true;
const sameEnumerations: [
  Same<(typeof TUBE_CLASSES)[number], TubeClass>,
  Same<(typeof BASE_FAMILIES)[number], BaseFamily>,
  Same<(typeof PIN_ELEMENTS)[number], PinElement>,
  Same<(typeof SECTION_KINDS)[number], SectionKind>,
] = [true, true, true, true];
void [sameTubeTypeSpec, samePinAssignment, sameSectionSpec, sameOperatingPoint, sameHeaterSpec, sameMaxRatings, sameGlowDischarge, sameEnumerations];
