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

export const readingSchema = z.object({
  tubeId: z.number().int(),
  label: z.string(),
  type: z.string(),
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
});
