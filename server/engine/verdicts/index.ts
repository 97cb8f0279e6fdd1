/**
 * Verdicts engine: percent of reference transconductance, emission against the instrument's
 * own pass mark, hard failures, section balance, and the verdict of a whole tube. Pure; no IO.
 *
 * Decisions, in one place:
 * - Severity, worst first: failed > worn > not-comparable > untested > good. A tube's verdict
 *   is its worst section, so a tube with one good and one unread section is "untested": nobody
 *   can call it good yet.
 * - Hard failures (any short, open heater, grid current or leakage over its limit) make a
 *   section "failed" whatever its transconductance or emission says.
 * - A transconductance is only compared with a reference operating point whose conditions
 *   match (plate and screen within ±%, grid within ±V). Plate volts or grid volts not recorded
 *   ⇒ not comparable: transconductance moves strongly with both. Screen volts only matter when
 *   the reference point states one. A heater voltage that was not recorded is taken to be at
 *   its rating (testers set it from the type); a recorded one must be near a rating when the
 *   rating is known.
 * - A section may carry its own conditions (`SectionReading.conditions`) when the tester was
 *   set for its type rather than for the whole sitting. They override the tube-wide conditions
 *   field by field: a section that gives only plate volts keeps the tube-wide grid, screen and
 *   heater volts. Setting one knob per type is the usual bench habit, and a partial override
 *   must not silently erase what the sitting recorded for the others.
 * - Emission is always comparable: it is judged against the instrument's own pass mark.
 * - With both a comparable transconductance and an emission, the basis is transconductance and
 *   the status is the worse of the two judgements.
 * - Balance is reported as its own flag (`unbalanced`) with a reason; it does not change the
 *   verdict, because an unbalanced pair of healthy sections is still healthy for most uses and
 *   whether balance matters is the build's decision, not the tester's.
 */

import type { HeaterSpec, OperatingPoint, SectionKind, SectionSpec } from "../tube-types/index.ts";
import { formatQuantity, formatTransconductance } from "../units/index.ts";
import { checkVerdictThresholds, DEFAULT_VERDICT_THRESHOLDS } from "./thresholds.ts";
import type { VerdictThresholds } from "./thresholds.ts";

export { DEFAULT_VERDICT_THRESHOLDS, VERDICT_THRESHOLD_DESCRIPTIONS } from "./thresholds.ts";
export type { VerdictThresholdDescription, VerdictThresholdKey, VerdictThresholds } from "./thresholds.ts";

// ---------------------------------------------------------------------------
// Shapes
// ---------------------------------------------------------------------------

/** The conditions a tester applied in one session. Volts; grid volts signed (bias is negative). */
export interface TestConditions {
  heaterVolts?: number | null;
  plateVolts?: number | null;
  screenVolts?: number | null;
  gridVolts?: number | null;
}

/** An emission reading on the instrument's own scale (units do not matter; they cancel). */
export interface EmissionReading {
  value: number;
  passMark: number;
  fullScale: number;
}

/** What was read on one tube section in one session. */
export interface SectionReading {
  /** 1-based, matching SectionSpec.index. */
  section: number;
  /**
   * Conditions this section was read at, when they differ from the tube-wide ones; each field
   * given (not null) replaces the tube-wide value of that field (see {@link mergeTestConditions}).
   */
  conditions?: TestConditions | null;
  transconductanceMicroSiemens?: number | null;
  plateMilliamps?: number | null;
  emission?: EmissionReading | null;
  /** Control-grid current (gas), µA. */
  gridCurrentMicroamps?: number | null;
  leakageMicroamps?: number | null;
  /** Element pairs found shorted, e.g. ["g1-k", "h-k"]. Empty when none. */
  shorts: string[];
  heaterOpen: boolean;
}

export type VerdictStatus = "good" | "worn" | "failed" | "untested" | "not-comparable";
export type VerdictBasis = "transconductance" | "emission" | "none";

export interface SectionResult {
  section: number;
  basis: VerdictBasis;
  /** Measured transconductance as percent of the matched reference; null unless the basis is transconductance. */
  percentOfReference: number | null;
  referenceMicroSiemens: number | null;
  /** The matched reference operating point, when there is one. */
  reference: OperatingPoint | null;
  /** Emission value as percent of the instrument's full scale, when emission was read. */
  emissionPercentOfFullScale: number | null;
  /** Whether the basis used could be compared (emission always can; "none" never). */
  comparable: boolean;
  /** Why a transconductance reading could not be compared, whenever it could not (even if emission was used instead). */
  notComparableReason?: string;
  /** True when a short, open heater, gas or leakage made the section fail. */
  hardFailure: boolean;
  status: VerdictStatus;
  reasons: string[];
}

export type BalanceBasis = "percent-of-reference" | "transconductance" | "emission";

export interface TubeResult {
  sections: SectionResult[];
  /** Worst spread over groups of same-kind sections, (max − min) / mean × 100; null when it cannot be worked out. */
  balancePercent: number | null;
  balanceBasis: BalanceBasis | null;
  /** balancePercent ≤ the threshold; null when there is no balance figure. */
  balanceOk: boolean | null;
  /** balanceOk === false, spelled out for templates. */
  unbalanced: boolean;
  verdict: VerdictStatus;
  reasons: string[];
}

export type ComparableReference =
  | { comparable: true; reference: OperatingPoint; referenceIndex: number }
  | { comparable: false; reason: string };

export interface EvaluationOptions {
  /** The type's heater rating; a recorded heater voltage is checked against it (or its centre-tap half). */
  heater?: HeaterSpec | null;
}

export type SectionEvaluation = ({ ok: true } & SectionResult) | { ok: false; reason: string };
export type TubeEvaluation = ({ ok: true } & TubeResult) | { ok: false; reason: string };

// ---------------------------------------------------------------------------
// Small helpers
// ---------------------------------------------------------------------------

/** Slack on "within tolerance" so a value exactly on the boundary is not lost to rounding (262.5 V vs 250 V ± 5 %). */
const BOUNDARY_SLACK = 1e-9;

/** Severity, least severe first; {@link worstStatus} picks the last one present. */
export const VERDICT_SEVERITY_ORDER: readonly VerdictStatus[] = ["good", "untested", "not-comparable", "worn", "failed"];

/**
 * The most severe status in the list (failed > worn > not-comparable > untested > good);
 * "untested" for an empty list, since nothing was judged.
 * @example worstStatus(["good", "worn", "untested"]) // "worn"
 */
export function worstStatus(statuses: readonly VerdictStatus[]): VerdictStatus {
  if (statuses.length === 0) return "untested";
  let worstIndex = 0;
  for (const status of statuses) {
    worstIndex = Math.max(worstIndex, VERDICT_SEVERITY_ORDER.indexOf(status));
  }
  return VERDICT_SEVERITY_ORDER[worstIndex];
}

/**
 * measured / reference × 100. Null when either is not finite or the reference is not positive.
 * @example percentOfReference(1650, 2200) // 75
 */
export function percentOfReference(measured: number, reference: number): number | null {
  if (!Number.isFinite(measured) || !Number.isFinite(reference) || reference <= 0) return null;
  // Multiplying first keeps exact cases exact: 1540 × 100 / 2200 is 70, not 69.99….
  return (measured * 100) / reference;
}

/**
 * Spread of section values, (max − min) / mean × 100; for two sections that is
 * |a − b| / ((a + b) / 2) × 100. Null for fewer than two values, a non-finite or negative
 * value, or a zero mean.
 * @example sectionBalancePercent([2000, 2200]) // 9.5238… (200 / 2100 × 100)
 */
export function sectionBalancePercent(values: readonly number[]): number | null {
  if (values.length < 2) return null;
  if (values.some((value) => !Number.isFinite(value) || value < 0)) return null;
  const mean = values.reduce((sum, value) => sum + value, 0) / values.length;
  if (mean === 0) return null;
  return ((Math.max(...values) - Math.min(...values)) / mean) * 100;
}

function isRecorded(value: number | null | undefined): value is number {
  return value !== null && value !== undefined;
}

const CONDITION_FIELDS = ["heaterVolts", "plateVolts", "screenVolts", "gridVolts"] as const;

/**
 * The conditions one section was judged at: `own` field by field over `base`. A field of `own`
 * that is null or undefined takes the value of `base`; with no `own` the result equals `base`.
 * Never throws; numbers are not checked here.
 * @example mergeTestConditions({ plateVolts: 100, gridVolts: 0, heaterVolts: 12.6 }, { plateVolts: 250, gridVolts: -8.5 })
 *   // { heaterVolts: 12.6, plateVolts: 250, screenVolts: null, gridVolts: -8.5 }
 * @example mergeTestConditions({ plateVolts: 250, gridVolts: -2 }, { plateVolts: 150 })
 *   // { heaterVolts: null, plateVolts: 150, screenVolts: null, gridVolts: -2 }
 */
export function mergeTestConditions(base: TestConditions, own?: TestConditions | null): Required<TestConditions> {
  const merged = { heaterVolts: null, plateVolts: null, screenVolts: null, gridVolts: null } as { [K in (typeof CONDITION_FIELDS)[number]]: number | null };
  for (const field of CONDITION_FIELDS) {
    const value = own?.[field];
    merged[field] = isRecorded(value) ? value : (base[field] ?? null);
  }
  return merged;
}

/** Whether two sets of conditions are the same in every field (unrecorded equals unrecorded). */
function sameConditions(left: TestConditions, right: TestConditions): boolean {
  return CONDITION_FIELDS.every((field) => (left[field] ?? null) === (right[field] ?? null));
}

function volts(value: number): string {
  return formatQuantity(value, "volts");
}

function microamps(value: number): string {
  return formatQuantity(value, "microamps");
}

function percentText(value: number): string {
  return `${Number(value.toFixed(1))} %`;
}

function withinPercent(measured: number, reference: number, tolerancePercent: number): boolean {
  const allowed = (Math.abs(reference) * tolerancePercent) / 100;
  return Math.abs(measured - reference) <= allowed + BOUNDARY_SLACK * Math.max(1, Math.abs(reference));
}

/** Strictly below `limit`, with rounding noise on the boundary counted as on it. */
function isBelow(value: number, limit: number): boolean {
  return value < limit - BOUNDARY_SLACK * Math.max(1, Math.abs(limit));
}

function withinVolts(measured: number, reference: number, toleranceVolts: number): boolean {
  return Math.abs(measured - reference) <= toleranceVolts + BOUNDARY_SLACK;
}

// ---------------------------------------------------------------------------
// Input checks (reasons name the field)
// ---------------------------------------------------------------------------

function checkOptionalNumber(value: unknown, label: string, allowNegative: boolean): string | null {
  if (value === null || value === undefined) return null;
  if (typeof value !== "number" || !Number.isFinite(value)) return `${label}: not a number`;
  if (!allowNegative && value < 0) return `${label}: ${value} is negative`;
  return null;
}

function checkConditions(conditions: unknown, prefix = ""): string | null {
  if (typeof conditions !== "object" || conditions === null) return `${prefix}Test conditions: missing`;
  const record = conditions as Record<string, unknown>;
  const label = (name: string) => (prefix ? `${prefix}${name.toLowerCase()}` : name);
  return (
    checkOptionalNumber(record.heaterVolts, label("Heater volts"), false) ??
    checkOptionalNumber(record.plateVolts, label("Plate volts"), false) ??
    checkOptionalNumber(record.screenVolts, label("Screen volts"), false) ??
    checkOptionalNumber(record.gridVolts, label("Grid volts"), true)
  );
}

function checkReading(reading: unknown): string | null {
  if (typeof reading !== "object" || reading === null) return "Reading: missing";
  const record = reading as Record<string, unknown>;
  const section = record.section;
  if (typeof section !== "number" || !Number.isInteger(section) || section < 1) {
    return `Section: '${String(section)}' is not a section number (1, 2, …)`;
  }
  const label = (field: string) => `Section ${section} ${field}`;
  if (record.conditions !== null && record.conditions !== undefined) {
    const conditionProblem = checkConditions(record.conditions, `Section ${section} `);
    if (conditionProblem) return conditionProblem;
  }
  const numberProblem =
    checkOptionalNumber(record.transconductanceMicroSiemens, label("transconductance"), false) ??
    checkOptionalNumber(record.plateMilliamps, label("plate current"), false) ??
    checkOptionalNumber(record.gridCurrentMicroamps, label("grid current"), false) ??
    checkOptionalNumber(record.leakageMicroamps, label("leakage"), false);
  if (numberProblem) return numberProblem;
  const emission = record.emission;
  if (emission !== null && emission !== undefined) {
    if (typeof emission !== "object") return `${label("emission")}: missing value, pass mark or full scale`;
    const { value, passMark, fullScale } = emission as Record<string, unknown>;
    const emissionProblem =
      checkOptionalNumber(value, label("emission"), false) ??
      checkOptionalNumber(passMark, label("emission pass mark"), false) ??
      checkOptionalNumber(fullScale, label("emission full scale"), false);
    if (emissionProblem) return emissionProblem;
    if (typeof value !== "number" || typeof passMark !== "number" || typeof fullScale !== "number") {
      return `${label("emission")}: missing value, pass mark or full scale`;
    }
    if (fullScale <= 0) return `${label("emission full scale")}: must be above zero`;
    if (passMark > fullScale) return `${label("emission pass mark")}: ${passMark} is above the full scale ${fullScale}`;
    if (value > fullScale) return `${label("emission")}: ${value} is above the full scale ${fullScale}`;
  }
  if (!Array.isArray(record.shorts)) return `${label("shorts")}: expected a list of element pairs`;
  for (const short of record.shorts as unknown[]) {
    if (typeof short !== "string" || short.trim() === "") return `${label("shorts")}: an entry is empty`;
  }
  if (typeof record.heaterOpen !== "boolean") return `${label("heater open")}: expected yes or no`;
  return null;
}

// ---------------------------------------------------------------------------
// Reference matching
// ---------------------------------------------------------------------------

function heaterMismatch(heaterVolts: number | null | undefined, heater: HeaterSpec | null | undefined, tolerancePercent: number): string | null {
  if (!isRecorded(heaterVolts) || !heater) return null;
  const ratings = [heater.volts];
  if (heater.centreTap) ratings.push(heater.centreTap.half.volts);
  if (ratings.some((rating) => withinPercent(heaterVolts, rating, tolerancePercent))) return null;
  return `heater ${volts(heaterVolts)} vs rated ${ratings.map(volts).join(" or ")}`;
}

/**
 * Finds the typical operating point whose conditions match the test conditions within the
 * thresholds' tolerances and that states a transconductance. When several match, the one
 * nearest (sum of squared deviations, each divided by its tolerance) wins; ties go to the
 * earlier point.
 *
 * Returns `{ comparable: false, reason }` when plate or grid volts were not recorded, a pentode
 * point needs screen volts that were not recorded, the heater is off its rating (only checked
 * when `heater` is given and heater volts were recorded), or no point matches; the reason lists
 * what did not match for each point. Never throws.
 *
 * @example findComparableReference([{ plateVolts: 250, gridVolts: -8.5, plateMilliamps: 10.5,
 *   transconductanceMicroSiemens: 2200 }], { plateVolts: 150, gridVolts: -8.5 }, DEFAULT_VERDICT_THRESHOLDS)
 *   // { comparable: false, reason: "no reference point matches: plate 150 V vs reference 250 V" }
 */
export function findComparableReference(
  typical: readonly OperatingPoint[],
  conditions: TestConditions,
  thresholds: VerdictThresholds = DEFAULT_VERDICT_THRESHOLDS,
  heater?: HeaterSpec | null,
): ComparableReference {
  const conditionProblem = checkConditions(conditions);
  if (conditionProblem) return { comparable: false, reason: conditionProblem };
  const thresholdProblem = checkVerdictThresholds(thresholds);
  if (thresholdProblem) return { comparable: false, reason: thresholdProblem };

  const candidates = typical
    .map((point, index) => ({ point, index }))
    .filter(({ point }) => isRecorded(point.transconductanceMicroSiemens) && point.transconductanceMicroSiemens > 0);
  if (candidates.length === 0) return { comparable: false, reason: "no reference transconductance for this section" };

  const { plateVolts, screenVolts, gridVolts, heaterVolts } = conditions;
  if (!isRecorded(plateVolts)) return { comparable: false, reason: "plate volts not recorded" };
  if (!isRecorded(gridVolts)) return { comparable: false, reason: "grid volts not recorded" };
  const heaterProblem = heaterMismatch(heaterVolts, heater, thresholds.heaterVoltsTolerancePercent);
  if (heaterProblem) return { comparable: false, reason: heaterProblem };

  const allowedByPercent = (tolerance: number, reference: number) => (Math.abs(reference) * tolerance) / 100;
  const perPointMismatches: string[] = [];
  let best: { point: OperatingPoint; index: number; distance: number } | null = null;
  for (const { point, index } of candidates) {
    const mismatches: string[] = [];
    if (!withinPercent(plateVolts, point.plateVolts, thresholds.plateVoltsTolerancePercent)) {
      mismatches.push(`plate ${volts(plateVolts)} vs reference ${volts(point.plateVolts)}`);
    }
    if (isRecorded(point.screenVolts)) {
      if (!isRecorded(screenVolts)) {
        mismatches.push(`screen volts not recorded (reference ${volts(point.screenVolts)})`);
      } else if (!withinPercent(screenVolts, point.screenVolts, thresholds.screenVoltsTolerancePercent)) {
        mismatches.push(`screen ${volts(screenVolts)} vs reference ${volts(point.screenVolts)}`);
      }
    }
    if (!withinVolts(gridVolts, point.gridVolts, thresholds.gridVoltsToleranceVolts)) {
      // A bias entered without its minus sign is a common slip; say so rather than only "no match".
      const signSlip = gridVolts !== 0 && withinVolts(-gridVolts, point.gridVolts, thresholds.gridVoltsToleranceVolts);
      mismatches.push(`grid ${volts(gridVolts)} vs reference ${volts(point.gridVolts)}${signSlip ? " (sign?)" : ""}`);
    }
    if (mismatches.length > 0) {
      perPointMismatches.push(mismatches.join(", "));
      continue;
    }
    const deviations: Array<[number, number]> = [
      [plateVolts - point.plateVolts, allowedByPercent(thresholds.plateVoltsTolerancePercent, point.plateVolts)],
      [gridVolts - point.gridVolts, thresholds.gridVoltsToleranceVolts],
    ];
    if (isRecorded(point.screenVolts) && isRecorded(screenVolts)) {
      deviations.push([screenVolts - point.screenVolts, allowedByPercent(thresholds.screenVoltsTolerancePercent, point.screenVolts)]);
    }
    const distance = deviations.reduce((sum, [deviation, allowed]) => sum + (allowed > 0 ? (deviation / allowed) ** 2 : 0), 0);
    if (best === null || distance < best.distance) best = { point, index, distance };
  }
  if (best === null) {
    return { comparable: false, reason: `no reference point matches: ${perPointMismatches.join("; ")}` };
  }
  return { comparable: true, reference: best.point, referenceIndex: best.index };
}

// ---------------------------------------------------------------------------
// One section
// ---------------------------------------------------------------------------

function describePoint(point: OperatingPoint): string {
  const parts = [volts(point.plateVolts)];
  if (isRecorded(point.screenVolts)) parts.push(`screen ${volts(point.screenVolts)}`);
  parts.push(`grid ${volts(point.gridVolts)}`);
  return parts.join(", ");
}

function untestedResult(section: number, reason: string): SectionResult {
  return {
    section,
    basis: "none",
    percentOfReference: null,
    referenceMicroSiemens: null,
    reference: null,
    emissionPercentOfFullScale: null,
    comparable: false,
    hardFailure: false,
    status: "untested",
    reasons: [reason],
  };
}

function judgeSection(
  spec: SectionSpec,
  conditions: TestConditions,
  reading: SectionReading,
  thresholds: VerdictThresholds,
  heater: HeaterSpec | null | undefined,
): SectionResult {
  const reasons: string[] = [];

  const hardFailures: string[] = [];
  for (const short of reading.shorts) hardFailures.push(`short ${short.trim()}`);
  if (reading.heaterOpen) hardFailures.push("heater open");
  if (isRecorded(reading.gridCurrentMicroamps) && reading.gridCurrentMicroamps > thresholds.maxGridCurrentMicroamps) {
    hardFailures.push(
      `grid current ${microamps(reading.gridCurrentMicroamps)} over the ${microamps(thresholds.maxGridCurrentMicroamps)} limit (gas)`,
    );
  }
  if (isRecorded(reading.leakageMicroamps) && reading.leakageMicroamps > thresholds.maxLeakageMicroamps) {
    hardFailures.push(`leakage ${microamps(reading.leakageMicroamps)} over the ${microamps(thresholds.maxLeakageMicroamps)} limit`);
  }
  reasons.push(...hardFailures);

  const judged: VerdictStatus[] = [];
  let percent: number | null = null;
  let reference: OperatingPoint | null = null;
  let notComparableReason: string | undefined;
  const measuredMicroSiemens = reading.transconductanceMicroSiemens;
  if (isRecorded(measuredMicroSiemens)) {
    const match = findComparableReference(spec.typical, mergeTestConditions(conditions, reading.conditions), thresholds, heater);
    if (match.comparable) {
      reference = match.reference;
      const referenceMicroSiemens = reference.transconductanceMicroSiemens as number;
      percent = percentOfReference(measuredMicroSiemens, referenceMicroSiemens);
      const gmPercent = percent as number;
      const status: VerdictStatus = isBelow(gmPercent, thresholds.failedBelowPercent)
        ? "failed"
        : isBelow(gmPercent, thresholds.wornBelowPercent)
          ? "worn"
          : "good";
      const limitNote =
        status === "failed"
          ? ` (failed below ${percentText(thresholds.failedBelowPercent)})`
          : status === "worn"
            ? ` (worn below ${percentText(thresholds.wornBelowPercent)})`
            : "";
      reasons.push(
        `transconductance ${formatTransconductance(measuredMicroSiemens)} is ${percentText(gmPercent)} of ` +
          `${formatTransconductance(referenceMicroSiemens)} at ${describePoint(reference)}${limitNote}`,
      );
      judged.push(status);
    } else {
      notComparableReason = match.reason;
    }
  }

  let emissionPercentOfFullScale: number | null = null;
  const emission = reading.emission;
  if (emission) {
    emissionPercentOfFullScale = (emission.value / emission.fullScale) * 100;
    const wornLine = emission.passMark + (thresholds.emissionWornMarginPercentOfFullScale / 100) * emission.fullScale;
    if (isBelow(emission.value, emission.passMark)) {
      reasons.push(`emission ${emission.value} is below the pass mark ${emission.passMark}`);
      judged.push("failed");
    } else if (isBelow(emission.value, wornLine)) {
      reasons.push(`emission ${emission.value} is within ${percentText(thresholds.emissionWornMarginPercentOfFullScale)} of full scale above the pass mark ${emission.passMark}`);
      judged.push("worn");
    } else {
      reasons.push(`emission ${emission.value} passes (pass mark ${emission.passMark} of ${emission.fullScale})`);
      judged.push("good");
    }
  }

  if (notComparableReason !== undefined) {
    reasons.push(`transconductance not compared: ${notComparableReason}`);
  }

  const basis: VerdictBasis = reference !== null ? "transconductance" : emission ? "emission" : "none";
  let status: VerdictStatus;
  if (hardFailures.length > 0) status = "failed";
  else if (judged.length > 0) status = worstStatus(judged);
  else if (notComparableReason !== undefined) status = "not-comparable";
  else {
    status = "untested";
    reasons.push(
      isRecorded(reading.plateMilliamps)
        ? "plate current alone is not judged; read transconductance or emission"
        : "no transconductance or emission reading",
    );
  }

  return {
    section: reading.section,
    basis,
    percentOfReference: percent,
    referenceMicroSiemens: reference?.transconductanceMicroSiemens ?? null,
    reference,
    emissionPercentOfFullScale,
    comparable: basis !== "none",
    ...(notComparableReason !== undefined ? { notComparableReason } : {}),
    hardFailure: hardFailures.length > 0,
    status,
    reasons,
  };
}

/**
 * Judges one section from one reading.
 *
 * Status: "failed" on any hard failure (short, open heater, gas or leakage over its limit);
 * otherwise the worse of the transconductance judgement (percent of the matched reference:
 * below failedBelowPercent ⇒ failed, below wornBelowPercent ⇒ worn, else good — a value exactly
 * on a threshold is not below it) and the emission judgement (below the pass mark ⇒ failed,
 * below pass mark + margin × full scale ⇒ worn, else good); "not-comparable" when only a
 * transconductance was read and no reference matches; "untested" when neither was read or
 * `reading` is null. The reading's own `conditions`, when given, override `conditions` field by
 * field (see {@link mergeTestConditions}).
 *
 * Returns `{ ok: false, reason }` naming the field for bad input (negative or non-finite
 * numbers, a pass mark above full scale, a reading for another section, bad thresholds).
 *
 * @example evaluateSection({ index: 1, kind: "triode", typical: [{ plateVolts: 250, gridVolts: -8.5,
 *   plateMilliamps: 10.5, transconductanceMicroSiemens: 2200 }] }, { plateVolts: 250, gridVolts: -8.5 },
 *   { section: 1, transconductanceMicroSiemens: 1650, shorts: [], heaterOpen: false })
 *   // { ok: true, status: "good", percentOfReference: 75, basis: "transconductance", … }
 */
export function evaluateSection(
  spec: SectionSpec,
  conditions: TestConditions,
  reading: SectionReading | null | undefined,
  thresholds: VerdictThresholds = DEFAULT_VERDICT_THRESHOLDS,
  options: EvaluationOptions = {},
): SectionEvaluation {
  const thresholdProblem = checkVerdictThresholds(thresholds);
  if (thresholdProblem) return { ok: false, reason: thresholdProblem };
  const conditionProblem = checkConditions(conditions);
  if (conditionProblem) return { ok: false, reason: conditionProblem };
  if (reading === null || reading === undefined) {
    return { ok: true, ...untestedResult(spec.index, `section ${spec.index} not read`) };
  }
  const readingProblem = checkReading(reading);
  if (readingProblem) return { ok: false, reason: readingProblem };
  if (reading.section !== spec.index) {
    return { ok: false, reason: `Section: reading is for section ${reading.section}, not section ${spec.index}` };
  }
  return { ok: true, ...judgeSection(spec, conditions, reading, thresholds, options.heater) };
}

// ---------------------------------------------------------------------------
// A whole tube
// ---------------------------------------------------------------------------

interface BalanceFigure {
  percent: number;
  basis: BalanceBasis;
  sections: number[];
}

/** Balance of one group of same-kind sections, by the best basis every section in it has. */
function groupBalance(results: readonly SectionResult[], readings: ReadonlyMap<number, SectionReading>, conditions: TestConditions): BalanceFigure | null {
  const sections = results.map((result) => result.section);
  const percents = results.map((result) => result.percentOfReference);
  if (percents.every((value) => value !== null)) {
    const percent = sectionBalancePercent(percents as number[]);
    if (percent !== null) return { percent, basis: "percent-of-reference", sections };
  }
  // Raw transconductances only compare when every section was read under the same conditions.
  const raw = sections.map((section) => readings.get(section)?.transconductanceMicroSiemens ?? null);
  const judgedAt = sections.map((section) => mergeTestConditions(conditions, readings.get(section)?.conditions));
  if (raw.every((value) => value !== null) && judgedAt.every((each) => sameConditions(each, judgedAt[0]))) {
    const percent = sectionBalancePercent(raw as number[]);
    if (percent !== null) return { percent, basis: "transconductance", sections };
  }
  const emissions = results.map((result) => result.emissionPercentOfFullScale);
  if (emissions.every((value) => value !== null)) {
    const percent = sectionBalancePercent(emissions as number[]);
    if (percent !== null) return { percent, basis: "emission", sections };
  }
  return null;
}

/**
 * Judges a whole tube: each section of the type (sections without a reading are "untested"),
 * the section balance, and the verdict (the worst section; see {@link worstStatus}).
 *
 * Balance is worked out within each group of two or more sections of the same kind (both
 * triodes of a dual triode; the two diodes of a diode-triode) as (max − min) / mean × 100,
 * on percent of reference when every section in the group has one, else on raw
 * transconductance (only when every section of the group was read at the same conditions), else
 * on emission as percent of full scale. A section's own `conditions` override `conditions`
 * field by field for that section alone. balancePercent is the worst
 * group; balanceOk is balancePercent ≤ maxImbalancePercent. Balance never changes the verdict;
 * it sets `unbalanced` and adds a reason.
 *
 * Returns `{ ok: false, reason }` naming the field for bad input, a reading for a section the
 * type does not have, or two readings for one section.
 *
 * @example evaluateTube(twelveAu7Sections, { plateVolts: 250, gridVolts: -8.5 }, [
 *   { section: 1, transconductanceMicroSiemens: 2200, shorts: [], heaterOpen: false },
 *   { section: 2, transconductanceMicroSiemens: 2000, shorts: [], heaterOpen: false }])
 *   // { ok: true, verdict: "good", balancePercent: 9.52…, balanceOk: true, unbalanced: false, … }
 */
export function evaluateTube(
  typeSections: readonly SectionSpec[],
  conditions: TestConditions,
  readings: readonly SectionReading[],
  thresholds: VerdictThresholds = DEFAULT_VERDICT_THRESHOLDS,
  options: EvaluationOptions = {},
): TubeEvaluation {
  const thresholdProblem = checkVerdictThresholds(thresholds);
  if (thresholdProblem) return { ok: false, reason: thresholdProblem };
  const conditionProblem = checkConditions(conditions);
  if (conditionProblem) return { ok: false, reason: conditionProblem };
  if (!Array.isArray(typeSections) || typeSections.length === 0) return { ok: false, reason: "Tube type: has no sections" };
  if (!Array.isArray(readings)) return { ok: false, reason: "Readings: expected a list" };

  const readingBySection = new Map<number, SectionReading>();
  for (const reading of readings) {
    const problem = checkReading(reading);
    if (problem) return { ok: false, reason: problem };
    if (!typeSections.some((spec) => spec.index === reading.section)) {
      return { ok: false, reason: `Section: this type has no section ${reading.section}` };
    }
    if (readingBySection.has(reading.section)) return { ok: false, reason: `Section ${reading.section}: read twice` };
    readingBySection.set(reading.section, reading);
  }

  const orderedSpecs = [...typeSections].sort((left, right) => left.index - right.index);
  const sections = orderedSpecs.map((spec) => {
    const reading = readingBySection.get(spec.index);
    return reading
      ? judgeSection(spec, conditions, reading, thresholds, options.heater)
      : untestedResult(spec.index, `section ${spec.index} not read`);
  });

  const reasons: string[] = [];
  if (readingBySection.size === 0) reasons.push("no readings");
  else if (sections.length > 1) {
    for (const result of sections) reasons.push(...result.reasons.map((reason) => `section ${result.section}: ${reason}`));
  } else reasons.push(...sections[0].reasons);

  const groups = new Map<SectionKind, SectionResult[]>();
  orderedSpecs.forEach((spec, position) => {
    const group = groups.get(spec.kind) ?? [];
    group.push(sections[position]);
    groups.set(spec.kind, group);
  });
  let worstBalance: BalanceFigure | null = null;
  for (const group of groups.values()) {
    if (group.length < 2) continue;
    const figure = groupBalance(group, readingBySection, conditions);
    if (figure !== null && (worstBalance === null || figure.percent > worstBalance.percent)) worstBalance = figure;
  }
  const balanceOk = worstBalance === null ? null : worstBalance.percent <= thresholds.maxImbalancePercent + BOUNDARY_SLACK;
  if (worstBalance !== null && balanceOk === false) {
    reasons.push(
      `sections ${worstBalance.sections.join(" and ")} differ by ${percentText(worstBalance.percent)} on ${worstBalance.basis} ` +
        `(limit ${percentText(thresholds.maxImbalancePercent)})`,
    );
  }

  return {
    ok: true,
    sections,
    balancePercent: worstBalance?.percent ?? null,
    balanceBasis: worstBalance?.basis ?? null,
    balanceOk,
    unbalanced: balanceOk === false,
    verdict: worstStatus(sections.map((result) => result.status)),
    reasons,
  };
}

/**
 * Merges `overrides` onto the defaults and validates the result against
 * {@link VERDICT_THRESHOLD_DESCRIPTIONS}; unknown keys are rejected.
 * @example resolveVerdictThresholds({ wornBelowPercent: 65 }) // { ok: true, thresholds: { …, wornBelowPercent: 65 } }
 * @example resolveVerdictThresholds({ failedBelowPercent: 80 })
 *   // { ok: false, reason: "Failed below: 80 % must not exceed the worn-below threshold of 70 %" }
 */
export function resolveVerdictThresholds(
  overrides: Partial<Record<keyof VerdictThresholds, unknown>> = {},
): { ok: true; thresholds: VerdictThresholds } | { ok: false; reason: string } {
  for (const key of Object.keys(overrides)) {
    if (!Object.hasOwn(DEFAULT_VERDICT_THRESHOLDS, key)) return { ok: false, reason: `Thresholds: unknown setting '${key}'` };
  }
  const merged: Record<string, unknown> = { ...DEFAULT_VERDICT_THRESHOLDS };
  for (const [key, value] of Object.entries(overrides)) if (value !== undefined) merged[key] = value;
  const problem = checkVerdictThresholds(merged);
  if (problem) return { ok: false, reason: problem };
  return { ok: true, thresholds: merged as unknown as VerdictThresholds };
}

export { checkVerdictThresholds };
