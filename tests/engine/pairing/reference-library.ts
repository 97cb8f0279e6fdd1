/**
 * The general-purpose blossom library used as a reference: edmonds-blossom-fixed (a port of
 * a published O(n³) maximum-weight matching). It maximises weight over an edge list
 * [i, j, weight] and, with its second argument true, first maximises cardinality.
 */
import { createRequire } from "node:module";

const require = createRequire(import.meta.url);
const maximumWeightMatching = require("edmonds-blossom-fixed") as (edges: number[][], maxCardinality: boolean) => number[];

/**
 * Maximum-cardinality minimum-cost matching by the library: integer costs c become weights
 * K − c with K above every cost, so among maximum-cardinality matchings the largest weight
 * is the least cost. Returns the library's partner per vertex and the totals.
 */
export function referenceMinimumCostMaximumMatching(
  vertexCount: number,
  edges: { a: number; b: number; cost: number }[],
): { partner: number[]; pairs: number; cost: number } {
  const partner = new Array<number>(vertexCount).fill(-1);
  if (edges.length === 0) return { partner, pairs: 0, cost: 0 };
  const ceiling = Math.max(...edges.map((edge) => edge.cost)) + 1;
  const mate = maximumWeightMatching(edges.map(({ a, b, cost }) => [a, b, ceiling - cost]), true);
  const costOf = new Map<string, number>();
  for (const { a, b, cost } of edges) {
    const key = `${Math.min(a, b)},${Math.max(a, b)}`;
    costOf.set(key, Math.min(costOf.get(key) ?? Number.POSITIVE_INFINITY, cost));
  }
  let pairs = 0;
  let cost = 0;
  mate.forEach((other, v) => {
    if (other < 0) return;
    partner[v] = other;
    if (other > v) {
      pairs++;
      cost += costOf.get(`${v},${other}`) as number;
    }
  });
  return { partner, pairs, cost };
}
