/**
 * Sets of N alike sections (e.g. four for a pair of matched stages). Choosing the most sets
 * exactly is NP-hard for N ≥ 3, so this is a documented heuristic: sound (every set meets the
 * rule between every two members) but not always the most sets possible.
 *
 * Method: walk the sections in order of the first value. The lowest free section is the anchor;
 * its pool is the free sections within the first value's limit above it that meet the whole
 * rule with it. Grow the set one member at a time, each time taking the pool member that meets
 * the rule with every member so far and adds the least imbalance to them. A set that cannot be
 * completed leaves its anchor over (no later window reaches below it) and the walk moves on.
 * Members all lie between the anchor and anchor × window ratio, so the first value holds for
 * every two members; the other values are checked pairwise.
 */

import { relativeDifference, RELATIVE_DIFFERENCE_TOLERANCE, windowRatio } from "./admissible-pairs.ts";
import { formatPercent, formatReading, prepareCandidates } from "./prepared-candidates.ts";
import type { PreparedCandidates } from "./prepared-candidates.ts";
import type { AcceptanceRule, GroupingOptions, GroupingResult, PairingCandidate, PairingLeftover, SectionGroup } from "./types.ts";

/**
 * Sets of `setSize` sections in which every two members meet `rule` (heuristic, see above).
 *
 * Returns groups (least imbalance first; imbalance = Σ weight_i × largest pairwise relative
 * difference of value i), leftovers with reasons, and counts. Throws RangeError when setSize is
 * not an integer ≥ 2 or the rule/options are malformed.
 *
 * @example
 * // gm 100, 100.5, 101, 101.5 and 200 with 2 % on gm, sets of 4:
 * // one group of the first four (spread 1.5 %), 200 left over
 * groupSections(fiveSections, { maxRelativeDifference: [0.02] }, 4).groups.length  // → 1
 */
export function groupSections(
  candidates: PairingCandidate[],
  rule: AcceptanceRule,
  setSize: number,
  options: GroupingOptions = {},
): GroupingResult {
  if (!Number.isInteger(setSize) || setSize < 2) throw new RangeError(`setSize ${setSize} must be an integer ≥ 2`);
  const prepared = prepareCandidates(candidates, rule, options.weights, options.valueLabels);
  const { sorted, limits } = prepared;
  const n = sorted.length;
  const first = prepared.sortedValues.valuesByIndex[0];
  const ratio = windowRatio(limits[0]);
  const used = new Uint8Array(n);
  const groups: SectionGroup[] = [];
  const leftovers: PairingLeftover[] = [...prepared.invalid];

  const meetsRule = (i: number, j: number): boolean => {
    for (let v = 0; v < prepared.valueCount; v++) {
      const column = prepared.sortedValues.valuesByIndex[v];
      if (relativeDifference(column[i], column[j]) > limits[v] + RELATIVE_DIFFERENCE_TOLERANCE) return false;
    }
    return true;
  };
  const imbalanceBetween = (i: number, j: number): number => {
    let total = 0;
    for (let v = 0; v < prepared.valueCount; v++) {
      const column = prepared.sortedValues.valuesByIndex[v];
      total += prepared.weights[v] * relativeDifference(column[i], column[j]);
    }
    return total;
  };

  for (let anchor = 0; anchor < n; anchor++) {
    if (used[anchor] === 1) continue;
    const pool: number[] = [];
    const upper = first[anchor] * ratio;
    for (let j = anchor + 1; j < n && first[j] <= upper; j++) {
      if (used[j] === 0 && meetsRule(anchor, j)) pool.push(j);
    }
    if (pool.length < setSize - 1) {
      leftovers.push({
        candidate: sorted[anchor],
        reasonCode: "no-set-within-rule",
        reason: `only ${pool.length} free section${pool.length === 1 ? "" : "s"} above it meet the rule with it; a set of ${setSize} needs ${setSize - 1}`,
      });
      continue;
    }
    const members = [anchor];
    const compatible = pool.map(() => true);
    const addedImbalance = pool.map((j) => imbalanceBetween(anchor, j));
    const taken = pool.map(() => false);
    while (members.length < setSize) {
      let best = -1;
      for (let index = 0; index < pool.length; index++) {
        if (taken[index] || !compatible[index]) continue;
        if (best < 0 || addedImbalance[index] < addedImbalance[best]) best = index;
      }
      if (best < 0) break;
      taken[best] = true;
      const member = pool[best];
      members.push(member);
      for (let index = 0; index < pool.length; index++) {
        if (taken[index] || !compatible[index]) continue;
        if (meetsRule(member, pool[index])) addedImbalance[index] += imbalanceBetween(member, pool[index]);
        else compatible[index] = false;
      }
    }
    if (members.length < setSize) {
      leftovers.push({
        candidate: sorted[anchor],
        reasonCode: "no-set-within-rule",
        reason: `no ${setSize} sections that all meet the rule with each other were found among the ${pool.length} close to it (heuristic search)`,
      });
      continue;
    }
    for (const member of members) used[member] = 1;
    groups.push(makeGroup(members, prepared));
  }

  groups.sort((x, y) => x.imbalance - y.imbalance || (x.members[0].id < y.members[0].id ? -1 : 1));
  return {
    groups,
    leftovers,
    stats: {
      candidates: candidates.length,
      validCandidates: n,
      groups: groups.length,
      setSize,
      totalImbalance: groups.reduce((sum, group) => sum + group.imbalance, 0),
    },
  };
}

function makeGroup(positions: number[], prepared: PreparedCandidates): SectionGroup {
  const members = positions.map((position) => prepared.sorted[position]);
  const perValueSpread = prepared.limits.map((_, v) => {
    let spread = 0;
    for (let x = 0; x < members.length; x++) {
      for (let y = x + 1; y < members.length; y++) spread = Math.max(spread, relativeDifference(members[x].values[v], members[y].values[v]));
    }
    return spread;
  });
  const imbalance = perValueSpread.reduce((sum, spread, v) => sum + prepared.weights[v] * spread, 0);
  const envelopes = new Set(members.map((member) => member.tubeId)).size;
  const parts = prepared.labels.map((label, v) => {
    const readings = members.map((member) => member.values[v]);
    const unit = label.unit ? ` ${label.unit}` : "";
    return `${label.name} ${formatReading(Math.min(...readings))}–${formatReading(Math.max(...readings))}${unit} (${formatPercent(perValueSpread[v])} spread)`;
  });
  parts.push(envelopes === 1 ? "one envelope" : `${envelopes} envelopes`);
  return { members, perValueSpread, imbalance, envelopes, explanation: parts.join(", ") };
}
