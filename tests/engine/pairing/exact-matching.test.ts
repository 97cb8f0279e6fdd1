import { describe, expect, it } from "vitest";
import { solveMinimumCostMaximumMatching } from "../../../server/engine/pairing/index.ts";
import type { CostGraph, MaximumMatchingResult } from "../../../server/engine/pairing/index.ts";
import { bruteForceMaximumMatching, admissiblePairsByDefinition } from "./brute-force.ts";
import type { WeightedEdge } from "./brute-force.ts";
import { createSeededRandom, inventDualTriodeStock } from "./invented-stock.ts";
import { referenceMinimumCostMaximumMatching } from "./reference-library.ts";

function toGraph(vertexCount: number, edges: WeightedEdge[]): CostGraph {
  return {
    vertexCount,
    edgeTail: Int32Array.from(edges, (edge) => edge.a),
    edgeHead: Int32Array.from(edges, (edge) => edge.b),
    edgeCost: Float64Array.from(edges, (edge) => edge.cost),
  };
}

/** The result is a matching of the graph, and its totals are what its edges say. */
function expectConsistentMatching(graph: CostGraph, result: MaximumMatchingResult): void {
  let pairs = 0;
  let cost = 0;
  for (let v = 0; v < graph.vertexCount; v++) {
    const k = result.matchedEdge[v];
    if (k < 0) {
      expect(result.partner[v]).toBe(-1);
      continue;
    }
    const ends = [graph.edgeTail[k], graph.edgeHead[k]];
    expect(ends).toContain(v);
    const other = ends[0] === v ? ends[1] : ends[0];
    expect(result.partner[v]).toBe(other);
    expect(result.partner[other]).toBe(v);
    if (other > v) {
      pairs++;
      cost += graph.edgeCost[k];
    }
  }
  expect(result.pairCount).toBe(pairs);
  expect(result.totalCost).toBe(cost);
}

function randomGraph(vertexCount: number, random: () => number): WeightedEdge[] {
  const density = random();
  const edges: WeightedEdge[] = [];
  for (let a = 0; a < vertexCount; a++) {
    for (let b = a + 1; b < vertexCount; b++) {
      // small integer costs on purpose: ties are where matching code goes wrong
      if (random() < density) edges.push(random() < 0.5 ? { a, b, cost: Math.floor(random() * 12) } : { a: b, b: a, cost: Math.floor(random() * 12) });
    }
  }
  return edges;
}

describe("solveMinimumCostMaximumMatching against brute force", () => {
  // brute force on small cases: every matching enumerated
  for (let vertexCount = 1; vertexCount <= 12; vertexCount++) {
    it(`matches enumeration on random graphs of ${vertexCount} vertices, every form and sparsity`, () => {
      const random = createSeededRandom(1000 + vertexCount);
      for (let instance = 0; instance < 60; instance++) {
        const edges = randomGraph(vertexCount, random);
        const graph = toGraph(vertexCount, edges);
        const expected = bruteForceMaximumMatching(vertexCount, edges);
        for (const form of ["auto", "spare-vertices", "doubled"] as const) {
          for (const nearestEdgesPerVertex of [1, 2, 24]) {
            const result = solveMinimumCostMaximumMatching(graph, { form, nearestEdgesPerVertex });
            expectConsistentMatching(graph, result);
            expect(result.pairCount).toBe(expected.pairs);
            expect(result.totalCost).toBe(expected.cost);
          }
        }
      }
    });
  }

  it("keeps the cardinality first: a costly edge that allows one more pair is taken", () => {
    // triangle 0,1,2 at cost 1 plus pendant 3 on 2 at cost 5: only {0–1, 2–3} has two pairs (brute force)
    const edges = [
      { a: 0, b: 1, cost: 1 },
      { a: 1, b: 2, cost: 1 },
      { a: 0, b: 2, cost: 1 },
      { a: 2, b: 3, cost: 5 },
    ];
    const result = solveMinimumCostMaximumMatching(toGraph(4, edges));
    expect(result.pairCount).toBe(2);
    expect(result.totalCost).toBe(6);
    expect(Array.from(result.partner)).toEqual([1, 0, 3, 2]);
  });

  it("handles a star, where all but one leaf must stay single", () => {
    // star: centre 0 with leaves 1..6, costs 6..1 — one pair, the cheapest leaf (brute force)
    const edges = [1, 2, 3, 4, 5, 6].map((leaf) => ({ a: 0, b: leaf, cost: 7 - leaf }));
    const result = solveMinimumCostMaximumMatching(toGraph(7, edges));
    expect(result.pairCount).toBe(1);
    expect(result.totalCost).toBe(1);
    expect(result.partner[0]).toBe(6);
  });

  it("reports components and leaves isolated vertices single", () => {
    // two disjoint edges and an isolated vertex: two components with edges (by construction)
    const result = solveMinimumCostMaximumMatching(toGraph(5, [{ a: 0, b: 1, cost: 3 }, { a: 3, b: 4, cost: 2 }]));
    expect(result.components).toBe(2);
    expect(result.largestComponent).toBe(2);
    expect(result.pairCount).toBe(2);
    expect(result.partner[2]).toBe(-1);
  });

  it("rejects costs that are not non-negative integers, self-loops and ends out of range", () => {
    expect(() => solveMinimumCostMaximumMatching(toGraph(2, [{ a: 0, b: 1, cost: 1.5 }]))).toThrow(RangeError);
    expect(() => solveMinimumCostMaximumMatching(toGraph(2, [{ a: 0, b: 1, cost: -1 }]))).toThrow(RangeError);
    expect(() => solveMinimumCostMaximumMatching(toGraph(2, [{ a: 1, b: 1, cost: 1 }]))).toThrow(RangeError);
    expect(() => solveMinimumCostMaximumMatching(toGraph(2, [{ a: 0, b: 2, cost: 1 }]))).toThrow(RangeError);
    expect(() => solveMinimumCostMaximumMatching(toGraph(2, [{ a: 0, b: 1, cost: 1 }]), { nearestEdgesPerVertex: 0 })).toThrow(RangeError);
  });
});

describe("solveMinimumCostMaximumMatching against the reference library edmonds-blossom-fixed", () => {
  it("equals the library in pairs and total cost on random sparse graphs of a few hundred vertices", () => {
    const random = createSeededRandom(77);
    for (let instance = 0; instance < 12; instance++) {
      const vertexCount = 150 + Math.floor(random() * 250);
      const degree = 1.5 + random() * 8;
      const edges: WeightedEdge[] = [];
      for (let a = 0; a < vertexCount; a++) {
        for (let b = a + 1; b < vertexCount; b++) {
          if (random() < degree / vertexCount) edges.push({ a, b, cost: Math.floor(random() * 1000) });
        }
      }
      const result = solveMinimumCostMaximumMatching(toGraph(vertexCount, edges), { nearestEdgesPerVertex: 3 });
      const reference = referenceMinimumCostMaximumMatching(vertexCount, edges);
      expect(result.pairCount).toBe(reference.pairs);
      expect(result.totalCost).toBe(reference.cost);
    }
  });

  it("equals the library on admissible-pair graphs of invented stocks, with integer-scaled imbalances", () => {
    for (const seed of [11, 12, 13, 14]) {
      const stock = inventDualTriodeStock(150, seed); // 300 sections
      const rule = { maxRelativeDifference: [0.03, 0.03] };
      const edges = admissiblePairsByDefinition(stock, rule, { allowSameEnvelope: true, allowAcrossEnvelopes: true })
        // integer transform: imbalance in millionths, so both solvers see identical costs
        .map((edge) => ({ ...edge, cost: Math.round(edge.cost * 1e6) }));
      for (const form of ["auto", "doubled"] as const) {
        const result = solveMinimumCostMaximumMatching(toGraph(stock.length, edges), { form, nearestEdgesPerVertex: 4 });
        const reference = referenceMinimumCostMaximumMatching(stock.length, edges);
        expect(result.pairCount).toBe(reference.pairs);
        expect(result.totalCost).toBe(reference.cost);
      }
    }
  });

  it("equals the library when readings are coarse (many equal costs) and the first solve sees few edges", () => {
    // readings on a 10 µS / 0.1 mA grid, as many testers show them: ties everywhere, several pricing rounds
    const random = createSeededRandom(2718);
    for (let instance = 0; instance < 4; instance++) {
      const stock = Array.from({ length: 300 }, (_, index) => ({
        id: `S${index}`,
        tubeId: `T${index >> 1}`,
        section: (index & 1) + 1,
        values: [2000 + 10 * Math.floor(random() * 20), 10 + 0.1 * Math.floor(random() * 10)],
      }));
      const edges = admissiblePairsByDefinition(stock, { maxRelativeDifference: [0.02, 0.02] }, { allowSameEnvelope: true, allowAcrossEnvelopes: true })
        .map((edge) => ({ ...edge, cost: Math.round(edge.cost * 1e6) }));
      const result = solveMinimumCostMaximumMatching(toGraph(stock.length, edges), { nearestEdgesPerVertex: 2 });
      const reference = referenceMinimumCostMaximumMatching(stock.length, edges);
      expect(result.pricingRounds).toBeGreaterThan(1);
      expect(result.pairCount).toBe(reference.pairs);
      expect(result.totalCost).toBe(reference.cost);
    }
  });
});

