/** Tube (one physical tube) schemas shared by the pages, the API and the OpenAPI document. */
import { z } from "zod";
import { optionalText, requiredText } from "./form-parsing.ts";

export const TUBE_STATES = ["stock", "reserved", "installed", "retired"] as const;
export const VERDICTS = ["good", "worn", "failed", "untested", "not-comparable"] as const;

export const tubeStateSchema = z.enum(TUBE_STATES, { error: `State must be one of ${TUBE_STATES.join(", ")}` });

export const tubeInputSchema = z.object({
  label: requiredText("Label", 60).pipe(z.string().regex(/^[\w.\-/#]+$/, "Label: letters, digits and . - / # only, no spaces")),
  type: requiredText("Type", 30),
  maker: optionalText(60),
  dateCode: optionalText(30),
  location: optionalText(60),
  state: tubeStateSchema.default("stock"),
  notes: optionalText(2000),
});
export type TubeInput = z.infer<typeof tubeInputSchema>;

export const tubePatchSchema = tubeInputSchema.partial().extend({ note: optionalText(500) });

export const moveSchema = z.object({
  location: requiredText("Location", 60),
  note: optionalText(500),
});

export const stateChangeSchema = z.object({ state: tubeStateSchema, note: optionalText(500) });

export const tubeListQuerySchema = z.object({
  type: optionalText(30),
  state: z.preprocess((v) => (v === "" ? undefined : v), z.enum([...TUBE_STATES, "active"]).optional()),
  location: optionalText(60),
  verdict: z.preprocess((v) => (v === "" ? undefined : v), z.enum(VERDICTS).optional()),
  q: optionalText(60),
  page: z.coerce.number().int().min(1).max(100000).default(1),
  pageSize: z.coerce.number().int().min(10).max(500).default(50),
});
export type TubeListQuery = z.infer<typeof tubeListQuerySchema>;

export const tubeSchema = z.object({
  id: z.number().int(),
  label: z.string(),
  type: z.string(),
  maker: z.string(),
  dateCode: z.string(),
  location: z.string(),
  state: tubeStateSchema,
  notes: z.string(),
  verdict: z.enum(VERDICTS),
  percentOfReference: z.number().nullable(),
});
