/** API operations of the import, export and backup routes, listed for the OpenAPI document. */
import { z } from "zod";
import type { ApiOperation } from "./openapi.ts";
import { backupDocumentOutlineSchema } from "../../backup/backup-format.ts";
import { exportFormatQuerySchema, restoreQuerySchema } from "../../backup/restore-input.ts";
import { importApiQuerySchema, importReportSchema } from "../../imports/import-schemas.ts";
import { bistableAnswerSchema, bistableRequestSchema, resistorAnswerSchema, resistorRequestSchema } from "../../schemas/bistable-schemas.ts";
import { pairingAnswerSchema, pairingRequestSchema, reserveAnswerSchema, reserveRequestSchema } from "../../schemas/pairing-schemas.ts";
import { socketsAnswerSchema, socketsApiQuerySchema, substituteAnswerSchema, substituteRequestSchema } from "../../schemas/substitute-schemas.ts";
import { newTypeBodySchema, typeListQuerySchema } from "../../schemas/type-form-schemas.ts";
import { heaterSpecSchema } from "../../schemas/tube-type-schema.ts";
import { acceptSubstituteSchema, buildCheckAnswerSchema, buildInputSchema, buildSummarySchema, installApiSchema, reservationAnswerSchema } from "../../schemas/build-schemas.ts";

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
    summary: "Every section reading with its tube, type, its own test conditions (reading_*_V; blank: the session's), session date, instrument and session conditions (format=csv or json); streamed",
  },
  {
    method: "get", path: "/api/backup", tag: "export", response: backupDocumentOutlineSchema,
    summary: "Full backup: every row of every table, ids included (format tubeledger-backup, version 2: readings carry their own test conditions; a restore still reads version 1)",
  },
  {
    method: "post", path: "/api/backup/restore", tag: "export", query: restoreQuerySchema, body: backupDocumentOutlineSchema, response: restoreSummarySchema,
    summary: "Replace everything in this ledger with a backup (requires ?confirm=replace); all-or-nothing, checked fully first",
  },
  {
    method: "post", path: "/api/import", tag: "import", query: importApiQuerySchema, body: z.string(), bodyType: "text/csv", response: importReportSchema,
    summary: "Import a CSV of readings (text/csv body). dryRun=true reports counts and every problem by row and column (200); otherwise saves all or nothing (201), 422 when the file has problems, 409 when this exact file was imported before",
  },
  {
    method: "get", path: "/api/types", tag: "types", query: typeListQuerySchema,
    response: z.array(z.object({ designation: z.string(), aliases: z.array(z.string()), class: z.string(), base: z.string(), heater: heaterSpecSchema, userAdded: z.boolean() })),
    summary: "Tube types (reference library and user-added): designation, aliases, class, base, heater; filter with q (name, alias or note), class and base",
  },
  {
    method: "get", path: "/api/types/{designation}", tag: "types", response: newTypeBodySchema,
    summary: "One tube type with every value and its source, its variants and stock counts by verdict; an alias resolves to its type (404 when unknown)",
  },
  {
    method: "post", path: "/api/types", tag: "types", body: newTypeBodySchema, response: newTypeBodySchema,
    summary: "Add a user type (the reference library's JSON shape, with sources); checked like the library; 201, 422 with every problem by field path, 409 when a name is taken",
  },
  {
    method: "get", path: "/api/types/{designation}/sockets", tag: "substitutes", query: socketsApiQuerySchema, response: socketsAnswerSchema,
    summary: "The reverse question: which other types' sockets this type could fill, each with pins, heater, ratings and characteristics; misses with every reason",
  },
  {
    method: "post", path: "/api/substitutes", tag: "substitutes", body: substituteRequestSchema, response: substituteAnswerSchema,
    summary: "Rank every known type as a substitute for one socket: pins (direct, rewire with the moves, adapter), heater on the supply, ratings against the circuit with derating, characteristic and gain changes, good tubes in stock; excluded types with every reason",
  },
  {
    method: "post", path: "/api/bistable/analyze", tag: "bistable", body: bistableRequestSchema, response: bistableAnswerSchema,
    summary: "DC states of a cross-coupled pair from published tube models (each side optionally scaled to a measured gm): both stable states and the unstable one, levels, swing, cut-off margin, grid current, loop gain, and with `yield` the tolerance corners and seeded random builds. Not bistable is an answer (200 with reasons), not an error",
  },
  {
    method: "post", path: "/api/bistable/resistors", tag: "bistable", body: resistorRequestSchema, response: resistorAnswerSchema,
    summary: "E12/E24 plate-load, coupling and grid-return values (the same on both sides) that reach target high and low levels, ranked by worst-case cut-off margin; ok false with the reason when nothing in range does",
  },
  {
    method: "post", path: "/api/pairing", tag: "pairing", body: pairingRequestSchema, response: pairingAnswerSchema,
    summary: "Balanced pairs (or sets of 4) from the good tubes in stock, each section at its newest reading: the most pairs meeting the rule, then the least total imbalance (exact matching), every leftover with its reason, and sort-and-pair's count for comparison",
  },
  {
    method: "post", path: "/api/pairing/reserve", tag: "pairing", body: reserveRequestSchema, response: reserveAnswerSchema,
    summary: "Reserve the given tubes in one transaction (each state change written to its history); 409 and nothing changed when any is no longer in stock or no longer good, 404 when one does not exist",
  },
  {
    method: "get", path: "/api/builds", tag: "builds", response: z.array(buildSummarySchema),
    summary: "Build plans with their line count and how many tubes are reserved, installed, or flagged (allocated but now worn, failed or retired)",
  },
  {
    method: "post", path: "/api/builds", tag: "builds", body: buildInputSchema,
    summary: "Create a build plan: heater supplies, B+ and negative rail, and lines (bistable stages with RL/R1/R2/cathode ohms, single stages with plate volts and mA, rectifiers/regulators). 201 with the stored plan; 422 names every bad field; 409 when the name is taken",
  },
  { method: "get", path: "/api/builds/{id}", tag: "builds", summary: "One build plan as stored (lines with their ids)" },
  {
    method: "post", path: "/api/builds/{id}", tag: "builds", body: buildInputSchema,
    summary: "Replace a build plan (send it whole; lines keep their identity by id). A line holding allocated tubes cannot be removed or change kind or type (409/422)",
  },
  {
    method: "get", path: "/api/builds/{id}/check", tag: "builds", response: buildCheckAnswerSchema,
    summary: "Check the plan against the stock now: per line good tubes, balanced pairs, shortfall, spares, substitute options; heater, B+ and rail budgets; plate dissipation; flagged allocated tubes with a proposed replacement; verdict (ready, ready-with-substitutes, short); buy list; and the tubes a reservation would take",
  },
  {
    method: "post", path: "/api/builds/{id}/accept", tag: "builds", body: acceptSubstituteSchema,
    summary: "Accept a substitute type for one line (lineId, designation); the check then counts its good tubes",
  },
  {
    method: "post", path: "/api/builds/{id}/reserve", tag: "builds", response: reservationAnswerSchema,
    summary: "Allocate every tube the check plans (missing stages and spares) in one transaction: tubes become reserved, each with a history entry. 409 and nothing written when a line is short or another reservation took the tubes first. No body",
  },
  {
    method: "post", path: "/api/builds/{id}/release", tag: "builds", response: reservationAnswerSchema,
    summary: "Return every reserved (not installed) tube of the build to stock in one transaction. No body",
  },
  {
    method: "post", path: "/api/builds/{id}/install", tag: "builds", body: installApiSchema,
    summary: "Mark reserved tubes installed, recording where each went ({ tubes: [{ allocationId, position }] }, e.g. position \"stage 3 A\")",
  },
];
