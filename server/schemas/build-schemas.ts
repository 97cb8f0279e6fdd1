/**
 * Build plans: the JSON body of the API (numbers, units in the names), the editor's flat form
 * (text with units, e.g. "27k", "250 V"), the actions on a build, and the answers for OpenAPI.
 * Every message names its field ("Line 2 · plate load: …").
 */
import { z } from "zod";
import { parseQuantity, type QuantityDimension } from "../engine/units/index.ts";
import type { FieldErrors } from "./form-parsing.ts";

export const LINE_KINDS = ["bistable", "single", "rectifier"] as const;
export type LineKindName = (typeof LINE_KINDS)[number];
export const MAX_BUILD_LINES = 100;
export const MAX_HEATER_SUPPLIES = 4;
/** Typo catchers, not ratings (common practice, no source). */
export const MAX_SUPPLY_VOLTS = 2000;
export const MAX_HEATER_VOLTS = 200;
export const MAX_HEATER_AMPS = 200;
export const MAX_SUPPLY_MILLIAMPS = 20_000;
export const MAX_LINE_COUNT = 10_000;
export const MAX_RESISTOR_OHMS = 100e6;

// ── Field labels ─────────────────────────────────────────────────────────────────────────

const FIELD_LABELS: Record<string, string> = {
  name: "Name",
  notes: "Notes",
  balancePercent: "Pair balance",
  heaterSupplies: "Heater supplies",
  lines: "Lines",
  "bPlus.volts": "B+ volts",
  "bPlus.milliamps": "B+ current available",
  bPlus: "B+",
  "negativeRail.volts": "Negative rail volts",
  "negativeRail.milliamps": "Negative rail current available",
  negativeRail: "Negative rail",
};
const SUPPLY_LABELS: Record<string, string> = { name: "name", volts: "volts", amps: "current available" };
const LINE_LABELS: Record<string, string> = {
  id: "id",
  kind: "kind",
  type: "type",
  count: "count",
  heaterSupply: "heater supply",
  sparesPercent: "spares",
  sparesSource: "spares source",
  allowSubstitutes: "allow substitutes",
  acceptedSubstitutes: "accepted substitutes",
  plateLoadOhms: "plate load",
  couplingOhms: "coupling resistor R1",
  gridReturnOhms: "grid return R2",
  cathodeOhms: "cathode resistor",
  plateVolts: "plate volts",
  plateMilliamps: "plate current",
  screenMilliamps: "screen current",
  loadMilliamps: "B+ load each",
};

/** "lines.1.plateLoadOhms" → "Line 2 · plate load"; "heaterSupplies.0.volts" → "Heater supply 1 · volts". */
export function buildFieldLabel(path: string): string {
  const parts = path.split(".");
  if (parts[0] === "lines" && parts.length >= 2 && /^\d+$/.test(parts[1])) {
    const field = parts[2];
    return `Line ${Number(parts[1]) + 1}${field ? ` · ${LINE_LABELS[field] ?? field}` : ""}`;
  }
  if (parts[0] === "heaterSupplies" && parts.length >= 2 && /^\d+$/.test(parts[1])) {
    const field = parts[2];
    return `Heater supply ${Number(parts[1]) + 1}${field ? ` · ${SUPPLY_LABELS[field] ?? field}` : ""}`;
  }
  return FIELD_LABELS[path] ?? FIELD_LABELS[parts[0]] ?? path;
}

/** Validates with `schema`, keying each first message by its field path and prefixing the field's label. */
export function parseBuildWith<S extends z.ZodType>(schema: S, input: unknown): { ok: true; data: z.infer<S> } | { ok: false; errors: FieldErrors } {
  const result = schema.safeParse(input);
  if (result.success) return { ok: true, data: result.data };
  const errors: FieldErrors = {};
  for (const issue of result.error.issues) {
    const path = issue.path.length ? issue.path.join(".") : "_form";
    if (errors[path]) continue;
    errors[path] = path === "_form" ? issue.message : `${buildFieldLabel(path)}: ${issue.message}`;
  }
  return { ok: false, errors };
}

// ── The JSON body (API; the form is converted to it) ────────────────────────────────────

const number = () => z.number({ error: (issue) => (issue.input === undefined ? "is required" : "must be a number") }).finite("must be a finite number");
const positive = (max: number) => number().positive("must be greater than zero").max(max, `must be at most ${max}`);
const nonNegative = (max: number) => number().nonnegative("must not be negative").max(max, `must be at most ${max}`);
const ohms = () => positive(MAX_RESISTOR_OHMS);
const text = (max: number) => z.string({ error: "must be text" }).trim().max(max, `at most ${max} characters`);
const requiredText = (max: number) => text(max).min(1, "is required");

export const heaterSupplyInputSchema = z.strictObject({
  name: requiredText(40),
  volts: positive(MAX_HEATER_VOLTS),
  amps: positive(MAX_HEATER_AMPS),
});

export const buildLineInputSchema = z
  .strictObject({
    /** Only when updating: the line being edited. */
    id: z.number().int().positive().optional(),
    kind: z.enum(LINE_KINDS, { error: `must be one of ${LINE_KINDS.join(", ")}` }),
    type: requiredText(30),
    count: number().int("must be a whole number").min(1, "must be at least 1").max(MAX_LINE_COUNT, `must be at most ${MAX_LINE_COUNT}`),
    /** 1-based position in heaterSupplies. */
    heaterSupply: number().int("must be a whole number").min(1, "must be at least 1").max(MAX_HEATER_SUPPLIES, `must be at most ${MAX_HEATER_SUPPLIES}`).default(1),
    sparesPercent: nonNegative(100).optional(),
    sparesSource: text(160).optional(),
    allowSubstitutes: z.boolean({ error: "must be true or false" }).default(false),
    acceptedSubstitutes: z.array(requiredText(30)).max(10, "at most 10 types").default([]),
    plateLoadOhms: ohms().optional(),
    couplingOhms: ohms().optional(),
    gridReturnOhms: ohms().optional(),
    cathodeOhms: ohms().optional(),
    plateVolts: positive(MAX_SUPPLY_VOLTS).optional(),
    plateMilliamps: positive(MAX_SUPPLY_MILLIAMPS).optional(),
    screenMilliamps: nonNegative(MAX_SUPPLY_MILLIAMPS).optional(),
    loadMilliamps: nonNegative(MAX_SUPPLY_MILLIAMPS).optional(),
  })
  .superRefine((line, context) => {
    const need = (field: keyof typeof line, why: string) => {
      if (line[field] === undefined) context.addIssue({ code: "custom", path: [field], message: `is required for ${why}` });
    };
    if (line.kind === "bistable") for (const field of ["plateLoadOhms", "couplingOhms", "gridReturnOhms"] as const) need(field, "a bistable line");
    if (line.kind === "single") for (const field of ["plateVolts", "plateMilliamps"] as const) need(field, "a single-stage line");
  });

export const buildInputSchema = z.strictObject({
  name: requiredText(80),
  notes: text(2000).default(""),
  heaterSupplies: z.array(heaterSupplyInputSchema).min(1, "give at least one heater supply").max(MAX_HEATER_SUPPLIES, `at most ${MAX_HEATER_SUPPLIES}`),
  bPlus: z.strictObject({ volts: positive(MAX_SUPPLY_VOLTS), milliamps: positive(MAX_SUPPLY_MILLIAMPS) }),
  /** Absent or null: the grid returns go to ground. */
  negativeRail: z
    .strictObject({
      volts: number().negative("must be below 0 V").min(-MAX_SUPPLY_VOLTS, `must be at least -${MAX_SUPPLY_VOLTS}`),
      milliamps: positive(MAX_SUPPLY_MILLIAMPS),
    })
    .nullable()
    .optional(),
  /** Largest gm difference within a bistable pair, percent; default 5 (rule of thumb, no source). */
  balancePercent: number().gt(0, "must be greater than zero").max(50, "must be at most 50").optional(),
  lines: z.array(buildLineInputSchema).min(1, "a build needs at least one line").max(MAX_BUILD_LINES, `at most ${MAX_BUILD_LINES}`),
});
export type BuildInput = z.infer<typeof buildInputSchema>;
export type BuildLineInput = z.infer<typeof buildLineInputSchema>;

// ── The editor's flat form ──────────────────────────────────────────────────────────────

export const SUPPLY_FORM_FIELDS = ["name", "volts", "amps"] as const;
export const LINE_FORM_FIELDS = [
  "id", "kind", "type", "count", "heaterSupply", "sparesPercent", "sparesSource", "allowSubstitutes", "acceptedSubstitutes",
  "plateLoadOhms", "couplingOhms", "gridReturnOhms", "cathodeOhms", "plateVolts", "plateMilliamps", "screenMilliamps", "loadMilliamps",
] as const;
export type SupplyRow = Partial<Record<(typeof SUPPLY_FORM_FIELDS)[number], string>>;
export type LineRow = Partial<Record<(typeof LINE_FORM_FIELDS)[number], string>>;

/** The form as typed: top fields, heater supply rows and line rows (strings only). */
export interface BuildFormRows {
  top: Record<string, string>;
  supplies: SupplyRow[];
  lines: LineRow[];
}

const TOP_FORM_FIELDS = ["name", "notes", "balancePercent", "bPlus.volts", "bPlus.milliamps", "negativeRail.volts", "negativeRail.milliamps"] as const;

function firstString(value: unknown): string | undefined {
  const first = Array.isArray(value) ? value[0] : value;
  return typeof first === "string" ? first : typeof first === "number" ? String(first) : undefined;
}

/** Groups `lines.3.type`-style keys into rows, in index order; other keys are dropped. */
export function formRowsOf(body: unknown): BuildFormRows {
  const source = (body ?? {}) as Record<string, unknown>;
  const top: Record<string, string> = {};
  for (const field of TOP_FORM_FIELDS) {
    const value = firstString(source[field]);
    if (value !== undefined) top[field] = value;
  }
  const rows = <F extends string>(prefix: string, fields: readonly F[], limit: number) => {
    const byIndex = new Map<number, Partial<Record<F, string>>>();
    for (const [key, raw] of Object.entries(source)) {
      const match = new RegExp(`^${prefix}\\.(\\d{1,3})\\.(\\w+)$`).exec(key);
      if (!match || !(fields as readonly string[]).includes(match[2])) continue;
      const index = Number(match[1]);
      if (index >= limit) continue;
      const value = firstString(raw);
      if (value === undefined) continue;
      const row: Partial<Record<F, string>> = byIndex.get(index) ?? {};
      row[match[2] as F] = value;
      byIndex.set(index, row);
    }
    return [...byIndex.entries()].sort((left, right) => left[0] - right[0]).map(([, row]) => row);
  };
  return { top, supplies: rows("heaterSupplies", SUPPLY_FORM_FIELDS, MAX_HEATER_SUPPLIES), lines: rows("lines", LINE_FORM_FIELDS, MAX_BUILD_LINES) };
}

const LINE_QUANTITIES: Partial<Record<(typeof LINE_FORM_FIELDS)[number], QuantityDimension>> = {
  plateLoadOhms: "ohms",
  couplingOhms: "ohms",
  gridReturnOhms: "ohms",
  cathodeOhms: "ohms",
  plateVolts: "volts",
  plateMilliamps: "milliamps",
  screenMilliamps: "milliamps",
  loadMilliamps: "milliamps",
};

const PLAIN_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)$/;

/**
 * Turns the editor's rows into the JSON body: quantities with units parsed ("27k" → 27000,
 * "250 mA" in a current field → 250), blanks left out, checkboxes to booleans, the accepted
 * substitutes split on commas or spaces. Unit problems are returned keyed by the field's path;
 * everything else is left to buildInputSchema.
 */
export function formRowsToInput(rows: BuildFormRows): { input: Record<string, unknown>; errors: FieldErrors } {
  const errors: FieldErrors = {};
  const quantity = (path: string, raw: string | undefined, dimension: QuantityDimension, allowNegative = false): number | undefined => {
    if (raw === undefined || raw.trim() === "") return undefined;
    const parsed = parseQuantity(raw, dimension, buildFieldLabel(path), allowNegative ? { allowNegative: true } : {});
    if (parsed.ok) return parsed.value;
    errors[path] = parsed.reason;
    return undefined;
  };
  const plain = (path: string, raw: string | undefined): number | undefined => {
    if (raw === undefined || raw.trim() === "") return undefined;
    const trimmed = raw.trim().replace(/\s*%$/, "");
    if (PLAIN_NUMBER.test(trimmed)) return Number(trimmed);
    errors[path] = `${buildFieldLabel(path)}: '${raw.trim()}' is not a number`;
    return undefined;
  };
  const blankToUndefined = (raw: string | undefined) => (raw === undefined || raw.trim() === "" ? undefined : raw);

  const railVolts = rows.top["negativeRail.volts"];
  const railMilliamps = rows.top["negativeRail.milliamps"];
  const railGiven = blankToUndefined(railVolts) !== undefined || blankToUndefined(railMilliamps) !== undefined;
  const input: Record<string, unknown> = {
    name: rows.top.name ?? "",
    notes: rows.top.notes ?? "",
    bPlus: { volts: quantity("bPlus.volts", rows.top["bPlus.volts"], "volts"), milliamps: quantity("bPlus.milliamps", rows.top["bPlus.milliamps"], "milliamps") },
    negativeRail: railGiven
      ? { volts: quantity("negativeRail.volts", railVolts, "volts", true), milliamps: quantity("negativeRail.milliamps", railMilliamps, "milliamps") }
      : null,
    heaterSupplies: rows.supplies.map((row, index) => ({
      name: row.name ?? "",
      volts: quantity(`heaterSupplies.${index}.volts`, row.volts, "volts"),
      amps: quantity(`heaterSupplies.${index}.amps`, row.amps, "amps"),
    })),
    lines: rows.lines.map((row, index) => {
      const path = (field: string) => `lines.${index}.${field}`;
      const line: Record<string, unknown> = {
        kind: row.kind ?? "",
        type: row.type ?? "",
        count: plain(path("count"), row.count),
        heaterSupply: plain(path("heaterSupply"), row.heaterSupply),
        allowSubstitutes: row.allowSubstitutes === "on" || row.allowSubstitutes === "true" || row.allowSubstitutes === "1",
        acceptedSubstitutes: (row.acceptedSubstitutes ?? "").split(/[\s,;]+/).filter(Boolean),
      };
      const id = plain(path("id"), row.id);
      if (id !== undefined) line.id = id;
      const spares = plain(path("sparesPercent"), row.sparesPercent);
      if (spares !== undefined) line.sparesPercent = spares;
      if (blankToUndefined(row.sparesSource) !== undefined) line.sparesSource = row.sparesSource;
      // Only the fields of the line's kind count; the others may hold leftovers from a kind change.
      const relevant: Record<LineKindName, Array<keyof typeof LINE_QUANTITIES>> = {
        bistable: ["plateLoadOhms", "couplingOhms", "gridReturnOhms", "cathodeOhms"],
        single: ["plateVolts", "plateMilliamps", "screenMilliamps"],
        rectifier: ["loadMilliamps"],
      };
      for (const field of relevant[(LINE_KINDS as readonly string[]).includes(row.kind ?? "") ? (row.kind as LineKindName) : "bistable"]) {
        const value = quantity(path(field), row[field], LINE_QUANTITIES[field]!);
        if (value !== undefined) line[field] = value;
      }
      return line;
    }),
  };
  const balance = plain("balancePercent", rows.top.balancePercent);
  if (balance !== undefined) input.balancePercent = balance;
  return { input, errors };
}

// ── Actions on a build ──────────────────────────────────────────────────────────────────

export const acceptSubstituteSchema = z.object({
  lineId: z.coerce.number({ error: "Line: choose a line" }).int("Line: choose a line").positive("Line: choose a line"),
  designation: z.preprocess((value) => (typeof value === "string" ? value.trim() : value), z.string({ error: "Substitute: give a type" }).min(1, "Substitute: give a type").max(30, "Substitute: at most 30 characters")),
});

export const swapSchema = z.object({
  allocationId: z.coerce.number({ error: "Allocation: choose a tube" }).int("Allocation: choose a tube").positive("Allocation: choose a tube"),
  tubeId: z.coerce.number({ error: "Replacement: choose a tube" }).int("Replacement: choose a tube").positive("Replacement: choose a tube"),
});

/** The install form: `position.<allocationId>` text and `install.<allocationId>` ticks. */
export function installRowsOf(body: unknown): { rows: Array<{ allocationId: number; position: string }>; errors: FieldErrors } {
  const source = (body ?? {}) as Record<string, unknown>;
  const rows: Array<{ allocationId: number; position: string }> = [];
  const errors: FieldErrors = {};
  for (const [key, value] of Object.entries(source)) {
    const match = /^install\.(\d{1,9})$/.exec(key);
    if (!match) continue;
    const ticked = firstString(value);
    if (ticked !== "on" && ticked !== "1" && ticked !== "true") continue;
    const allocationId = Number(match[1]);
    const position = (firstString(source[`position.${allocationId}`]) ?? "").trim();
    if (position === "") errors[`position.${allocationId}`] = "Position: say where the tube went (e.g. stage 3 A)";
    else if (position.length > 60) errors[`position.${allocationId}`] = "Position: at most 60 characters";
    else rows.push({ allocationId, position });
  }
  if (rows.length === 0 && Object.keys(errors).length === 0) errors._form = "Tick at least one tube to mark it installed";
  return { rows, errors };
}

export const installApiSchema = z.object({
  tubes: z
    .array(z.strictObject({ allocationId: z.number().int().positive(), position: requiredText(60) }), { error: "tubes must be a list" })
    .min(1, "give at least one tube"),
});

// ── Answers (for the OpenAPI document) ──────────────────────────────────────────────────

export const buildSummarySchema = z.object({
  id: z.number().int(),
  name: z.string(),
  lines: z.number().int(),
  reserved: z.number().int(),
  installed: z.number().int(),
  flagged: z.number().int(),
});

export const reservationAnswerSchema = z.object({
  reserved: z.number().int().describe("tubes newly allocated"),
  released: z.number().int().optional(),
  tubes: z.array(z.object({ tubeId: z.number().int(), label: z.string(), line: z.string(), slots: z.string() })).optional(),
});

export const buildCheckAnswerSchema = z.object({
  verdict: z.enum(["ready", "ready-with-substitutes", "short"]),
  verdictReasons: z.array(z.string()),
  lines: z.array(z.record(z.string(), z.unknown())),
  budgets: z.record(z.string(), z.unknown()),
  flagged: z.array(z.record(z.string(), z.unknown())),
  buyList: z.array(z.object({ designation: z.string(), quantity: z.number().int(), why: z.string() })),
  reservationPlan: z.array(z.record(z.string(), z.unknown())),
  assumptions: z.array(z.string()),
});
