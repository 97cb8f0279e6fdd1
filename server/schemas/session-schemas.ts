/** Test session and bench-entry schemas, shared by pages, API and the OpenAPI document. */
import { z } from "zod";
import { optionalText, requiredText } from "./form-parsing.ts";

const isoDate = z.preprocess(
  (v) => (typeof v === "string" ? v.trim() : v),
  z
    .string({ error: "Date is required" })
    .regex(/^\d{4}-\d{2}-\d{2}$/, "Date: use YYYY-MM-DD")
    .refine((s) => !Number.isNaN(Date.parse(s + "T00:00:00Z")) && new Date(s + "T00:00:00Z").toISOString().startsWith(s), "Date: not a real calendar date"),
);

/** Conditions arrive as text from forms (units allowed) or numbers from the API; the route converts them. */
const conditionText = optionalText(30);

export const sessionInputSchema = z.object({
  date: isoDate,
  instrument: requiredText("Instrument", 80),
  heaterVolts: conditionText,
  plateVolts: conditionText,
  screenVolts: conditionText,
  gridVolts: conditionText,
  notes: optionalText(2000),
});
export type SessionInput = z.infer<typeof sessionInputSchema>;

export const GM_UNITS = ["uS", "umho", "mA/V"] as const;

/** One keyboard row at the bench: a tube and its per-section readings, all as typed. */
export const benchRowSchema = z.object({
  label: requiredText("Label", 60).pipe(z.string().regex(/^[\w.\-/#]+$/, "Label: letters, digits and . - / # only, no spaces")),
  type: optionalText(30),
  createTube: z.preprocess((v) => v === "1" || v === "on" || v === true, z.boolean()),
  location: optionalText(60),
  gmUnit: z.enum(GM_UNITS, { error: "Unit must be µS, µmho or mA/V" }).default("uS"),
  s1Gm: optionalText(30),
  s1Ia: optionalText(30),
  s1Emission: optionalText(30),
  s1Gas: optionalText(30),
  s1Leakage: optionalText(30),
  s1Shorts: optionalText(60),
  s2Gm: optionalText(30),
  s2Ia: optionalText(30),
  s2Emission: optionalText(30),
  s2Gas: optionalText(30),
  s2Leakage: optionalText(30),
  s2Shorts: optionalText(60),
  emissionPassMark: optionalText(30),
  emissionFullScale: optionalText(30),
  heaterOpen: z.preprocess((v) => v === "1" || v === "on" || v === true, z.boolean()),
  noise: optionalText(200),
  at: optionalText(60).describe(
    "This row's own test conditions when the tester was set for its type: plate/grid (@250/-8.5) or plate/screen/grid (@250/150/-1) in volts, optionally h<heater volts> (@250/-8.5 h12.6); fields left out come from the session. Omit to use the session's conditions",
  ),
  heaterVolts: conditionText.describe("This row's own heater volts (instead of at); omitted: the session's"),
  plateVolts: conditionText.describe("This row's own plate volts (instead of at); omitted: the session's"),
  screenVolts: conditionText.describe("This row's own screen volts (instead of at); omitted: the session's"),
  gridVolts: conditionText.describe("This row's own grid bias volts, e.g. -8.5 (instead of at); omitted: the session's"),
});
export type BenchRowInput = z.infer<typeof benchRowSchema>;

export const sessionSchema = z.object({
  id: z.number().int(),
  date: z.string(),
  instrument: z.string(),
  heaterVolts: z.number().nullable(),
  plateVolts: z.number().nullable(),
  screenVolts: z.number().nullable(),
  gridVolts: z.number().nullable(),
  notes: z.string(),
});

/** The conditions a reading was judged at, and whether they are its own or the session's. */
export const judgedAtSchema = z.object({
  heaterVolts: z.number().nullable(),
  plateVolts: z.number().nullable(),
  screenVolts: z.number().nullable(),
  gridVolts: z.number().nullable(),
  source: z.enum(["own", "session"]).describe("own: the reading gives at least one condition (the rest come from the session); session: it gives none"),
  text: z.string().describe('The same for display, e.g. "plate 250 V, grid -8.5 V"'),
});

export const readingSchema = z.object({
  id: z.number().int(),
  sessionId: z.number().int(),
  tubeId: z.number().int(),
  section: z.number().int(),
  gmMicroSiemens: z.number().nullable(),
  plateMilliamps: z.number().nullable(),
  emissionValue: z.number().nullable(),
  emissionPassMark: z.number().nullable(),
  emissionFullScale: z.number().nullable(),
  gridMicroamps: z.number().nullable(),
  leakageMicroamps: z.number().nullable(),
  shorts: z.string(),
  heaterOpen: z.boolean(),
  noise: z.string(),
  createdAt: z.string(),
  heaterVolts: z.number().nullable().describe("The reading's own heater volts; null: the session's"),
  plateVolts: z.number().nullable().describe("The reading's own plate volts; null: the session's"),
  screenVolts: z.number().nullable().describe("The reading's own screen volts; null: the session's"),
  gridVolts: z.number().nullable().describe("The reading's own grid volts; null: the session's"),
  judgedAt: judgedAtSchema,
});

/** One section's judgement as the API returns it (the verdicts engine's section result). */
const sectionResultSchema = z.object({
  section: z.number().int(),
  basis: z.enum(["transconductance", "emission", "none"]),
  percentOfReference: z.number().nullable(),
  referenceMicroSiemens: z.number().nullable(),
  reference: z.record(z.string(), z.unknown()).nullable().describe("The matched typical operating point of the type"),
  emissionPercentOfFullScale: z.number().nullable(),
  comparable: z.boolean(),
  notComparableReason: z.string().optional(),
  hardFailure: z.boolean(),
  status: z.enum(["good", "worn", "failed", "untested", "not-comparable"]),
  reasons: z.array(z.string()),
});

/** One tube of a session: its readings, each with the conditions it was judged at, and its verdict. */
export const sessionTubeSchema = z.object({
  tubeId: z.number().int(),
  label: z.string(),
  type: z.string(),
  readings: z.array(readingSchema),
  verdict: z.enum(["good", "worn", "failed", "untested", "not-comparable"]),
  balancePercent: z.number().nullable(),
  sections: z.array(sectionResultSchema),
});

export const sessionDetailSchema = sessionSchema.extend({ createdAt: z.string(), tubes: z.array(sessionTubeSchema) });
