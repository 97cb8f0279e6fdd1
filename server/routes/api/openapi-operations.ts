/** API operations of the import, export and backup routes, listed for the OpenAPI document. */
import { z } from "zod";
import type { ApiOperation } from "./openapi.ts";
import { backupDocumentOutlineSchema } from "../../backup/backup-format.ts";
import { exportFormatQuerySchema, restoreQuerySchema } from "../../backup/restore-input.ts";
import { importApiQuerySchema, importReportSchema } from "../../imports/import-schemas.ts";

const restoreSummarySchema = z.object({
  restored: z.literal(true),
  backupCreatedAt: z.string(),
  rows: z.record(z.string(), z.number().int()),
  referenceTypesRefreshed: z.number().int(),
});

export const apiOperations: ApiOperation[] = [
  {
    method: "get", path: "/api/export/tubes", tag: "export", query: exportFormatQuerySchema, responseType: "text/csv",
    summary: "The stock, one row per tube (format=csv, or json for an array of tubes); streamed, with a dated file name",
  },
  {
    method: "get", path: "/api/export/readings", tag: "export", query: exportFormatQuerySchema, responseType: "text/csv",
    summary: "Every section reading with its tube, type, session date, instrument and conditions (format=csv or json); streamed",
  },
  {
    method: "get", path: "/api/backup", tag: "export", response: backupDocumentOutlineSchema,
    summary: "Full backup: every row of every table, ids included (format tubeledger-backup, version 1)",
  },
  {
    method: "post", path: "/api/backup/restore", tag: "export", query: restoreQuerySchema, body: backupDocumentOutlineSchema, response: restoreSummarySchema,
    summary: "Replace everything in this ledger with a backup (requires ?confirm=replace); all-or-nothing, checked fully first",
  },
  {
    method: "post", path: "/api/import", tag: "import", query: importApiQuerySchema, body: z.string(), bodyType: "text/csv", response: importReportSchema,
    summary: "Import a CSV of readings (text/csv body). dryRun=true reports counts and every problem by row and column (200); otherwise saves all or nothing (201), 422 when the file has problems, 409 when this exact file was imported before",
  },
];
