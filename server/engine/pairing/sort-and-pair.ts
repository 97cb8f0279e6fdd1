/**
 * The naive method, kept for comparison: sort by the first value and pair neighbours.
 */

import { relativeDifference, RELATIVE_DIFFERENCE_TOLERANCE } from "./admissible-pairs.ts";
import { checkMaxPairs, comparePairsByBalance, emptyStats, formatPercent, makePair, prepareCandidates } from "./prepared-candidates.ts";
import type { PreparedCandidates } from "./prepared-candidates.ts";
import type { AcceptanceRule, PairingCandidate, PairingLeftover, PairingOptions, PairingResult, SectionPair } from "./types.ts";

/**
 * Sort-and-pair: sort by the first value, walk the list, and pair a section with the next one
 * when the two meet the rule (and the envelope options); otherwise move on by one. With one
 * value per section this is already optimal; with several values it misses many pairs.
 *
 * Returns the same shape as pairSections (method "sort-and-pair"; admissibleEdges counts the
 * neighbour pairs in sort order that meet the rule, components the runs of such neighbours).
 * Throws RangeError for a malformed rule or options, like pairSections.
 *
 * @example
 * // gm 100, 101, 102, 103 with 1.5 % on gm: pairs (100, 101) and (102, 103)
 * greedySortAndPair(fourSections, { maxRelativeDifference: [0.015] },
 *   { allowSameEnvelope: true, allowAcrossEnvelopes: true }).stats.pairs  // → 2
 */
export function greedySortAndPair(candidates: PairingCandidate[], rule: AcceptanceRule, options: PairingOptions): PairingResult {
  checkMaxPairs(options.maxPairs);
  const prepared = prepareCandidates(candidates, rule, options.weights, options.valueLabels);
  const { sorted } = prepared;
  const n = sorted.length;
  const leftovers: PairingLeftover[] = [...prepared.invalid];
  const stats = emptyStats("sort-and-pair", candidates.length, n);
  if (!options.allowSameEnvelope && !options.allowAcrossEnvelopes) {
    stats.method = "none";
    for (const candidate of sorted) {
      leftovers.push({ candidate, reasonCode: "pairing-not-allowed", reason: "the options allow neither same-envelope nor across-envelope pairs" });
    }
    return { pairs: [], leftovers, stats };
  }

  const neighboursPass = new Uint8Array(Math.max(0, n - 1));
  let run = 1;
  for (let i = 0; i + 1 < n; i++) {
    neighboursPass[i] = meetsRule(sorted[i], sorted[i + 1], prepared, options) ? 1 : 0;
    if (neighboursPass[i] === 1) {
      stats.admissibleEdges++;
      if (run === 1) stats.components++;
      run++;
      stats.largestComponent = Math.max(stats.largestComponent, run);
    } else {
      run = 1;
    }
  }

  const paired = new Uint8Array(n);
  const allPairs: SectionPair[] = [];
  for (let i = 0; i + 1 < n; ) {
    if (neighboursPass[i] === 1) {
      allPairs.push(makePair(sorted[i], sorted[i + 1], prepared));
      paired[i] = 1;
      paired[i + 1] = 1;
      i += 2;
    } else {
      i += 1;
    }
  }
  allPairs.sort(comparePairsByBalance);
  stats.pairsFound = allPairs.length;
  const kept = options.maxPairs === undefined ? allPairs : allPairs.slice(0, options.maxPairs);
  for (const dropped of allPairs.slice(kept.length)) {
    for (const [candidate, other] of [[dropped.a, dropped.b], [dropped.b, dropped.a]] as const) {
      leftovers.push({
        candidate,
        reasonCode: "beyond-max-pairs",
        reason: `paired with ${other.id} by sort-and-pair (imbalance ${formatPercent(dropped.imbalance)}), but only the ${kept.length} best-balanced pairs were asked for`,
      });
    }
  }
  stats.pairs = kept.length;
  stats.totalImbalance = kept.reduce((sum, pair) => sum + pair.imbalance, 0);

  const firstName = prepared.labels[0].name;
  for (let i = 0; i < n; i++) {
    if (paired[i] === 1) continue;
    leftovers.push({
      candidate: sorted[i],
      reasonCode: "not-paired-by-sort",
      reason: `sort-and-pair only tries the next section in order of ${firstName}; no free neighbour met the rule`,
    });
  }
  return { pairs: kept, leftovers, stats };
}

function meetsRule(a: PairingCandidate, b: PairingCandidate, prepared: PreparedCandidates, options: PairingOptions): boolean {
  const same = a.tubeId === b.tubeId;
  if (same ? !options.allowSameEnvelope : !options.allowAcrossEnvelopes) return false;
  for (let index = 0; index < prepared.valueCount; index++) {
    if (relativeDifference(a.values[index], b.values[index]) > prepared.limits[index] + RELATIVE_DIFFERENCE_TOLERANCE) return false;
  }
  return true;
}
