/** Turning zod results into field-named messages for forms and the API. */
import { z } from "zod";

export type FieldErrors = Record<string, string>;
export type Parsed<T> = { ok: true; data: T } | { ok: false; errors: FieldErrors };

/** Validates `input`; on failure returns the first message per field (the form shows it beside the field). */
export function parseWith<S extends z.ZodType>(schema: S, input: unknown): Parsed<z.infer<S>> {
  const result = schema.safeParse(input);
  if (result.success) return { ok: true, data: result.data };
  const errors: FieldErrors = {};
  for (const issue of result.error.issues) {
    const field = issue.path.length ? issue.path.join(".") : "_form";
    if (!errors[field]) errors[field] = issue.message;
  }
  return { ok: false, errors };
}

/** A text field that trims and turns "" into undefined. */
export const optionalText = (max: number) =>
  z.preprocess((v) => (typeof v === "string" && v.trim() === "" ? undefined : typeof v === "string" ? v.trim() : v), z.string().max(max).optional());

/** A required trimmed text field with a message naming the field. */
export const requiredText = (label: string, max: number) =>
  z.preprocess(
    (v) => (typeof v === "string" ? v.trim() : v),
    z.string({ error: `${label} is required` }).min(1, `${label} is required`).max(max, `${label}: at most ${max} characters`),
  );

/** Positive integer id in a URL. */
export const idParamSchema = z.object({ id: z.coerce.number({ error: "id must be a number" }).int().positive("id must be a positive whole number") });
