/**
 * Brute force for the pairing tests: every matching of a small graph is enumerated, so the
 * results are the definition of the optimum, not another algorithm's opinion.
 */
import type { AcceptanceRule, PairingCandidate } from "../../../server/engine/pairing/index.ts";

export interface WeightedEdge {
  a: number;
  b: number;
  cost: number;
}

/** Most pairs, then least total cost, over all matchings (exponential; for ≤ 14 vertices). */
export function bruteForceMaximumMatching(vertexCount: number, edges: WeightedEdge[]): { pairs: number; cost: number } {
  const cheapest = new Map<number, number>();
  for (const { a, b, cost } of edges) {
    const key = Math.min(a, b) * vertexCount + Math.max(a, b);
    cheapest.set(key, Math.min(cheapest.get(key) ?? Number.POSITIVE_INFINITY, cost));
  }
  const used = new Array<boolean>(vertexCount).fill(false);
  let best = { pairs: 0, cost: 0 };
  const visit = (from: number, pairs: number, cost: number): void => {
    let v = from;
    while (v < vertexCount && used[v]) v++;
    if (v >= vertexCount) {
      if (pairs > best.pairs || (pairs === best.pairs && cost < best.cost)) best = { pairs, cost };
      return;
    }
    used[v] = true;
    visit(v + 1, pairs, cost); // v stays single
    for (let w = v + 1; w < vertexCount; w++) {
      const edgeCost = cheapest.get(v * vertexCount + w);
      if (used[w] || edgeCost === undefined) continue;
      used[w] = true;
      visit(v + 1, pairs + 1, cost + edgeCost);
      used[w] = false;
    }
    used[v] = false;
  };
  visit(0, 0, 0);
  return best;
}

/** |a − b| / mean(a, b), written out here from the definition rather than imported. */
export function relativeDifferenceByDefinition(a: number, b: number): number {
  return Math.abs(a - b) / ((a + b) / 2);
}

/** Admissible pairs by checking every pair against the rule and the envelope options. */
export function admissiblePairsByDefinition(
  candidates: PairingCandidate[],
  rule: AcceptanceRule,
  options: { allowSameEnvelope: boolean; allowAcrossEnvelopes: boolean; weights?: number[] },
): WeightedEdge[] {
  const edges: WeightedEdge[] = [];
  for (let a = 0; a < candidates.length; a++) {
    for (let b = a + 1; b < candidates.length; b++) {
      const same = candidates[a].tubeId === candidates[b].tubeId;
      if (same ? !options.allowSameEnvelope : !options.allowAcrossEnvelopes) continue;
      let cost = 0;
      let admissible = true;
      rule.maxRelativeDifference.forEach((limit, index) => {
        const difference = relativeDifferenceByDefinition(candidates[a].values[index], candidates[b].values[index]);
        if (difference > limit + 1e-12) admissible = false;
        cost += (options.weights?.[index] ?? 1) * difference;
      });
      if (admissible) edges.push({ a, b, cost });
    }
  }
  return edges;
}
