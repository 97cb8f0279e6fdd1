/**
 * Bistable questions: the page's GET form (flat text fields, units allowed), the JSON API body
 * (numbers with their units in the names), the resistor helper, and the answers for OpenAPI.
 * Both inputs become one `BistableQuestion`, which the service turns into a circuit.
 */
import { z } from "zod";
import { parseQuantity, parseTransconductance, type QuantityOptions } from "../engine/units/index.ts";
import { checkboxField, numberField } from "./substitute-schemas.ts";

/** Typo catchers, not ratings: receiving-tube logic runs well below these (common practice, no source). */
export const MAX_SUPPLY_VOLTS = 2000;
export const MAX_RESISTOR_OHMS = 100e6;
export const MAX_TRIALS = 5000;
export const MAX_SUGGESTIONS = 10;
/** Defaults for the yield: resistor ±5 %, supplies ±5 %, tubes ±20 % of new; rules of thumb, no source. */
export const YIELD_DEFAULTS = {
  resistorTolerancePercent: 5,
  supplyDriftPercent: 5,
  tubeSpreadPercent: 20,
  trials: 500,
  seed: 1,
  minSwingVolts: 50,
  minCutoffMarginVolts: 2,
} as const;
/** Resistor helper defaults: levels within ±10 V of the targets, five suggestions (common practice, no source). */
export const HELPER_DEFAULTS = { toleranceVolts: 10, topN: 5, series: "E12" } as const;

export const CATHODE_KINDS = ["none", "common", "separate"] as const;
export const SERIES = ["E12", "E24"] as const;

// ── The internal question (also the API's shape) ──────────────────────────────────────────

const finiteNumber = (label: string) => z.number({ error: `${label} must be a number` }).finite(`${label} must be finite`);
const ohmsNumber = (label: string) =>
  finiteNumber(label).positive(`${label} must be greater than zero`).max(MAX_RESISTOR_OHMS, `${label} must be at most ${MAX_RESISTOR_OHMS} Ω`);
const voltsNumber = (label: string) => finiteNumber(label).min(-MAX_SUPPLY_VOLTS, `${label} must be at least −${MAX_SUPPLY_VOLTS} V`).max(MAX_SUPPLY_VOLTS, `${label} must be at most ${MAX_SUPPLY_VOLTS} V`);
const percentNumber = (label: string, max: number) =>
  finiteNumber(label).min(0, `${label} must not be negative`).max(max, `${label} must be at most ${max} %`);
const typeName = (label: string) =>
  z.preprocess(
    (value) => (typeof value === "string" ? value.trim() : value),
    z.string({ error: `${label} is required (e.g. 12AU7)` }).min(1, `${label} is required (e.g. 12AU7)`).max(30, `${label}: at most 30 characters`),
  );

export const screenSupplySchema = z.discriminatedUnion(
  "kind",
  [
    z.strictObject({ kind: z.literal("fixed"), volts: voltsNumber("screen volts").positive("screen volts must be above zero") }),
    z.strictObject({
      kind: z.literal("resistor"),
      supplyVolts: voltsNumber("screen supply volts").positive("screen supply volts must be above zero"),
      ohms: ohmsNumber("screen resistor ohms"),
    }),
  ],
  { error: 'screen must be { "kind": "fixed", "volts": … } or { "kind": "resistor", "supplyVolts": …, "ohms": … }' },
);

const tubeChoiceShape = {
  type: typeName("type"),
  /** Measured at the type's first typical point; scales the model's plate and screen current. */
  measuredTransconductanceMicroSiemens: finiteNumber("measured transconductance").positive("measured transconductance must be above zero").max(100_000, "measured transconductance must be at most 100000 µS").optional(),
  screen: screenSupplySchema.optional(),
};

export const bistableSideSchema = z.strictObject({
  ...tubeChoiceShape,
  plateLoadOhms: ohmsNumber("plate load ohms"),
  couplingOhms: ohmsNumber("coupling ohms (R1)"),
  gridReturnOhms: ohmsNumber("grid return ohms (R2)"),
});

export const cathodeSchema = z.discriminatedUnion(
  "kind",
  [
    z.strictObject({ kind: z.literal("grounded") }),
    z.strictObject({ kind: z.literal("common"), ohms: ohmsNumber("common cathode ohms") }),
    z.strictObject({ kind: z.literal("separate"), sideAOhms: ohmsNumber("side A cathode ohms"), sideBOhms: ohmsNumber("side B cathode ohms") }),
  ],
  { error: 'cathode must be { "kind": "grounded" }, { "kind": "common", "ohms": … } or { "kind": "separate", "sideAOhms": …, "sideBOhms": … }' },
);

export const yieldRequestSchema = z.strictObject({
  resistorTolerancePercent: percentNumber("resistor tolerance", 50).default(YIELD_DEFAULTS.resistorTolerancePercent),
  supplyDriftPercent: percentNumber("supply drift", 50).default(YIELD_DEFAULTS.supplyDriftPercent),
  tubeSpreadPercent: percentNumber("tube spread", 90).default(YIELD_DEFAULTS.tubeSpreadPercent),
  wornScale: finiteNumber("worn-tube scale").min(0.1, "worn-tube scale must be at least 0.1").max(1, "worn-tube scale must be at most 1 (1 = new)").optional(),
  trials: z.number({ error: "trials must be a number" }).int("trials must be a whole number").min(0, "trials must not be negative").max(MAX_TRIALS, `trials must be at most ${MAX_TRIALS}`).default(YIELD_DEFAULTS.trials),
  seed: z.number({ error: "seed must be a number" }).int("seed must be a whole number").min(0, "seed must not be negative").max(2 ** 31 - 1, "seed must be below 2^31").default(YIELD_DEFAULTS.seed),
  minSwingVolts: finiteNumber("minimum swing").min(0, "minimum swing must not be negative").max(MAX_SUPPLY_VOLTS).default(YIELD_DEFAULTS.minSwingVolts),
  minCutoffMarginVolts: finiteNumber("minimum cut-off margin").min(-MAX_SUPPLY_VOLTS).max(MAX_SUPPLY_VOLTS).default(YIELD_DEFAULTS.minCutoffMarginVolts),
});

const railsRefinement = (question: { bPlusVolts: number; negativeRailVolts: number }, context: z.RefinementCtx) => {
  if (!(question.negativeRailVolts < question.bPlusVolts)) {
    context.addIssue({ code: "custom", path: ["negativeRailVolts"], message: "negative rail must be below B+" });
  }
};

/** POST /api/bistable/analyze. `sideB` left out means side A's type, screen and resistors (see requestToQuestion). */
export const bistableRequestSchema = z
  .strictObject({
    bPlusVolts: voltsNumber("B+ volts").positive("B+ volts must be above zero"),
    negativeRailVolts: voltsNumber("negative rail volts"),
    sideA: bistableSideSchema,
    sideB: bistableSideSchema.optional(),
    cathode: cathodeSchema.default({ kind: "grounded" }),
    yield: yieldRequestSchema.optional(),
  })
  .superRefine(railsRefinement);
export type BistableRequest = z.infer<typeof bistableRequestSchema>;
export type BistableSideRequest = z.infer<typeof bistableSideSchema>;
export type CathodeRequest = z.infer<typeof cathodeSchema>;
export type YieldRequest = z.infer<typeof yieldRequestSchema>;

/** The question the service answers: both sides given. */
export type BistableQuestion = Omit<BistableRequest, "sideB"> & { sideB: BistableSideRequest };

/**
 * Fills in side B. Left out, it takes side A's type, screen supply and resistors but not its
 * measured gm: a measurement belongs to one tube (the form's blank side B does the same).
 */
export function requestToQuestion(request: BistableRequest): BistableQuestion {
  if (request.sideB) return { ...request, sideB: request.sideB };
  const { measuredTransconductanceMicroSiemens: _measured, ...sideA } = request.sideA;
  return { ...request, sideB: sideA };
}

export const tubeChoiceSchema = z.strictObject(tubeChoiceShape);
export type TubeChoice = z.infer<typeof tubeChoiceSchema>;

/** POST /api/bistable/resistors: E12/E24 values for a symmetric design that reaches the target levels. */
export const resistorRequestSchema = z
  .strictObject({
    bPlusVolts: voltsNumber("B+ volts").positive("B+ volts must be above zero"),
    negativeRailVolts: voltsNumber("negative rail volts"),
    sideA: tubeChoiceSchema,
    sideB: tubeChoiceSchema.optional(),
    cathode: cathodeSchema.default({ kind: "grounded" }),
    targets: z.strictObject({
      highLevelVolts: voltsNumber("target high level"),
      lowLevelVolts: voltsNumber("target low level"),
      toleranceVolts: finiteNumber("level tolerance").positive("level tolerance must be above zero").max(500).default(HELPER_DEFAULTS.toleranceVolts),
      minCutoffMarginVolts: finiteNumber("minimum cut-off margin").min(-MAX_SUPPLY_VOLTS).max(MAX_SUPPLY_VOLTS).optional(),
    }),
    series: z.enum(SERIES, { error: "series must be E12 or E24" }).default(HELPER_DEFAULTS.series),
    topN: z.number({ error: "topN must be a number" }).int("topN must be a whole number").min(1, "topN must be at least 1").max(MAX_SUGGESTIONS, `topN must be at most ${MAX_SUGGESTIONS}`).default(HELPER_DEFAULTS.topN),
  })
  .superRefine((request, context) => {
    railsRefinement(request, context);
    if (!(request.targets.highLevelVolts > request.targets.lowLevelVolts)) {
      context.addIssue({ code: "custom", path: ["targets", "highLevelVolts"], message: "target high level must be above the target low level" });
    }
  });
export type ResistorRequest = z.infer<typeof resistorRequestSchema>;

// ── The page's GET form ───────────────────────────────────────────────────────────────────

const singleText = (label: string) =>
  z.preprocess(
    (value) => (typeof value === "number" ? String(value) : value),
    z.string({ error: `${label} must be given once, as text` }).max(60, `${label}: at most 60 characters`).optional(),
  );

/** Optional text holding a quantity; "" is absent. */
function quantityText(label: string, dimension: "volts" | "ohms", options: QuantityOptions & { positive?: boolean } = {}) {
  return singleText(label).transform((text, context) => {
    if (text === undefined || text.trim() === "") return undefined;
    const parsed = parseQuantity(text, dimension, label, options);
    if (!parsed.ok) {
      context.addIssue({ code: "custom", message: parsed.reason });
      return z.NEVER;
    }
    if (options.positive && !(parsed.value > 0)) {
      context.addIssue({ code: "custom", message: `${label} must be greater than zero` });
      return z.NEVER;
    }
    return parsed.value;
  });
}

const ohmsText = (label: string) => quantityText(label, "ohms", { max: MAX_RESISTOR_OHMS, positive: true });
const railText = (label: string) => quantityText(label, "volts", { allowNegative: true, min: -MAX_SUPPLY_VOLTS, max: MAX_SUPPLY_VOLTS });
const positiveVoltsText = (label: string) => quantityText(label, "volts", { max: MAX_SUPPLY_VOLTS, positive: true });

const transconductanceText = (label: string) =>
  singleText(label).transform((text, context) => {
    if (text === undefined || text.trim() === "") return undefined;
    const parsed = parseTransconductance(text, label, "uS");
    if (!parsed.ok) {
      context.addIssue({ code: "custom", message: parsed.reason });
      return z.NEVER;
    }
    if (!(parsed.microSiemens > 0)) {
      context.addIssue({ code: "custom", message: `${label} must be above zero` });
      return z.NEVER;
    }
    return parsed.microSiemens;
  });

const optionalTypeText = (label: string) =>
  singleText(label).transform((text) => (text === undefined || text.trim() === "" ? undefined : text.trim()));

const enumText = <T extends readonly [string, ...string[]]>(label: string, values: T, fallback: T[number]) =>
  z.preprocess((value) => (value === undefined || value === "" ? fallback : value), z.enum(values, { error: `${label} must be one of ${values.join(", ")}` }));

/** The side fields of the form: aType, aGm, aPlateLoad, … and the same with b. */
export const SIDE_FIELDS = ["Type", "Gm", "PlateLoad", "Coupling", "GridReturn", "ScreenVolts", "ScreenOhms"] as const;
export type SideField = (typeof SIDE_FIELDS)[number];
export const sideFieldName = (side: "A" | "B", field: SideField) => `${side.toLowerCase()}${field}`;

function sideShape(side: "A" | "B") {
  const name = (field: SideField) => sideFieldName(side, field);
  const label = `Side ${side}`;
  return {
    [name("Type")]: optionalTypeText(`${label} tube type`),
    [name("Gm")]: transconductanceText(`${label} measured gm`),
    [name("PlateLoad")]: ohmsText(`${label} plate load`),
    [name("Coupling")]: ohmsText(`${label} coupling R1`),
    [name("GridReturn")]: ohmsText(`${label} grid return R2`),
    [name("ScreenVolts")]: positiveVoltsText(`${label} screen supply`),
    [name("ScreenOhms")]: ohmsText(`${label} screen resistor`),
  };
}

const circuitFormShape = {
  ...sideShape("A"),
  ...sideShape("B"),
  bPlus: positiveVoltsText("B+"),
  negativeRail: railText("Negative rail"),
  cathode: enumText("Cathode", CATHODE_KINDS, "none"),
  cathodeOhms: ohmsText("Common cathode resistor"),
  cathodeAOhms: ohmsText("Side A cathode resistor"),
  cathodeBOhms: ohmsText("Side B cathode resistor"),
};

const yieldFormShape = {
  yield: checkboxField,
  resistorTolerance: numberField("Resistor tolerance", { min: 0, max: 50, hint: "percent" }),
  supplyDrift: numberField("Supply drift", { min: 0, max: 50, hint: "percent" }),
  tubeSpread: numberField("Tube spread", { min: 0, max: 90, hint: "percent" }),
  wornScale: numberField("Worn-tube scale", { min: 0.1, max: 1, hint: "0.7 = a tube down to 70 % of new current still counts" }),
  trials: numberField("Trials", { min: 0, max: MAX_TRIALS, integer: true }),
  seed: numberField("Seed", { min: 0, max: 2 ** 31 - 1, integer: true }),
  minSwing: numberField("Minimum swing", { min: 0, max: MAX_SUPPLY_VOLTS, hint: "volts" }),
  minMargin: numberField("Minimum cut-off margin", { min: -MAX_SUPPLY_VOLTS, max: MAX_SUPPLY_VOLTS, hint: "volts" }),
};

const helperFormShape = {
  targetHigh: railText("Target high level"),
  targetLow: railText("Target low level"),
  levelTolerance: numberField("Level tolerance", { min: 0, max: 500, minExclusive: true, hint: "volts" }),
  series: enumText("Series", SERIES, HELPER_DEFAULTS.series),
  suggestions: numberField("Suggestions", { min: 1, max: MAX_SUGGESTIONS, integer: true }),
};

function requireFields(form: Record<string, unknown>, context: z.RefinementCtx, fields: Array<[string, string]>) {
  for (const [field, message] of fields) {
    if (form[field] === undefined) context.addIssue({ code: "custom", path: [field], message });
  }
}

function refineSupplies(form: Record<string, unknown>, context: z.RefinementCtx) {
  requireFields(form, context, [
    ["aType", "Side A tube type is required (e.g. 12AU7)"],
    ["bPlus", "B+ is required (e.g. 250)"],
    ["negativeRail", "Negative rail is required (e.g. -150; 0 for grid returns to ground)"],
  ]);
  if (typeof form.bPlus === "number" && typeof form.negativeRail === "number" && !(form.negativeRail < form.bPlus)) {
    context.addIssue({ code: "custom", path: ["negativeRail"], message: "Negative rail must be below B+" });
  }
  if (form.cathode === "common") requireFields(form, context, [["cathodeOhms", "Common cathode resistor is required when the cathodes share one"]]);
  if (form.cathode === "separate") {
    requireFields(form, context, [
      ["cathodeAOhms", "Side A cathode resistor is required for separate cathode resistors"],
      ["cathodeBOhms", "Side B cathode resistor is required for separate cathode resistors"],
    ]);
  }
}

/** GET /bistable: the circuit, optionally the yield. Side B fields left blank take side A's. */
export const bistableFormSchema = z.object({ ...circuitFormShape, ...yieldFormShape }).superRefine((form, context) => {
  const record = form as Record<string, unknown>;
  refineSupplies(record, context);
  requireFields(record, context, [
    ["aPlateLoad", "Side A plate load is required (e.g. 27k)"],
    ["aCoupling", "Side A coupling R1 is required (e.g. 220k)"],
    ["aGridReturn", "Side A grid return R2 is required (e.g. 220k)"],
  ]);
});
export type BistableForm = z.infer<typeof bistableFormSchema>;

/** GET /bistable/resistors: the tubes and supplies of the circuit form, and the targets. */
export const resistorFormSchema = z.object({ ...circuitFormShape, ...helperFormShape }).superRefine((form, context) => {
  const record = form as Record<string, unknown>;
  refineSupplies(record, context);
  requireFields(record, context, [
    ["targetHigh", "Target high level is required (e.g. 220)"],
    ["targetLow", "Target low level is required (e.g. 50)"],
  ]);
  if (typeof form.targetHigh === "number" && typeof form.targetLow === "number" && !(form.targetHigh > form.targetLow)) {
    context.addIssue({ code: "custom", path: ["targetHigh"], message: "Target high level must be above the target low level" });
  }
});
export type ResistorForm = z.infer<typeof resistorFormSchema>;

function screenOf(form: Record<string, unknown>, side: "A" | "B"): BistableSideRequest["screen"] {
  const volts = form[sideFieldName(side, "ScreenVolts")] as number | undefined;
  const ohms = form[sideFieldName(side, "ScreenOhms")] as number | undefined;
  if (volts === undefined) return undefined;
  return ohms === undefined ? { kind: "fixed", volts } : { kind: "resistor", supplyVolts: volts, ohms };
}

function tubeChoiceOf(form: Record<string, unknown>, side: "A" | "B"): TubeChoice {
  const own = form[sideFieldName(side, "Type")] as string | undefined;
  const choice: TubeChoice = { type: own ?? (form.aType as string) };
  const gm = form[sideFieldName(side, "Gm")] as number | undefined;
  if (gm !== undefined) choice.measuredTransconductanceMicroSiemens = gm;
  // A blank side B takes side A's screen supply too, unless it names a type of its own.
  const screen = screenOf(form, side) ?? (side === "B" && own === undefined ? screenOf(form, "A") : undefined);
  if (screen) choice.screen = screen;
  return choice;
}

function cathodeOf(form: { cathode: (typeof CATHODE_KINDS)[number]; cathodeOhms?: number; cathodeAOhms?: number; cathodeBOhms?: number }): CathodeRequest {
  if (form.cathode === "common") return { kind: "common", ohms: form.cathodeOhms as number };
  if (form.cathode === "separate") return { kind: "separate", sideAOhms: form.cathodeAOhms as number, sideBOhms: form.cathodeBOhms as number };
  return { kind: "grounded" };
}

/**
 * Turns the parsed form into the service's question; blank side B resistors take side A's.
 * Example: `{ aType: "12AU7", aPlateLoad: 27000, aCoupling: 220000, aGridReturn: 220000, bPlus: 250, negativeRail: -150, … }`
 * → `{ sideA: { type: "12AU7", plateLoadOhms: 27000, … }, sideB: { the same }, cathode: { kind: "grounded" }, … }`.
 */
export function bistableFormToQuestion(form: BistableForm): BistableQuestion {
  const record = form as Record<string, unknown>;
  const resistor = (side: "A" | "B", field: "PlateLoad" | "Coupling" | "GridReturn") =>
    (record[sideFieldName(side, field)] as number | undefined) ?? (record[sideFieldName("A", field)] as number);
  const side = (which: "A" | "B"): BistableSideRequest => ({
    ...tubeChoiceOf(record, which),
    plateLoadOhms: resistor(which, "PlateLoad"),
    couplingOhms: resistor(which, "Coupling"),
    gridReturnOhms: resistor(which, "GridReturn"),
  });
  const question: BistableQuestion = {
    bPlusVolts: form.bPlus as number,
    negativeRailVolts: form.negativeRail as number,
    sideA: side("A"),
    sideB: side("B"),
    cathode: cathodeOf(form),
  };
  if (form.yield) {
    question.yield = {
      resistorTolerancePercent: form.resistorTolerance ?? YIELD_DEFAULTS.resistorTolerancePercent,
      supplyDriftPercent: form.supplyDrift ?? YIELD_DEFAULTS.supplyDriftPercent,
      tubeSpreadPercent: form.tubeSpread ?? YIELD_DEFAULTS.tubeSpreadPercent,
      ...(form.wornScale !== undefined ? { wornScale: form.wornScale } : {}),
      trials: form.trials ?? YIELD_DEFAULTS.trials,
      seed: form.seed ?? YIELD_DEFAULTS.seed,
      minSwingVolts: form.minSwing ?? YIELD_DEFAULTS.minSwingVolts,
      minCutoffMarginVolts: form.minMargin ?? YIELD_DEFAULTS.minCutoffMarginVolts,
    };
  }
  return question;
}

/** The helper form as the API's resistor request. */
export function resistorFormToRequest(form: ResistorForm): ResistorRequest {
  const record = form as Record<string, unknown>;
  return {
    bPlusVolts: form.bPlus as number,
    negativeRailVolts: form.negativeRail as number,
    sideA: tubeChoiceOf(record, "A"),
    sideB: tubeChoiceOf(record, "B"),
    cathode: cathodeOf(form),
    targets: {
      highLevelVolts: form.targetHigh as number,
      lowLevelVolts: form.targetLow as number,
      toleranceVolts: form.levelTolerance ?? HELPER_DEFAULTS.toleranceVolts,
    },
    series: form.series,
    topN: form.suggestions ?? HELPER_DEFAULTS.topN,
  };
}

/** Where a service error about a question path belongs on the form. */
export function formFieldForPath(path: string): string {
  const sideMatch = /^side([AB])\.(\w+)/.exec(path);
  if (sideMatch) {
    const side = sideMatch[1] as "A" | "B";
    const fields: Record<string, SideField> = {
      type: "Type",
      measuredTransconductanceMicroSiemens: "Gm",
      screen: "ScreenVolts",
      plateLoadOhms: "PlateLoad",
      couplingOhms: "Coupling",
      gridReturnOhms: "GridReturn",
    };
    const field = fields[sideMatch[2]];
    return field ? sideFieldName(side, field) : "_form";
  }
  if (path.startsWith("bPlusVolts")) return "bPlus";
  if (path.startsWith("negativeRailVolts")) return "negativeRail";
  if (path.startsWith("cathode")) return "cathode";
  if (path.startsWith("targets.high")) return "targetHigh";
  if (path.startsWith("targets.low")) return "targetLow";
  return "_form";
}

// ── Answers (for the OpenAPI document) ────────────────────────────────────────────────────

const operatingPointSchema = z.object({
  plateVolts: z.number(),
  gridVolts: z.number(),
  cathodeVolts: z.number(),
  screenVolts: z.number().nullable(),
  plateMilliamps: z.number(),
  screenMilliamps: z.number(),
  gridMilliamps: z.number(),
  cathodeMilliamps: z.number(),
  plateWatts: z.number(),
  maxPlateWatts: z.number().nullable(),
  overDissipation: z.boolean(),
  outsideValidity: z.boolean(),
});

export const bistableStateSchema = z.object({
  stable: z.boolean(),
  onSide: z.enum(["A", "B"]).nullable(),
  sideA: operatingPointSchema,
  sideB: operatingPointSchema,
  highLevelVolts: z.number().nullable(),
  lowLevelVolts: z.number().nullable(),
  swingVolts: z.number().nullable(),
  cutoffGridVolts: z.number().nullable(),
  cutoffMarginVolts: z.number().nullable(),
  onGridMilliamps: z.number().nullable(),
  returnRatio: z.number(),
});

const worstFiguresSchema = z.object({
  swingVolts: z.number().nullable(),
  cutoffMarginVolts: z.number().nullable(),
  lowLevelVolts: z.number().nullable(),
  highLevelVolts: z.number().nullable(),
  notBistableCount: z.number().int(),
});

const sideModelSchema = z.object({
  type: z.string(),
  modelSource: z.string(),
  currentScale: z.number(),
  scaledAt: z.string().nullable(),
});

export const bistableAnswerSchema = z.object({
  bistable: z.boolean(),
  reasons: z.array(z.string()),
  warnings: z.array(z.string()),
  states: z.array(bistableStateSchema),
  levels: z
    .object({ highLevelVolts: z.number(), lowLevelVolts: z.number(), swingVolts: z.number(), cutoffMarginVolts: z.number(), onGridMilliamps: z.number() })
    .nullable(),
  loopGain: z.number().nullable(),
  stageGains: z.object({ aToB: z.number(), bToA: z.number() }).nullable(),
  cutoffDefinition: z.string(),
  solverFailure: z.string().optional(),
  sides: z.object({ A: sideModelSchema, B: sideModelSchema }),
  notes: z.array(z.string()),
  yield: z
    .object({
      factors: z.array(z.string()),
      nominal: z.object({ pass: z.boolean(), failures: z.array(z.string()) }),
      corners: z.object({
        method: z.enum(["full-factorial", "reduced"]),
        evaluated: z.number().int(),
        passed: z.number().int(),
        passFraction: z.number(),
        worst: worstFiguresSchema,
        failing: z.array(z.object({ corner: z.string(), failures: z.array(z.string()) })),
      }),
      monteCarlo: z.object({ trials: z.number().int(), seed: z.number().int(), passed: z.number().int(), passFraction: z.number(), worst: worstFiguresSchema }),
    })
    .optional(),
  caution: z.string(),
});

export const resistorAnswerSchema = z.object({
  ok: z.boolean(),
  reason: z.string().optional(),
  series: z.enum(SERIES),
  analysesRun: z.number().int(),
  suggestions: z.array(
    z.object({
      plateLoadOhms: z.number(),
      couplingOhms: z.number(),
      gridReturnOhms: z.number(),
      highLevelVolts: z.number().nullable(),
      lowLevelVolts: z.number().nullable(),
      cutoffMarginVolts: z.number().nullable(),
      loopGain: z.number().nullable(),
      levelErrorVolts: z.number(),
      worstCase: worstFiguresSchema.extend({ evaluated: z.number().int() }),
    }),
  ),
  caution: z.string(),
});
