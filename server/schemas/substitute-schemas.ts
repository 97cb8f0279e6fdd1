/**
 * Substitute questions: the page's GET form (flat text fields, units allowed), the JSON API body
 * (numbers with their units in the names), the reverse question, and the answers for OpenAPI.
 */
import { z } from "zod";
import { parseQuantity, type QuantityDimension, type QuantityOptions } from "../engine/units/index.ts";

/** Sections the form offers rows for: a seven-segment display with its dot has eight, the most in the library. */
export const MAX_FORM_SECTIONS = 8;

/** Largest supply values accepted: typo catchers, not ratings (a 117 V AC/DC string is the longest in common use; common practice, no source). */
export const MAX_HEATER_SUPPLY_VOLTS = 200;
export const MAX_STRING_MILLIAMPS = 3000;
export const MAX_WARM_UP_SECONDS = 120;
export const MAX_CIRCUIT_VOLTS = 5000;
export const MAX_CIRCUIT_MILLIAMPS = 2000;
export const MAX_TOLERANCE_PERCENT = 500;

// ── Field helpers shared with the type form ───────────────────────────────────────────────

const singleText = (label: string) =>
  z.preprocess(
    (value) => (Array.isArray(value) ? value : typeof value === "number" ? String(value) : value),
    z.string({ error: `${label} must be given once, as text` }).max(60, `${label}: at most 60 characters`).optional(),
  );

/** An optional text field holding a quantity with optional unit ("250", "250 V", "4k7"); "" is absent. */
export function quantityField(label: string, dimension: QuantityDimension, options: QuantityOptions = {}) {
  return singleText(label).transform((text, context) => {
    if (text === undefined || text.trim() === "") return undefined;
    const parsed = parseQuantity(text, dimension, label, options);
    if (!parsed.ok) {
      context.addIssue({ code: "custom", message: parsed.reason });
      return z.NEVER;
    }
    return parsed.value;
  });
}

/** An optional plain number (percent, seconds, a factor), with bounds named in the message. */
export function numberField(label: string, bounds: { min: number; max: number; minExclusive?: boolean; integer?: boolean; hint?: string }) {
  return singleText(label).transform((text, context) => {
    if (text === undefined || text.trim() === "") return undefined;
    const trimmed = text.trim();
    const value = /^[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)$/.test(trimmed) ? Number(trimmed) : Number.NaN;
    const low = bounds.minExclusive ? value <= bounds.min : value < bounds.min;
    const range = `${bounds.minExclusive ? "above" : "from"} ${bounds.min} ${bounds.minExclusive ? "and up to" : "to"} ${bounds.max}`;
    if (!Number.isFinite(value)) context.addIssue({ code: "custom", message: `${label}: '${trimmed}' is not a number${bounds.hint ? ` (${bounds.hint})` : ""}` });
    else if (low || value > bounds.max) context.addIssue({ code: "custom", message: `${label} must be ${range}${bounds.hint ? ` (${bounds.hint})` : ""}` });
    else if (bounds.integer && !Number.isInteger(value)) context.addIssue({ code: "custom", message: `${label} must be a whole number` });
    else return value;
    return z.NEVER;
  });
}

/** A checkbox: present ("on", "1", "true") or absent. */
export const checkboxField = z.preprocess((value) => value === "on" || value === "1" || value === "true" || value === true, z.boolean()).default(false);

const typeNameField = (label: string) =>
  z.preprocess(
    (value) => (typeof value === "string" ? value.trim() : value),
    z.string({ error: `${label} is required (a designation or alias, e.g. 12AU7 or ECC82)` }).min(1, `${label} is required (a designation or alias, e.g. 12AU7 or ECC82)`).max(30, `${label}: at most 30 characters`),
  );

// ── The JSON question (API) ───────────────────────────────────────────────────────────────

const positiveNumber = (label: string, max: number) =>
  z.number({ error: `${label} must be a number` }).finite(`${label} must be finite`).positive(`${label} must be greater than zero`).max(max, `${label} must be at most ${max}`);
const nonNegativeNumber = (label: string, max: number) =>
  z.number({ error: `${label} must be a number` }).finite(`${label} must be finite`).nonnegative(`${label} must not be negative`).max(max, `${label} must be at most ${max}`);

export const heaterSupplyInputSchema = z.discriminatedUnion(
  "kind",
  [
    z.strictObject({ kind: z.literal("parallel"), volts: positiveNumber("heater supply volts", MAX_HEATER_SUPPLY_VOLTS) }),
    z.strictObject({
      kind: z.literal("series"),
      milliamps: positiveNumber("series string milliamps", MAX_STRING_MILLIAMPS),
      warmUpSeconds: positiveNumber("string warm-up seconds", MAX_WARM_UP_SECONDS).optional(),
    }),
  ],
  { error: 'heater supply must be { "kind": "parallel", "volts": … } or { "kind": "series", "milliamps": …, "warmUpSeconds"?: … }' },
);
export type HeaterSupplyInput = z.infer<typeof heaterSupplyInputSchema>;

export const operatingValuesInputSchema = z.strictObject({
  section: z.number({ error: "section must be a number" }).int("section must be a whole number").min(1, "section must be 1 or more").max(MAX_FORM_SECTIONS, `section must be at most ${MAX_FORM_SECTIONS}`),
  plateVolts: positiveNumber("plate volts", MAX_CIRCUIT_VOLTS),
  plateMilliamps: nonNegativeNumber("plate milliamps", MAX_CIRCUIT_MILLIAMPS),
  screenVolts: positiveNumber("screen volts", MAX_CIRCUIT_VOLTS).optional(),
  screenMilliamps: nonNegativeNumber("screen milliamps", MAX_CIRCUIT_MILLIAMPS).optional(),
  heaterCathodeVolts: nonNegativeNumber("heater–cathode volts", MAX_CIRCUIT_VOLTS).optional(),
  plateLoadOhms: positiveNumber("plate load ohms", 1e9).optional(),
});
export type OperatingValuesInput = z.infer<typeof operatingValuesInputSchema>;

export const tolerancesInputSchema = z.strictObject({
  transconductancePercent: positiveNumber("transconductance tolerance (%)", MAX_TOLERANCE_PERCENT),
  muPercent: positiveNumber("µ tolerance (%)", MAX_TOLERANCE_PERCENT),
  plateResistancePercent: positiveNumber("plate resistance tolerance (%)", MAX_TOLERANCE_PERCENT),
});

const deratingFactorSchema = z
  .number({ error: "derating factor must be a number" })
  .finite("derating factor must be finite")
  .positive("derating factor must be above 0 (e.g. 0.8 to use at most 80 % of each maximum)")
  .max(1, "derating factor must be at most 1 (1 = the published maxima)");

export const substituteRequestSchema = z
  .strictObject({
    type: typeNameField("type"),
    heaterSupply: heaterSupplyInputSchema,
    /** Absent: each used section is checked at the socket type's first typical point. */
    operating: z.array(operatingValuesInputSchema, { error: "operating must be a list of per-section values" }).max(MAX_FORM_SECTIONS).optional(),
    allowRewire: z.boolean({ error: "allowRewire must be true or false" }).default(false),
    allowAdapter: z.boolean({ error: "allowAdapter must be true or false" }).default(false),
    tolerances: tolerancesInputSchema.optional(),
    deratingFactor: deratingFactorSchema.optional(),
  })
  .superRefine((request, context) => {
    const seen = new Set<number>();
    (request.operating ?? []).forEach((values, position) => {
      if (seen.has(values.section)) context.addIssue({ code: "custom", path: ["operating", position, "section"], message: `section ${values.section} is given twice` });
      seen.add(values.section);
    });
  });
export type SubstituteRequest = z.infer<typeof substituteRequestSchema>;

// ── The page's GET form ───────────────────────────────────────────────────────────────────

export const SUPPLY_KINDS = ["parallel", "series"] as const;
export const OPERATING_MODES = ["typical", "circuit"] as const;

/** Names of one section row's fields on the form: s1PlateVolts, s1PlateMilliamps, … */
export const SECTION_FIELDS = ["PlateVolts", "PlateMilliamps", "ScreenVolts", "ScreenMilliamps", "HeaterCathodeVolts", "PlateLoad"] as const;
export type SectionField = (typeof SECTION_FIELDS)[number];
export const sectionFieldName = (section: number, field: SectionField) => `s${section}${field}`;

function sectionRowShape() {
  const shape: Record<string, z.ZodType> = {};
  for (let section = 1; section <= MAX_FORM_SECTIONS; section += 1) {
    const name = (field: SectionField) => sectionFieldName(section, field);
    shape[name("PlateVolts")] = quantityField(`Section ${section} plate volts`, "volts", { max: MAX_CIRCUIT_VOLTS });
    shape[name("PlateMilliamps")] = quantityField(`Section ${section} plate mA`, "milliamps", { max: MAX_CIRCUIT_MILLIAMPS });
    shape[name("ScreenVolts")] = quantityField(`Section ${section} screen volts`, "volts", { max: MAX_CIRCUIT_VOLTS });
    shape[name("ScreenMilliamps")] = quantityField(`Section ${section} screen mA`, "milliamps", { max: MAX_CIRCUIT_MILLIAMPS });
    shape[name("HeaterCathodeVolts")] = quantityField(`Section ${section} heater–cathode volts`, "volts", { max: MAX_CIRCUIT_VOLTS });
    shape[name("PlateLoad")] = quantityField(`Section ${section} plate load`, "ohms", { max: 1e9 });
  }
  return shape;
}

const enumField = <T extends readonly [string, ...string[]]>(label: string, values: T, fallback: T[number]) =>
  z.preprocess((value) => (value === "" ? fallback : value), z.enum(values, { error: `${label} must be one of ${values.join(", ")}` })).default(fallback as never);

const sharedFormShape = {
  supply: enumField("Heater supply", SUPPLY_KINDS, "parallel"),
  heaterVolts: quantityField("Heater supply volts", "volts", { max: MAX_HEATER_SUPPLY_VOLTS }),
  stringMilliamps: quantityField("String current", "milliamps", { max: MAX_STRING_MILLIAMPS }),
  warmUpSeconds: numberField("String warm-up seconds", { min: 0, max: MAX_WARM_UP_SECONDS, minExclusive: true }),
  allowRewire: checkboxField,
  allowAdapter: checkboxField,
  gmTolerance: numberField("Transconductance tolerance", { min: 0, max: MAX_TOLERANCE_PERCENT, minExclusive: true, hint: "percent" }),
  muTolerance: numberField("µ tolerance", { min: 0, max: MAX_TOLERANCE_PERCENT, minExclusive: true, hint: "percent" }),
  rpTolerance: numberField("Plate resistance tolerance", { min: 0, max: MAX_TOLERANCE_PERCENT, minExclusive: true, hint: "percent" }),
  derating: numberField("Derating factor", { min: 0, max: 1, minExclusive: true, hint: "0.8 uses at most 80 % of each maximum; 1 the published maxima" }),
};

/**
 * The substitutes page's query. Parsed values stay flat (form field names) so that errors land
 * beside their fields; `substituteFormToRequest` builds the API-shaped question.
 */
export const substituteFormSchema = z
  .object({
    type: typeNameField("Type"),
    values: enumField("Operating values", OPERATING_MODES, "typical"),
    ...sharedFormShape,
    ...sectionRowShape(),
  })
  .superRefine((form, context) => {
    if (form.values !== "circuit") return;
    const record = form as Record<string, unknown>;
    let rowsGiven = 0;
    for (let section = 1; section <= MAX_FORM_SECTIONS; section += 1) {
      const filled = SECTION_FIELDS.filter((field) => record[sectionFieldName(section, field)] !== undefined);
      if (filled.length === 0) continue;
      rowsGiven += 1;
      for (const needed of ["PlateVolts", "PlateMilliamps"] as const) {
        if (record[sectionFieldName(section, needed)] === undefined) {
          context.addIssue({
            code: "custom",
            path: [sectionFieldName(section, needed)],
            message: `Section ${section} ${needed === "PlateVolts" ? "plate volts" : "plate mA"} is required when other values of section ${section} are given`,
          });
        }
      }
    }
    if (rowsGiven === 0) {
      context.addIssue({ code: "custom", path: ["values"], message: "Operating values: enter plate volts and plate mA for at least one section, or choose the type's typical values" });
    }
  });
export type SubstituteForm = z.infer<typeof substituteFormSchema>;

/** The form's question in the API's shape; a blank heater value means "the socket type's own" (filled in by the service). */
export interface SubstituteFormQuestion {
  type: string;
  heaterSupply: { kind: "parallel"; volts?: number } | { kind: "series"; milliamps?: number; warmUpSeconds?: number };
  operating?: OperatingValuesInput[];
  allowRewire: boolean;
  allowAdapter: boolean;
  tolerances?: { transconductancePercent?: number; muPercent?: number; plateResistancePercent?: number };
  deratingFactor?: number;
}

/**
 * Turns the parsed form into the question for the service.
 *
 * Example: `{ type: "12AU7", supply: "parallel", heaterVolts: 12.6, values: "typical", … }` →
 * `{ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, allowRewire: false, … }`.
 */
export function substituteFormToQuestion(form: SubstituteForm): SubstituteFormQuestion {
  const record = form as Record<string, unknown>;
  const operating: OperatingValuesInput[] = [];
  if (form.values === "circuit") {
    for (let section = 1; section <= MAX_FORM_SECTIONS; section += 1) {
      const value = (field: SectionField) => record[sectionFieldName(section, field)] as number | undefined;
      const plateVolts = value("PlateVolts");
      const plateMilliamps = value("PlateMilliamps");
      if (plateVolts === undefined || plateMilliamps === undefined) continue;
      operating.push({
        section,
        plateVolts,
        plateMilliamps,
        ...optional("screenVolts", value("ScreenVolts")),
        ...optional("screenMilliamps", value("ScreenMilliamps")),
        ...optional("heaterCathodeVolts", value("HeaterCathodeVolts")),
        ...optional("plateLoadOhms", value("PlateLoad")),
      });
    }
  }
  const tolerances = {
    ...optional("transconductancePercent", form.gmTolerance),
    ...optional("muPercent", form.muTolerance),
    ...optional("plateResistancePercent", form.rpTolerance),
  };
  return {
    type: form.type,
    heaterSupply:
      form.supply === "parallel"
        ? { kind: "parallel", ...optional("volts", form.heaterVolts) }
        : { kind: "series", ...optional("milliamps", form.stringMilliamps), ...optional("warmUpSeconds", form.warmUpSeconds) },
    ...(form.values === "circuit" ? { operating } : {}),
    allowRewire: form.allowRewire,
    allowAdapter: form.allowAdapter,
    ...(Object.keys(tolerances).length > 0 ? { tolerances } : {}),
    ...optional("deratingFactor", form.derating),
  };
}

function optional<K extends string, V>(key: K, value: V | undefined): { [P in K]?: V } {
  return (value === undefined ? {} : { [key]: value }) as { [P in K]?: V };
}

// ── The reverse question ──────────────────────────────────────────────────────────────────

export const SOCKET_SUPPLY_KINDS = ["natural", "parallel", "series"] as const;

const socketsQueryShape = {
  supply: enumField("Heater supply", SOCKET_SUPPLY_KINDS, "natural"),
  heaterVolts: sharedFormShape.heaterVolts,
  stringMilliamps: sharedFormShape.stringMilliamps,
  warmUpSeconds: sharedFormShape.warmUpSeconds,
  allowRewire: checkboxField,
  allowAdapter: checkboxField,
  derating: sharedFormShape.derating,
};

function requireSharedSupply(query: { supply: string; heaterVolts?: number; stringMilliamps?: number }, context: z.RefinementCtx) {
  if (query.supply === "parallel" && query.heaterVolts === undefined) context.addIssue({ code: "custom", path: ["heaterVolts"], message: "Heater supply volts is required for a parallel supply shared by every socket" });
  if (query.supply === "series" && query.stringMilliamps === undefined) context.addIssue({ code: "custom", path: ["stringMilliamps"], message: "String current is required for a series string shared by every socket" });
}

/** /substitutes/sockets: which sockets could a held type fill? */
export const socketsQuerySchema = z.object({ type: typeNameField("Type").optional(), ...socketsQueryShape }).superRefine(requireSharedSupply);

/** /api/types/{designation}/sockets: the same question, the type in the path. */
export const socketsApiQuerySchema = z.object(socketsQueryShape).superRefine(requireSharedSupply);
export type SocketsQuery = z.infer<typeof socketsApiQuerySchema>;

// ── Answers (for the OpenAPI document) ────────────────────────────────────────────────────

const pinWorkSchema = z.object({ element: z.string(), section: z.number().optional(), fromPin: z.string(), toPin: z.string(), description: z.string() });

export const candidateSchema = z.object({
  designation: z.string(),
  relation: z.enum(["same-type", "variant", "substitute"]),
  score: z.number(),
  pins: z.object({
    fit: z.enum(["direct", "rewire", "adapter"]),
    moves: z.array(pinWorkSchema),
    jumpers: z.array(pinWorkSchema),
    removals: z.array(z.object({ element: z.string(), section: z.number().optional(), pin: z.string(), description: z.string() })),
    adapterMap: z.array(z.object({ element: z.string(), section: z.number().optional(), socketPins: z.array(z.string()), candidatePins: z.array(z.string()) })),
    sectionMapping: z.array(z.object({ socketSection: z.number(), candidateSection: z.number() })),
    operationCount: z.number(),
    note: z.string(),
  }),
  heater: z.object({
    fit: z.enum(["same", "compatible", "needs-change"]),
    details: z.string(),
    heaterCurrentDeltaAmps: z.number(),
    seriesStringNote: z.string().optional(),
    candidateMode: z.enum(["full", "half", "none"]),
    candidateHeaterVolts: z.number(),
    candidateHeaterAmps: z.number(),
  }),
  ratings: z.array(z.object({ rating: z.string(), section: z.number().optional(), circuitValue: z.number(), maxValue: z.number(), deratedMax: z.number(), headroomPercent: z.number(), ok: z.boolean() })),
  characteristics: z.object({
    gmDeltaPercent: z.number().nullable(),
    muDeltaPercent: z.number().nullable(),
    rpDeltaPercent: z.number().nullable(),
    gainChangePercent: z.number().nullable(),
    note: z.string(),
    distance: z.number(),
    outsideTolerance: z.array(z.string()),
    sections: z.array(z.record(z.string(), z.unknown())),
  }),
  inStockGood: z.number().int(),
  explanation: z.array(z.string()),
});

export const excludedSchema = z.object({ designation: z.string(), reasons: z.array(z.string()) });

export const substituteAnswerSchema = z.object({
  socketType: z.string(),
  heaterSupply: heaterSupplyInputSchema,
  deratingFactor: z.number(),
  operatingFromTypical: z.boolean(),
  caution: z.string(),
  candidates: z.array(candidateSchema),
  excluded: z.array(excludedSchema),
});

export const socketsAnswerSchema = z.object({
  heldType: z.string(),
  inStockGood: z.number().int(),
  caution: z.string(),
  fits: z.array(z.object({ socketDesignation: z.string(), socketInStockGood: z.number().int(), heaterSupply: heaterSupplyInputSchema, candidate: candidateSchema })),
  misses: z.array(z.object({ socketDesignation: z.string(), reasons: z.array(z.string()) })),
});
