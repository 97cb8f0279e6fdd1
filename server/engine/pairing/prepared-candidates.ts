/**
 * Input checks, sorting and the wording shared by the pairing, sort-and-pair and grouping
 * methods. Malformed rules and options are caller bugs and throw RangeError; a candidate with
 * unusable readings is a fact about the stock and becomes a leftover.
 */

import { relativeDifference } from "./admissible-pairs.ts";
import type { SortedCandidateValues } from "./admissible-pairs.ts";
import type { AcceptanceRule, PairingCandidate, PairingLeftover, PairingStats, SectionPair, ValueLabel } from "./types.ts";

export interface PreparedCandidates {
  valueCount: number;
  limits: number[];
  weights: number[];
  labels: ValueLabel[];
  /** Candidates with usable readings, ascending by first value, ties by id. */
  sorted: PairingCandidate[];
  sortedValues: SortedCandidateValues;
  invalid: PairingLeftover[];
}

/**
 * Checks the rule and options, sets aside candidates whose readings cannot be used, and
 * sorts the rest by first value (ties by id) into column arrays for the edge builder.
 * Throws RangeError for an empty rule, a negative or non-finite limit or weight, or weights /
 * labels of the wrong length.
 *
 * @example
 * prepareCandidates([{ id: "B", tubeId: "T2", section: 1, values: [2300] },
 *   { id: "A", tubeId: "T1", section: 1, values: [2200] }], { maxRelativeDifference: [0.03] },
 *   undefined, undefined).sorted.map((c) => c.id)  // → ["A", "B"]
 */
export function prepareCandidates(
  candidates: PairingCandidate[],
  rule: AcceptanceRule,
  weights: number[] | undefined,
  labels: ValueLabel[] | undefined,
): PreparedCandidates {
  const limits = rule.maxRelativeDifference;
  if (!Array.isArray(limits) || limits.length === 0) throw new RangeError("the rule needs at least one maxRelativeDifference");
  for (const limit of limits) {
    if (!Number.isFinite(limit) || limit < 0) throw new RangeError(`maxRelativeDifference ${limit} must be a finite number ≥ 0`);
  }
  const valueCount = limits.length;
  const resolvedWeights = weights ?? new Array<number>(valueCount).fill(1);
  if (resolvedWeights.length !== valueCount) throw new RangeError(`weights must have ${valueCount} entries, one per value`);
  for (const weight of resolvedWeights) {
    if (!Number.isFinite(weight) || weight < 0) throw new RangeError(`weight ${weight} must be a finite number ≥ 0`);
  }
  if (labels !== undefined && labels.length !== valueCount) throw new RangeError(`valueLabels must have ${valueCount} entries, one per value`);
  const resolvedLabels = labels ?? limits.map((_, index) => ({ name: `value ${index + 1}` }));

  const valid: PairingCandidate[] = [];
  const invalid: PairingLeftover[] = [];
  for (const candidate of candidates) {
    const values = candidate.values;
    const usable = Array.isArray(values) && values.length === valueCount && values.every((x) => Number.isFinite(x) && x > 0);
    if (usable) valid.push(candidate);
    else {
      invalid.push({
        candidate,
        reasonCode: "invalid-values",
        reason: `needs ${valueCount} positive readings (${resolvedLabels.map((label) => label.name).join(", ")})`,
      });
    }
  }
  valid.sort((x, y) => x.values[0] - y.values[0] || (x.id < y.id ? -1 : x.id > y.id ? 1 : 0));

  const valuesByIndex: Float64Array[] = [];
  for (let v = 0; v < valueCount; v++) valuesByIndex.push(Float64Array.from(valid, (candidate) => candidate.values[v]));
  const envelopeNumbers = new Map<string, number>();
  const envelope = Int32Array.from(valid, (candidate) => {
    let number = envelopeNumbers.get(candidate.tubeId);
    if (number === undefined) {
      number = envelopeNumbers.size;
      envelopeNumbers.set(candidate.tubeId, number);
    }
    return number;
  });
  return {
    valueCount,
    limits,
    weights: resolvedWeights,
    labels: resolvedLabels,
    sorted: valid,
    sortedValues: { valuesByIndex, envelope },
    invalid,
  };
}

/** Throws RangeError unless maxPairs is absent or a non-negative integer: checkMaxPairs(1.5) throws. */
/** Statistics before any pairing has been done; both pairing methods start from these. */
export function emptyStats(method: PairingStats["method"], candidateCount: number, validCandidates: number): PairingStats {
  return {
    method,
    candidates: candidateCount,
    validCandidates,
    admissibleEdges: 0,
    components: 0,
    largestComponent: 0,
    pairsFound: 0,
    pairs: 0,
    totalImbalance: 0,
    solveRounds: 0,
    solverEdges: 0,
  };
}

export function checkMaxPairs(maxPairs: number | undefined): void {
  if (maxPairs !== undefined && (!Number.isInteger(maxPairs) || maxPairs < 0)) {
    throw new RangeError(`maxPairs ${maxPairs} must be a non-negative integer`);
  }
}

/**
 * Relative differences per value and the weighted imbalance Σ weight_i × difference_i of two
 * candidates with usable readings. Example: values [2210, 10.2] and [2180, 10.4], weights
 * [1, 1] → differences [0.01367, 0.01942], imbalance 0.03309.
 */
export function comparePair(a: PairingCandidate, b: PairingCandidate, weights: number[]): { perValueDifference: number[]; imbalance: number } {
  const perValueDifference = a.values.map((value, index) => relativeDifference(value, b.values[index]));
  let imbalance = 0;
  for (let index = 0; index < perValueDifference.length; index++) imbalance += weights[index] * perValueDifference[index];
  return { perValueDifference, imbalance };
}

/** A reading as entered, trimmed to 6 significant digits: 2210 → "2210", 10.2 → "10.2". */
export function formatReading(value: number): string {
  return String(Number(value.toPrecision(6)));
}

/** A fraction as percent with one decimal: 0.0137 → "1.4 %". */
export function formatPercent(fraction: number): string {
  return `${(fraction * 100).toFixed(1)} %`;
}

/** A rule limit as percent, without a needless decimal: 0.03 → "3 %", 0.025 → "2.5 %". */
export function formatLimit(fraction: number): string {
  return `${Number((fraction * 100).toPrecision(6))} %`;
}

/** One value of a pair: describeValue({ name: "gm", unit: "µS" }, 2210, 2180, 0.01367) → "gm 2210 vs 2180 µS (1.4 %)". */
export function describeValue(label: ValueLabel, a: number, b: number, difference: number): string {
  const unit = label.unit ? ` ${label.unit}` : "";
  return `${label.name} ${formatReading(a)} vs ${formatReading(b)}${unit} (${formatPercent(difference)})`;
}

/** "gm 2210 vs 2180 µS (1.4 %), Ia 10.2 vs 10.4 mA (1.9 %), same envelope" */
export function describePair(
  a: PairingCandidate,
  b: PairingCandidate,
  perValueDifference: number[],
  labels: ValueLabel[],
): string {
  const parts = labels.map((label, index) => describeValue(label, a.values[index], b.values[index], perValueDifference[index]));
  parts.push(a.tubeId === b.tubeId ? `same envelope (${a.tubeId})` : `tubes ${a.tubeId} and ${b.tubeId}`);
  return parts.join(", ");
}

/** A pair with its differences, imbalance and explanation; a and b keep their given order. */
export function makePair(a: PairingCandidate, b: PairingCandidate, prepared: PreparedCandidates): SectionPair {
  const { perValueDifference, imbalance } = comparePair(a, b, prepared.weights);
  return {
    a,
    b,
    imbalance,
    perValueDifference,
    sameEnvelope: a.tubeId === b.tubeId,
    explanation: describePair(a, b, perValueDifference, prepared.labels),
  };
}

/** Best-balanced first; ties by the first section's id so the order is reproducible. */
export function comparePairsByBalance(x: SectionPair, y: SectionPair): number {
  return x.imbalance - y.imbalance || (x.a.id < y.a.id ? -1 : x.a.id > y.a.id ? 1 : 0);
}
