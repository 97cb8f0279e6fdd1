/**
 * The acceptance rule and the admissible-pair graph.
 *
 * Relative difference of two readings a, b > 0: |a − b| / ((a + b) / 2), the difference as a
 * fraction of their mean, so it does not depend on which section is called "a". A pair is
 * admissible when the relative difference of every value is within the rule's limit for that
 * value (plus RELATIVE_DIFFERENCE_TOLERANCE, so a limit written as 0.03 accepts a pair whose
 * difference is 3 % up to rounding).
 *
 * Since the relative difference equals 2·tanh(|ln a − ln b| / 2), each limit is a bound on the
 * difference of logarithms. Candidates arrive sorted by the first value, so the admissible
 * partners of a candidate lie in a window of that order. With two or more values the window is
 * cut into columns one bound wide on the first value's logarithm, each column sorted by the
 * second value's logarithm: a candidate's partners lie in its own column and the next one,
 * within one bound on the second value, and only those are tested.
 */

/** Accepts differences that exceed the limit by floating-point rounding only. */
export const RELATIVE_DIFFERENCE_TOLERANCE = 1e-12;

/** Log-difference band around a limit inside which the exact relative difference decides. */
const LOG_MARGIN = 1e-9;

/**
 * |a − b| / mean(a, b), a fraction; 0 when both are equal. Readings must be positive (the
 * caller checks; other input gives a meaningless number, not an error).
 * Example: relativeDifference(2210, 2180) → 30 / 2195 ≈ 0.01367.
 */
export function relativeDifference(a: number, b: number): number {
  if (a === b) return 0;
  return Math.abs(a - b) / ((a + b) / 2);
}

/**
 * Largest ratio high/low two positive readings can have and still be within `limit`, with a
 * hair of slack for rounding (windowRatio(0.03) ≈ 1.03046):
 * (high − low) / ((high + low) / 2) ≤ t  ⇔  high / low ≤ (1 + t/2) / (1 − t/2).
 * Infinite for t ≥ 2, since a relative difference of positive readings is always below 2.
 */
export function windowRatio(limit: number): number {
  if (limit >= 2) return Number.POSITIVE_INFINITY;
  return ((1 + limit / 2) / (1 - limit / 2)) * (1 + 4 * RELATIVE_DIFFERENCE_TOLERANCE);
}

/** Candidates in sorted order, as the edge builder needs them. */
export interface SortedCandidateValues {
  /** valuesByIndex[valueIndex][sortedPosition]; sorted ascending by valuesByIndex[0]. */
  valuesByIndex: Float64Array[];
  /** Envelope (tube) number per sorted position. */
  envelope: Int32Array;
}

export interface EnvelopePolicy {
  allowSameEnvelope: boolean;
  allowAcrossEnvelopes: boolean;
}

/** The admissible, envelope-allowed pairs, tail < head in sorted positions. */
export interface AdmissibleGraph {
  edgeCount: number;
  tail: Int32Array;
  head: Int32Array;
  imbalance: Float64Array;
  /** Per sorted position: 1 when a partner meets the whole rule but the envelope policy forbids the pair. */
  blockedByEnvelope: Uint8Array;
}

/** Exact test of one value of one pair against its limit: meetsLimit(100, 103, 0.03) → true (2.96 %). */
export function meetsLimit(a: number, b: number, limit: number): boolean {
  return relativeDifference(a, b) <= limit + RELATIVE_DIFFERENCE_TOLERANCE;
}

/**
 * Builds all admissible pairs allowed by the envelope policy, with imbalance
 * Σ weight_i × relativeDifference_i.
 *
 * Returns the edge list over sorted positions. Never throws for well-formed arrays; callers
 * validate readings (positive, finite) first.
 *
 * @example
 * // gm 2200, 2230, 2400 µS and Ia 10.5, 10.6, 10.5 mA, 3 % on both, weights 1:
 * // only 0–1 is admissible (gm 1.4 %, Ia 0.95 %), imbalance ≈ 0.0231
 */
export function buildAdmissibleGraph(
  sorted: SortedCandidateValues,
  limits: number[],
  weights: number[],
  policy: EnvelopePolicy,
): AdmissibleGraph {
  const valueCount = limits.length;
  const values = sorted.valuesByIndex;
  const n = values[0].length;
  const envelope = sorted.envelope;
  const blockedByEnvelope = new Uint8Array(n);
  const logarithms = values.map((column) => column.map(Math.log));
  const logBound = limits.map((limit) => (limit >= 2 ? Number.POSITIVE_INFINITY : 2 * Math.atanh(limit / 2)));
  const outside = logBound.map((bound) => bound + LOG_MARGIN);
  const inside = logBound.map((bound) => bound - LOG_MARGIN);

  let capacity = 1 << 12;
  let tail = new Int32Array(capacity);
  let head = new Int32Array(capacity);
  let imbalance = new Float64Array(capacity);
  let edgeCount = 0;

  /** Decide the pair i–j (any order) and record it; values are tested with a log prefilter. */
  const consider = (i: number, j: number): void => {
    for (let v = 0; v < valueCount; v++) {
      const gap = Math.abs(logarithms[v][i] - logarithms[v][j]);
      if (gap < inside[v]) continue;
      if (gap > outside[v] || !meetsLimit(values[v][i], values[v][j], limits[v])) return;
    }
    const allowed = envelope[i] === envelope[j] ? policy.allowSameEnvelope : policy.allowAcrossEnvelopes;
    if (!allowed) {
      blockedByEnvelope[i] = 1;
      blockedByEnvelope[j] = 1;
      return;
    }
    let total = 0;
    for (let v = 0; v < valueCount; v++) total += weights[v] * relativeDifference(values[v][i], values[v][j]);
    if (edgeCount === capacity) {
      capacity *= 2;
      const grownTail = new Int32Array(capacity);
      const grownHead = new Int32Array(capacity);
      const grownImbalance = new Float64Array(capacity);
      grownTail.set(tail);
      grownHead.set(head);
      grownImbalance.set(imbalance);
      tail = grownTail;
      head = grownHead;
      imbalance = grownImbalance;
    }
    tail[edgeCount] = i < j ? i : j;
    head[edgeCount] = i < j ? j : i;
    imbalance[edgeCount] = total;
    edgeCount++;
  };

  if (valueCount === 1 || !Number.isFinite(outside[0]) || !Number.isFinite(outside[1])) {
    const first = values[0];
    const ratio = windowRatio(limits[0]);
    for (let i = 0; i < n; i++) {
      const upper = first[i] * ratio;
      for (let j = i + 1; j < n && first[j] <= upper; j++) consider(i, j);
    }
  } else {
    forEachGridNeighbour(logarithms[0], logarithms[1], outside[0], outside[1], consider);
  }

  return {
    edgeCount,
    tail: tail.subarray(0, edgeCount),
    head: head.subarray(0, edgeCount),
    imbalance: imbalance.subarray(0, edgeCount),
    blockedByEnvelope,
  };
}

/**
 * Calls visit(i, j) once for every pair whose first logs differ by at most cellX and second
 * logs by at most cellY (and for some pairs a little further apart). `xs` must be ascending.
 */
function forEachGridNeighbour(
  xs: Float64Array,
  ys: Float64Array,
  cellX: number,
  cellY: number,
  visit: (i: number, j: number) => void,
): void {
  const n = xs.length;
  // columns: runs of equal floor(x / cellX) in ascending order
  const columnOf = new Float64Array(n);
  for (let i = 0; i < n; i++) columnOf[i] = Math.floor(xs[i] / cellX);
  const columnStart: number[] = [];
  for (let i = 0; i < n; i++) if (i === 0 || columnOf[i] !== columnOf[i - 1]) columnStart.push(i);
  columnStart.push(n);
  const columnCount = columnStart.length - 1;
  // within each column, positions sorted by y
  const byY = new Int32Array(n);
  const sortedY = new Float64Array(n);
  for (let c = 0; c < columnCount; c++) {
    const from = columnStart[c];
    const to = columnStart[c + 1];
    const positions = Array.from({ length: to - from }, (_, offset) => from + offset).sort((a, b) => ys[a] - ys[b] || a - b);
    for (let offset = 0; offset < positions.length; offset++) {
      byY[from + offset] = positions[offset];
      sortedY[from + offset] = ys[positions[offset]];
    }
  }
  const firstAtLeast = (from: number, to: number, y: number): number => {
    let low = from;
    let high = to;
    while (low < high) {
      const middle = (low + high) >> 1;
      if (sortedY[middle] < y) low = middle + 1;
      else high = middle;
    }
    return low;
  };
  for (let c = 0; c < columnCount; c++) {
    const from = columnStart[c];
    const to = columnStart[c + 1];
    const hasNext = c + 1 < columnCount && columnOf[columnStart[c + 1]] === columnOf[from] + 1;
    const nextFrom = hasNext ? columnStart[c + 1] : 0;
    const nextTo = hasNext ? columnStart[c + 2] : 0;
    for (let slot = from; slot < to; slot++) {
      const i = byY[slot];
      const y = ys[i];
      // own column: pairs counted once, from the lower y (ties by slot)
      for (let other = slot + 1; other < to && sortedY[other] <= y + cellY; other++) visit(i, byY[other]);
      if (!hasNext) continue;
      for (let other = firstAtLeast(nextFrom, nextTo, y - cellY); other < nextTo && sortedY[other] <= y + cellY; other++) {
        visit(i, byY[other]);
      }
    }
  }
}

/**
 * For a candidate left over: how many leading values of the rule (in order) some allowed
 * partner met, as a number from 0 to the value count. The partner search is the first value's
 * window on both sides. Used only to explain leftovers.
 *
 * @example
 * // gm 2200 vs 2230 (1.4 %) but Ia 10.5 vs 12 (13 %), 3 % rule: 1 (gm met, Ia not)
 */
export function deepestValuesMet(
  sorted: SortedCandidateValues,
  limits: number[],
  policy: EnvelopePolicy,
  position: number,
): number {
  const first = sorted.valuesByIndex[0];
  const ratio = windowRatio(limits[0]);
  let deepest = 0;
  const check = (j: number): void => {
    const allowed = sorted.envelope[position] === sorted.envelope[j] ? policy.allowSameEnvelope : policy.allowAcrossEnvelopes;
    if (!allowed) return;
    let met = 0;
    while (met < limits.length && meetsLimit(sorted.valuesByIndex[met][position], sorted.valuesByIndex[met][j], limits[met])) met++;
    if (met > deepest) deepest = met;
  };
  for (let j = position + 1; j < first.length && first[j] <= first[position] * ratio; j++) check(j);
  for (let j = position - 1; j >= 0 && first[j] * ratio >= first[position]; j--) check(j);
  return deepest;
}
