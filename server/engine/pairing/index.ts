/**
 * Pairing engine: choose pairs of tube sections for balanced bistable (Eccles–Jordan) stages,
 * or sets of N alike sections. Pure; no IO.
 *
 * Decisions, in one place:
 * - Acceptance: a pair is admissible when, for every value i, the relative difference
 *   |a − b| / mean(a, b) is at most rule.maxRelativeDifference[i] (see admissible-pairs.ts).
 * - Imbalance of a pair: Σ weights[i] × relativeDifference_i (weights default to 1), a
 *   fraction. It ranks pairs; it does not decide admissibility.
 * - Objective: the most admissible pairs first, then the least total imbalance among all
 *   pairings with that many pairs — a maximum-cardinality minimum-weight matching, solved
 *   exactly (exact-matching.ts, blossom-matching.ts). Imbalances are rounded to integer steps
 *   for the solver, 2^30 steps over the largest imbalance (fewer above 130,000 sections, to
 *   keep the solver's arithmetic exact), so a total is optimal to within pairs × one step —
 *   about pairs × 1e-9 × the largest imbalance.
 * - Candidates are ordered by their first value, ties by id, before anything else, so the
 *   result does not depend on the order they are given in.
 * - maxPairs = N keeps the N best-balanced pairs of that optimal pairing. This is not always
 *   the least-total N-pair selection over all pairings (that would be a separate, harder
 *   problem); it is the build's N stages taken from a pairing that leaves the most stages
 *   possible for the rest of the stock.
 * - Envelopes: sections with the same tubeId share one. allowSameEnvelope lets a tube's own
 *   sections pair (ranked by their balance like any pair); allowAcrossEnvelopes lets sections
 *   of different tubes pair. With only same-envelope pairs allowed every two-section tube
 *   either qualifies or not, which is decided directly without a matching.
 * - Readings must be positive and finite, one per rule value; other candidates are leftovers.
 */

import { buildAdmissibleGraph, deepestValuesMet } from "./admissible-pairs.ts";
import type { AdmissibleGraph } from "./admissible-pairs.ts";
import { solveMinimumCostMaximumMatching } from "./exact-matching.ts";
import {
  checkMaxPairs,
  emptyStats,
  comparePairsByBalance,
  formatLimit,
  formatPercent,
  makePair,
  prepareCandidates,
} from "./prepared-candidates.ts";
import type { PreparedCandidates } from "./prepared-candidates.ts";
import type {
  AcceptanceRule,
  PairingCandidate,
  PairingLeftover,
  PairingOptions,
  PairingResult,
  PairingStats,
  SectionPair,
} from "./types.ts";

export type {
  AcceptanceRule,
  GroupingOptions,
  GroupingResult,
  LeftoverReasonCode,
  PairingCandidate,
  PairingLeftover,
  PairingMethod,
  PairingOptions,
  PairingResult,
  PairingStats,
  SectionGroup,
  SectionPair,
  ValueLabel,
} from "./types.ts";
export { relativeDifference, RELATIVE_DIFFERENCE_TOLERANCE } from "./admissible-pairs.ts";
export { solveMinimumCostMaximumMatching } from "./exact-matching.ts";
export type { CostGraph, MaximumMatchingOptions, MaximumMatchingResult } from "./exact-matching.ts";
export { greedySortAndPair } from "./sort-and-pair.ts";
export { groupSections } from "./set-grouping.ts";

/** Integer steps the solver gets over the largest imbalance of a stock. */
const MAXIMUM_COST_STEPS = 2 ** 30;
/** Largest cost × (sections + 2) the solver keeps exact (see exact-matching.ts, 2^48, with room). */
const COST_TIMES_SIZE_BUDGET = 2 ** 47;

/**
 * Optimal pairing of tube sections: the most pairs meeting `rule`, then the least total
 * imbalance (Σ weights[i] × relative difference of value i over the chosen pairs).
 *
 * Returns pairs (best-balanced first, each with per-value differences and a one-line
 * explanation), leftovers with a reason code and sentence, and statistics. Throws RangeError
 * for a malformed rule or options (no limits, a negative or non-finite limit or weight, wrong
 * weights/valueLabels length, maxPairs not a non-negative integer).
 *
 * @example
 * pairSections(
 *   [ { id: "A1", tubeId: "A", section: 1, values: [2210, 10.2] },
 *     { id: "B1", tubeId: "B", section: 1, values: [2180, 10.4] } ],
 *   { maxRelativeDifference: [0.03, 0.03] },
 *   { allowSameEnvelope: true, allowAcrossEnvelopes: true,
 *     valueLabels: [{ name: "gm", unit: "µS" }, { name: "Ia", unit: "mA" }] },
 * ).pairs[0].explanation
 * // → "gm 2180 vs 2210 µS (1.4 %), Ia 10.4 vs 10.2 mA (1.9 %), tubes B and A"
 */
export function pairSections(
  candidates: PairingCandidate[],
  rule: AcceptanceRule,
  options: PairingOptions,
): PairingResult {
  checkMaxPairs(options.maxPairs);
  const prepared = prepareCandidates(candidates, rule, options.weights, options.valueLabels);
  const { sorted } = prepared;
  const n = sorted.length;
  const leftovers: PairingLeftover[] = [...prepared.invalid];
  const stats = emptyStats("none", candidates.length, n);
  if (!options.allowSameEnvelope && !options.allowAcrossEnvelopes) {
    for (const candidate of sorted) {
      leftovers.push({
        candidate,
        reasonCode: "pairing-not-allowed",
        reason: "the options allow neither same-envelope nor across-envelope pairs",
      });
    }
    return { pairs: [], leftovers, stats };
  }

  const graph = buildAdmissibleGraph(prepared.sortedValues, prepared.limits, prepared.weights, {
    allowSameEnvelope: options.allowSameEnvelope,
    allowAcrossEnvelopes: options.allowAcrossEnvelopes,
  });
  stats.admissibleEdges = graph.edgeCount;

  let partner: Int32Array;
  if (!options.allowAcrossEnvelopes) {
    stats.method = "same-envelope-only";
    partner = pairWithinEnvelopes(n, graph, prepared.sortedValues.envelope, stats);
  } else {
    stats.method = "exact-matching";
    let largestImbalance = 0;
    for (let k = 0; k < graph.edgeCount; k++) if (graph.imbalance[k] > largestImbalance) largestImbalance = graph.imbalance[k];
    const steps = Math.min(MAXIMUM_COST_STEPS, Math.floor(COST_TIMES_SIZE_BUDGET / (n + 2)));
    const scale = largestImbalance > 0 ? steps / largestImbalance : 1;
    const cost = new Float64Array(graph.edgeCount);
    for (let k = 0; k < graph.edgeCount; k++) cost[k] = Math.round(graph.imbalance[k] * scale);
    const matching = solveMinimumCostMaximumMatching({ vertexCount: n, edgeTail: graph.tail, edgeHead: graph.head, edgeCost: cost });
    partner = matching.partner;
    stats.components = matching.components;
    stats.largestComponent = matching.largestComponent;
    stats.solveRounds = matching.pricingRounds;
    stats.solverEdges = matching.solverEdges;
  }

  const allPairs: SectionPair[] = [];
  for (let i = 0; i < n; i++) {
    if (partner[i] <= i) continue;
    allPairs.push(makePair(sorted[i], sorted[partner[i]], prepared));
  }
  allPairs.sort(comparePairsByBalance);
  stats.pairsFound = allPairs.length;
  const kept = options.maxPairs === undefined ? allPairs : allPairs.slice(0, options.maxPairs);
  for (const dropped of allPairs.slice(kept.length)) {
    const why = `paired with %OTHER% in the optimal pairing (imbalance ${formatPercent(dropped.imbalance)}), but only the ${kept.length} best-balanced pairs were asked for`;
    leftovers.push({ candidate: dropped.a, reasonCode: "beyond-max-pairs", reason: why.replace("%OTHER%", dropped.b.id) });
    leftovers.push({ candidate: dropped.b, reasonCode: "beyond-max-pairs", reason: why.replace("%OTHER%", dropped.a.id) });
  }
  stats.pairs = kept.length;
  stats.totalImbalance = kept.reduce((sum, pair) => sum + pair.imbalance, 0);

  leftovers.push(...explainUnpaired(prepared, graph, partner, options));
  return { pairs: kept, leftovers, stats };
}

/**
 * Same-envelope pairs only: a two-section tube pairs exactly when its sections meet the rule.
 * A tube with three or more usable sections is a tiny matching of its own.
 */
function pairWithinEnvelopes(n: number, graph: AdmissibleGraph, envelope: Int32Array, stats: PairingStats): Int32Array {
  const partner = new Int32Array(n).fill(-1);
  const edgesByEnvelope = new Map<number, number[]>();
  for (let k = 0; k < graph.edgeCount; k++) {
    const key = envelope[graph.tail[k]];
    const list = edgesByEnvelope.get(key);
    if (list) list.push(k);
    else edgesByEnvelope.set(key, [k]);
  }
  stats.components = edgesByEnvelope.size;
  for (const edges of edgesByEnvelope.values()) {
    if (edges.length === 1) {
      const k = edges[0];
      partner[graph.tail[k]] = graph.head[k];
      partner[graph.head[k]] = graph.tail[k];
      stats.largestComponent = Math.max(stats.largestComponent, 2);
      continue;
    }
    const vertices = [...new Set(edges.flatMap((k) => [graph.tail[k], graph.head[k]]))];
    stats.largestComponent = Math.max(stats.largestComponent, vertices.length);
    const local = new Map(vertices.map((vertex, index) => [vertex, index]));
    const largest = Math.max(...edges.map((k) => graph.imbalance[k]));
    const scale = largest > 0 ? MAXIMUM_COST_STEPS / largest : 1;
    const matching = solveMinimumCostMaximumMatching({
      vertexCount: vertices.length,
      edgeTail: Int32Array.from(edges, (k) => local.get(graph.tail[k]) as number),
      edgeHead: Int32Array.from(edges, (k) => local.get(graph.head[k]) as number),
      edgeCost: Float64Array.from(edges, (k) => Math.round(graph.imbalance[k] * scale)),
    });
    stats.solveRounds = Math.max(stats.solveRounds, matching.pricingRounds);
    for (let index = 0; index < vertices.length; index++) {
      if (matching.partner[index] >= 0) partner[vertices[index]] = vertices[matching.partner[index]];
    }
  }
  return partner;
}

function explainUnpaired(
  prepared: PreparedCandidates,
  graph: AdmissibleGraph,
  partner: Int32Array,
  options: PairingOptions,
): PairingLeftover[] {
  const { sorted, limits, labels } = prepared;
  const n = sorted.length;
  const degree = new Int32Array(n);
  const closestEdge = new Int32Array(n).fill(-1);
  const noteEdge = (v: number, k: number): void => {
    degree[v]++;
    if (closestEdge[v] < 0 || graph.imbalance[k] < graph.imbalance[closestEdge[v]]) closestEdge[v] = k;
  };
  for (let k = 0; k < graph.edgeCount; k++) {
    if (partner[graph.tail[k]] >= 0 && partner[graph.head[k]] >= 0) continue;
    noteEdge(graph.tail[k], k);
    noteEdge(graph.head[k], k);
  }
  const siblingsOf = new Map<string, number[]>();
  if (!options.allowAcrossEnvelopes) {
    sorted.forEach((candidate, index) => {
      const list = siblingsOf.get(candidate.tubeId);
      if (list) list.push(index);
      else siblingsOf.set(candidate.tubeId, [index]);
    });
  }

  const leftovers: PairingLeftover[] = [];
  for (let i = 0; i < n; i++) {
    if (partner[i] >= 0) continue;
    const candidate = sorted[i];
    if (degree[i] > 0) {
      const k = closestEdge[i];
      const closest = graph.tail[k] === i ? graph.head[k] : graph.tail[k];
      const takenBy = partner[closest] >= 0 ? sorted[partner[closest]].id : "another section";
      const count = degree[i] === 1 ? "its only partner within the rule" : `all ${degree[i]} partners within the rule`;
      leftovers.push({
        candidate,
        reasonCode: "partners-taken",
        reason: `${count} went to a pairing with more stages or less total imbalance; the closest, ${sorted[closest].id} (${formatPercent(graph.imbalance[k])}), is paired with ${takenBy}`,
      });
      continue;
    }
    if (graph.blockedByEnvelope[i] === 1) {
      leftovers.push(
        !options.allowSameEnvelope
          ? { candidate, reasonCode: "partner-only-in-same-envelope", reason: "only a section of its own tube is within the rule, and same-envelope pairs are not allowed" }
          : { candidate, reasonCode: "partner-only-in-other-envelopes", reason: "only sections of other tubes are within the rule, and pairs across envelopes are not allowed" },
      );
      continue;
    }
    if (!options.allowAcrossEnvelopes) {
      const siblings = (siblingsOf.get(candidate.tubeId) ?? []).filter((index) => index !== i);
      if (siblings.length === 0) {
        leftovers.push({ candidate, reasonCode: "no-partner-within-rule", reason: "no other usable section in its envelope" });
        continue;
      }
    }
    const failing = deepestValuesMet(prepared.sortedValues, limits, options, i);
    const label = labels[failing];
    const scope = failing > 0 ? ` among the sections within the rule on ${labels.slice(0, failing).map((l) => l.name).join(" and ")}` : "";
    const envelopeScope = options.allowAcrossEnvelopes ? "" : " in its envelope";
    leftovers.push({
      candidate,
      reasonCode: "no-partner-within-rule",
      reason: `no partner${envelopeScope} within ${formatLimit(limits[failing])} on ${label.name}${scope}`,
    });
  }
  return leftovers;
}
