/**
 * Pairing questions: the page's GET form, the JSON API body, reservations, and the answers for
 * OpenAPI. Both inputs become one `PairingQuestion`.
 */
import { z } from "zod";
import { numberField } from "./substitute-schemas.ts";

/** Largest balance tolerance accepted: a typo catcher (common practice, no source). */
export const MAX_TOLERANCE_PERCENT = 50;
export const MAX_STAGES = 100_000;
export const MAX_TYPES = 8;
export const MAX_RESERVE_TUBES = 5000;
export const SET_SIZES = [2, 4] as const;
/** The page's envelope choice: any two sections, only a tube's own two, or only sections of different tubes. */
export const ENVELOPE_CHOICES = ["any", "same", "across"] as const;
/** A 3 % rule on gm: a rule of thumb for balanced flip-flop halves (common practice, no source). */
export const DEFAULT_GM_TOLERANCE_PERCENT = 3;

const typeNameSchema = z
  .string({ error: "each type must be a designation or alias as text" })
  .trim()
  .min(1, "a type may not be blank")
  .max(30, "a type: at most 30 characters");

const percentSchema = (label: string) =>
  z
    .number({ error: `${label} must be a number` })
    .finite(`${label} must be finite`)
    .positive(`${label} must be above 0 %`)
    .max(MAX_TOLERANCE_PERCENT, `${label} must be at most ${MAX_TOLERANCE_PERCENT} %`);

export const pairingRequestSchema = z.strictObject({
  /** The first is the type wanted; the others are substitutes whose tubes may join. */
  types: z.array(typeNameSchema, { error: "types must be a list of designations, e.g. [\"12AU7\"]" }).min(1, "types: give at least one type").max(MAX_TYPES, `types: at most ${MAX_TYPES}`),
  rule: z.strictObject({
    transconductancePercent: percentSchema("rule.transconductancePercent"),
    plateCurrentPercent: percentSchema("rule.plateCurrentPercent").optional(),
  }),
  stages: z.number({ error: "stages must be a number" }).int("stages must be a whole number").min(1, "stages must be at least 1").max(MAX_STAGES).optional(),
  allowSameEnvelope: z.boolean({ error: "allowSameEnvelope must be true or false" }).default(true),
  allowAcrossEnvelopes: z.boolean({ error: "allowAcrossEnvelopes must be true or false" }).default(true),
  setSize: z.union([z.literal(2), z.literal(4)], { error: "setSize must be 2 or 4" }).default(2),
});
export type PairingRequest = z.infer<typeof pairingRequestSchema>;
export type PairingQuestion = PairingRequest;

export const reserveRequestSchema = z.strictObject({
  tubeIds: z
    .array(z.number({ error: "tubeIds must be numbers" }).int("tubeIds must be whole numbers").positive("tubeIds must be positive"), { error: "tubeIds must be a list of tube ids" })
    .min(1, "tubeIds: give at least one tube")
    .max(MAX_RESERVE_TUBES, `tubeIds: at most ${MAX_RESERVE_TUBES}`)
    .refine((ids) => new Set(ids).size === ids.length, "tubeIds: each tube only once"),
  note: z.string({ error: "note must be text" }).trim().max(200, "note: at most 200 characters").optional(),
});
export type ReserveRequest = z.infer<typeof reserveRequestSchema>;

// ── The page's GET form ───────────────────────────────────────────────────────────────────

const singleText = (label: string, max: number) =>
  z.preprocess(
    (value) => (typeof value === "string" ? value.trim() : value),
    z.string({ error: `${label} must be given once, as text` }).max(max, `${label}: at most ${max} characters`).optional(),
  );

export const pairingFormSchema = z
  .object({
    type: singleText("Type", 30),
    also: singleText("Substitute types", 200),
    gmTolerance: numberField("gm tolerance", { min: 0, max: MAX_TOLERANCE_PERCENT, minExclusive: true, hint: "percent, e.g. 3" }),
    iaTolerance: numberField("Plate current tolerance", { min: 0, max: MAX_TOLERANCE_PERCENT, minExclusive: true, hint: "percent; blank to pair on gm alone" }),
    stages: numberField("Stages wanted", { min: 1, max: MAX_STAGES, integer: true, hint: "blank for as many as the stock gives" }),
    envelopes: z.preprocess((value) => (value === undefined || value === "" ? "any" : value), z.enum(ENVELOPE_CHOICES, { error: `Envelopes must be one of ${ENVELOPE_CHOICES.join(", ")}` })),
    setSize: z.preprocess((value) => (value === undefined || value === "" ? "2" : value), z.enum(["2", "4"], { error: "Set size must be 2 or 4" })),
  })
  .superRefine((form, context) => {
    if (!form.type) context.addIssue({ code: "custom", path: ["type"], message: "Type is required (a designation or alias, e.g. 12AU7)" });
    const also = (form.also ?? "").split(/[,;\s]+/).filter(Boolean);
    if (also.length + 1 > MAX_TYPES) context.addIssue({ code: "custom", path: ["also"], message: `Substitute types: at most ${MAX_TYPES - 1}` });
    if (also.some((name) => name.length > 30)) context.addIssue({ code: "custom", path: ["also"], message: "Substitute types: each at most 30 characters" });
  });
export type PairingForm = z.infer<typeof pairingFormSchema>;

/** The parsed form as the question (blank gm tolerance takes the default). */
export function pairingFormToQuestion(form: PairingForm): PairingQuestion {
  const also = (form.also ?? "").split(/[,;\s]+/).filter(Boolean);
  return {
    types: [form.type as string, ...also],
    rule: {
      transconductancePercent: form.gmTolerance ?? DEFAULT_GM_TOLERANCE_PERCENT,
      ...(form.iaTolerance !== undefined ? { plateCurrentPercent: form.iaTolerance } : {}),
    },
    ...(form.stages !== undefined ? { stages: form.stages } : {}),
    allowSameEnvelope: form.envelopes !== "across",
    allowAcrossEnvelopes: form.envelopes !== "same",
    setSize: form.setSize === "4" ? 4 : 2,
  };
}

/** The reserve button's form: the chosen tubes' ids, comma-separated, and the pairing query to return to. */
export const reserveFormSchema = z.object({
  tubes: z.preprocess(
    (value) => (typeof value === "string" ? value.trim() : value),
    z
      .string({ error: "Tubes must be given once, as a list of ids" })
      .min(1, "Tubes: nothing to reserve")
      .max(60_000, "Tubes: too many")
      .regex(/^\d+(,\d+)*$/, "Tubes must be a comma-separated list of tube ids"),
  ),
  back: singleText("Return address", 2000),
  note: singleText("Note", 200),
});

/** Where a question's path belongs on the form. */
export function pairingFieldForPath(path: string): string {
  if (path === "types.0" || path === "types") return "type";
  if (path.startsWith("types.")) return "also";
  if (path.startsWith("rule.transconductance")) return "gmTolerance";
  if (path.startsWith("rule.plateCurrent")) return "iaTolerance";
  if (path === "stages") return "stages";
  return "_form";
}

// ── Answers (for the OpenAPI document) ────────────────────────────────────────────────────

const sectionSchema = z.object({
  tubeId: z.number().int(),
  label: z.string(),
  type: z.string(),
  section: z.number().int(),
  transconductanceMicroSiemens: z.number().nullable(),
  plateMilliamps: z.number().nullable(),
});

export const pairingAnswerSchema = z.object({
  types: z.array(z.string()),
  rule: pairingRequestSchema.shape.rule,
  candidates: z.object({ tubes: z.number().int(), sections: z.number().int(), notGoodInStock: z.number().int() }),
  method: z.string(),
  pairs: z.array(
    z.object({
      a: sectionSchema,
      b: sectionSchema,
      differencesPercent: z.array(z.number()),
      imbalance: z.number(),
      sameEnvelope: z.boolean(),
      explanation: z.string(),
    }),
  ),
  groups: z.array(z.object({ members: z.array(sectionSchema), spreadPercent: z.array(z.number()), imbalance: z.number(), explanation: z.string() })),
  leftovers: z.array(sectionSchema.extend({ reasonCode: z.string(), reason: z.string() })),
  greedy: z.object({ pairs: z.number().int(), totalImbalance: z.number() }).nullable(),
  stats: z.record(z.string(), z.unknown()),
  tubeIds: z.array(z.number().int()),
});

export const reserveAnswerSchema = z.object({
  reserved: z.array(z.object({ id: z.number().int(), label: z.string(), type: z.string(), state: z.string() })),
});
