/** What a restore request must carry: the confirmation and the backup itself. */
import { z } from "zod";

const CONFIRM_MESSAGE = "Confirm: tick “replace everything in this ledger” to restore";

/** The browser form: a ticked checkbox and an uploaded file (a Buffer from the multipart parser). */
export const restoreFormSchema = z.object({
  confirm: z.preprocess((value) => value === "on" || value === "1" || value === "yes" || value === true, z.literal(true, { error: CONFIRM_MESSAGE })),
  file: z
    .instanceof(Buffer, { error: "Backup file: choose a backup file (.json) to restore" })
    .refine((bytes) => bytes.length > 0, "Backup file: the chosen file is empty — choose a backup file (.json)"),
});

/** The API: the body is the backup document; `?confirm=replace` says the caller means it. */
export const restoreQuerySchema = z.object({
  confirm: z.literal("replace", { error: "confirm: add ?confirm=replace to replace everything in this ledger" }),
});

/** What the export page shows after a restore (carried through the redirect). */
export const restoredNoticeSchema = z.object({
  restored: z.literal("1").optional(),
  from: z.string().max(40).optional(),
  refreshed: z.coerce.number().int().min(0).max(100000).optional(),
});

export const exportFormatQuerySchema = z.object({
  format: z.enum(["csv", "json"], { error: "format must be csv or json" }).default("json"),
});

/** Text of an uploaded file: UTF-8, with a byte-order mark (some editors add one) dropped. */
export function uploadedText(bytes: Buffer): string {
  const text = bytes.toString("utf8");
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}
