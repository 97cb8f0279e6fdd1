/**
 * Verdict thresholds: their defaults, where each default comes from, and their validation.
 * Internal to the verdicts engine; the public entry is ./index.ts.
 */

/** Limits a verdict is judged against. All are configurable; the defaults are rules of thumb. */
export interface VerdictThresholds {
  /** A comparable section below this percent of its reference transconductance is "worn". */
  wornBelowPercent: number;
  /** A comparable section below this percent of its reference transconductance is "failed". */
  failedBelowPercent: number;
  /**
   * Emission at or above the instrument's pass mark but below
   * passMark + this percent × fullScale / 100 is "worn"; below the pass mark is "failed".
   */
  emissionWornMarginPercentOfFullScale: number;
  /** Largest section spread, (max − min) / mean × 100, still called balanced. */
  maxImbalancePercent: number;
  /** Control-grid (gas) current above this is a hard failure, µA. */
  maxGridCurrentMicroamps: number;
  /** Leakage above this is a hard failure, µA. */
  maxLeakageMicroamps: number;
  /** Plate volts must be within ± this percent of the reference point's plate volts. */
  plateVoltsTolerancePercent: number;
  /** Screen volts must be within ± this percent of the reference point's screen volts. */
  screenVoltsTolerancePercent: number;
  /** Grid volts must be within ± this many volts of the reference point's grid volts. */
  gridVoltsToleranceVolts: number;
  /** A recorded heater voltage must be within ± this percent of a rated heater voltage. */
  heaterVoltsTolerancePercent: number;
}

export type VerdictThresholdKey = keyof VerdictThresholds;

/** What a settings page needs to render and validate one threshold without knowing it. */
export interface VerdictThresholdDescription {
  key: VerdictThresholdKey;
  label: string;
  unit: "%" | "µA" | "V";
  default: number;
  source: string;
  min: number;
  max: number;
}

const NO_SOURCE = "common practice, no source";

export const VERDICT_THRESHOLD_DESCRIPTIONS: readonly VerdictThresholdDescription[] = [
  {
    key: "wornBelowPercent",
    label: "Worn below (percent of reference transconductance)",
    unit: "%",
    default: 70,
    source: `${NO_SOURCE} (bench rule of thumb: replace somewhere around 60–70 % of the reference value)`,
    min: 0,
    max: 100,
  },
  {
    key: "failedBelowPercent",
    label: "Failed below (percent of reference transconductance)",
    unit: "%",
    default: 50,
    source: NO_SOURCE,
    min: 0,
    max: 100,
  },
  {
    key: "emissionWornMarginPercentOfFullScale",
    label: "Emission worn margin above the pass mark (percent of full scale)",
    unit: "%",
    default: 10,
    source: NO_SOURCE,
    min: 0,
    max: 100,
  },
  {
    key: "maxImbalancePercent",
    label: "Largest section imbalance, (max − min) / mean",
    unit: "%",
    default: 10,
    source: NO_SOURCE,
    min: 0,
    max: 200,
  },
  {
    key: "maxGridCurrentMicroamps",
    label: "Largest grid (gas) current",
    unit: "µA",
    default: 1,
    source: NO_SOURCE,
    min: 0,
    max: 1000,
  },
  {
    key: "maxLeakageMicroamps",
    label: "Largest leakage current",
    unit: "µA",
    default: 5,
    source: NO_SOURCE,
    min: 0,
    max: 1000,
  },
  {
    key: "plateVoltsTolerancePercent",
    label: "Plate volts tolerance against the reference",
    unit: "%",
    default: 5,
    source: NO_SOURCE,
    min: 0,
    max: 50,
  },
  {
    key: "screenVoltsTolerancePercent",
    label: "Screen volts tolerance against the reference",
    unit: "%",
    default: 5,
    source: NO_SOURCE,
    min: 0,
    max: 50,
  },
  {
    key: "gridVoltsToleranceVolts",
    label: "Grid volts tolerance against the reference",
    unit: "V",
    default: 0.25,
    source: NO_SOURCE,
    min: 0,
    max: 10,
  },
  {
    key: "heaterVoltsTolerancePercent",
    label: "Heater volts tolerance against the rating",
    unit: "%",
    default: 5,
    source: `${NO_SOURCE} (transconductance falls with heater voltage, so tighter than a supply tolerance)`,
    min: 0,
    max: 50,
  },
];

export const DEFAULT_VERDICT_THRESHOLDS: Readonly<VerdictThresholds> = Object.freeze(
  Object.fromEntries(VERDICT_THRESHOLD_DESCRIPTIONS.map((description) => [description.key, description.default])),
) as Readonly<VerdictThresholds>;

/**
 * Checks every threshold against its description's range and that the failure threshold does
 * not exceed the wear threshold. Returns null when all is well, else a reason naming the field.
 * Never throws.
 * @example checkVerdictThresholds(DEFAULT_VERDICT_THRESHOLDS) // null
 * @example checkVerdictThresholds({ ...DEFAULT_VERDICT_THRESHOLDS, maxLeakageMicroamps: -1 })
 *   // "Largest leakage current: -1 is below the minimum 0 µA"
 */
export function checkVerdictThresholds(thresholds: unknown): string | null {
  if (typeof thresholds !== "object" || thresholds === null) return "Thresholds: missing";
  const record = thresholds as Record<string, unknown>;
  for (const description of VERDICT_THRESHOLD_DESCRIPTIONS) {
    const value = record[description.key];
    if (typeof value !== "number" || !Number.isFinite(value)) {
      return `${description.label}: not a number`;
    }
    if (value < description.min) return `${description.label}: ${value} is below the minimum ${description.min} ${description.unit}`;
    if (value > description.max) return `${description.label}: ${value} is above the maximum ${description.max} ${description.unit}`;
  }
  const { failedBelowPercent, wornBelowPercent } = record as unknown as VerdictThresholds;
  if (failedBelowPercent > wornBelowPercent) {
    return `Failed below: ${failedBelowPercent} % must not exceed the worn-below threshold of ${wornBelowPercent} %`;
  }
  return null;
}
