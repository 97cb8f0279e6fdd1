/** Schemas of the import forms and API, shared by the pages, the API and the OpenAPI document. */
import { z } from "zod";
import { optionalText } from "../schemas/form-parsing.ts";

/** "" from an empty select means "a new session". */
export const sessionPickSchema = z.object({
  sessionId: z.preprocess(
    (v) => (v === "" || v === undefined || v === null ? undefined : v),
    z.coerce.number({ error: "Session: choose a session from the list" }).int("Session: choose a session from the list").positive("Session: choose a session from the list").optional(),
  ),
  instrument: optionalText(80),
});

/** Query of POST /api/import; the CSV itself is the text/csv body. */
export const importApiQuerySchema = z.object({
  instrument: optionalText(80).describe("Instrument name: keys the remembered column mapping; names a new session's instrument"),
  sessionId: z.string().optional().describe("Import into this existing session; omit to create a new one from date and conditions"),
  date: optionalText(10).describe("New session: date YYYY-MM-DD"),
  heaterVolts: optionalText(30).describe("New session: heater volts (units allowed)"),
  plateVolts: optionalText(30).describe("New session: plate volts"),
  screenVolts: optionalText(30).describe("New session: screen volts"),
  gridVolts: optionalText(30).describe("New session: grid bias volts, e.g. -8.5"),
  notes: optionalText(2000).describe("New session: notes"),
  mapping: optionalText(4000).describe('Column mapping as JSON, field → header name, e.g. {"label":"Tube","gm":"Gm","gmUnit":"umho"}; default: the mapping remembered for the instrument, else guessed from the headers'),
  fileName: optionalText(200).describe("Name recorded with the import"),
  dryRun: z.enum(["true", "false"], { error: "dryRun: true or false" }).default("false").describe("true: check and report only; false: save all or nothing"),
});
export type ImportApiQuery = z.infer<typeof importApiQuerySchema>;

const problemSchema = z.object({ row: z.number().int(), column: z.string(), reason: z.string() });

export const importReportSchema = z.object({
  dryRun: z.boolean(),
  saved: z.boolean(),
  sessionId: z.number().int().nullable(),
  rows: z.number().int(),
  readings: z.number().int(),
  newTubes: z.number().int(),
  updatedTubes: z.number().int(),
  replacedReadings: z.number().int(),
  problemCount: z.number().int(),
  problems: z.array(problemSchema),
  alreadyImported: z.object({ importedAt: z.string(), sessionId: z.number().int(), sessionDate: z.string(), fileName: z.string() }).nullable(),
  mapping: z.record(z.string(), z.string()),
});
