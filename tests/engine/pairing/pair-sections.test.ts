import { describe, expect, it } from "vitest";
import { greedySortAndPair, pairSections, relativeDifference } from "../../../server/engine/pairing/index.ts";
import type { PairingCandidate, PairingOptions, PairingResult } from "../../../server/engine/pairing/index.ts";
import { admissiblePairsByDefinition, bruteForceMaximumMatching, relativeDifferenceByDefinition } from "./brute-force.ts";
import { createSeededRandom, inventDualTriodeStock, inventSmallInstance } from "./invented-stock.ts";
import { referenceMinimumCostMaximumMatching } from "./reference-library.ts";

const BOTH: PairingOptions = { allowSameEnvelope: true, allowAcrossEnvelopes: true };
const GM_IA = [
  { name: "gm", unit: "µS" },
  { name: "Ia", unit: "mA" },
];

function section(id: string, tubeId: string, sectionNumber: number, values: number[]): PairingCandidate {
  return { id, tubeId, section: sectionNumber, values };
}

/** Every candidate appears exactly once, in a pair or as a leftover; pairs meet the rule. */
function expectWellFormed(result: PairingResult, candidates: PairingCandidate[], limits: number[], options: PairingOptions): void {
  const seen = new Map<string, number>();
  const count = (candidate: PairingCandidate): void => {
    seen.set(candidate.id, (seen.get(candidate.id) ?? 0) + 1);
  };
  for (const pair of result.pairs) {
    count(pair.a);
    count(pair.b);
    expect(pair.sameEnvelope).toBe(pair.a.tubeId === pair.b.tubeId);
    if (pair.sameEnvelope) expect(options.allowSameEnvelope).toBe(true);
    else expect(options.allowAcrossEnvelopes).toBe(true);
    limits.forEach((limit, index) => {
      const difference = relativeDifferenceByDefinition(pair.a.values[index], pair.b.values[index]);
      expect(difference).toBeLessThanOrEqual(limit + 1e-12);
      expect(pair.perValueDifference[index]).toBeCloseTo(difference, 12);
    });
  }
  for (const leftover of result.leftovers) count(leftover.candidate);
  expect(seen.size).toBe(candidates.length);
  for (const candidate of candidates) expect(seen.get(candidate.id)).toBe(1);
  for (let index = 1; index < result.pairs.length; index++) {
    expect(result.pairs[index].imbalance).toBeGreaterThanOrEqual(result.pairs[index - 1].imbalance);
  }
}

describe("pairSections is optimal (brute force on every instance size up to 12 sections)", () => {
  // brute force on small cases: all matchings of the admissible pairs enumerated
  for (let sectionCount = 1; sectionCount <= 12; sectionCount++) {
    it(`has the most pairs and the least total imbalance for ${sectionCount} sections`, () => {
      const random = createSeededRandom(500 + sectionCount);
      for (let instance = 0; instance < 40; instance++) {
        const valueCount = 1 + Math.floor(random() * 3);
        const candidates = inventSmallInstance(sectionCount, valueCount, random);
        const limits = Array.from({ length: valueCount }, () => 0.02 + random() * 0.06);
        const weights = Array.from({ length: valueCount }, () => Math.round(random() * 4) / 2);
        const options: PairingOptions = { allowSameEnvelope: random() < 0.8, allowAcrossEnvelopes: random() < 0.85, weights };
        const rule = { maxRelativeDifference: limits };
        const expected = bruteForceMaximumMatching(candidates.length, admissiblePairsByDefinition(candidates, rule, options));
        const result = pairSections(candidates, rule, options);
        expectWellFormed(result, candidates, limits, options);
        expect(result.pairs.length).toBe(expected.pairs);
        // integer scaling for the solver: within pairs × 1e-9 of the largest imbalance (documented)
        expect(result.stats.totalImbalance).toBeCloseTo(expected.cost, 8);
        // the naive method never finds more pairs than the optimum
        expect(greedySortAndPair(candidates, rule, options).pairs.length).toBeLessThanOrEqual(result.pairs.length);
      }
    });
  }
});

describe("pairSections against the reference library edmonds-blossom-fixed", () => {
  it("finds as many pairs and the same total imbalance on invented stocks of 300 to 400 sections", () => {
    for (const [tubes, seed] of [
      [150, 3],
      [175, 4],
      [200, 5],
    ]) {
      const stock = inventDualTriodeStock(tubes, seed);
      const rule = { maxRelativeDifference: [0.03, 0.03] };
      const result = pairSections(stock, rule, BOTH);
      // the library sees the pairs in sorted order, as the engine does; imbalances in millionths
      const sorted = [...stock].sort((x, y) => x.values[0] - y.values[0] || (x.id < y.id ? -1 : 1));
      const edges = admissiblePairsByDefinition(sorted, rule, BOTH);
      const reference = referenceMinimumCostMaximumMatching(
        sorted.length,
        edges.map((edge) => ({ ...edge, cost: Math.round(edge.cost * 1e6) })),
      );
      expect(result.pairs.length).toBe(reference.pairs);
      let referenceImbalance = 0;
      reference.partner.forEach((other, v) => {
        if (other > v) referenceImbalance += relativeDifferenceByDefinition(sorted[v].values[0], sorted[other].values[0]) + relativeDifferenceByDefinition(sorted[v].values[1], sorted[other].values[1]);
      });
      // both are optimal for costs rounded to 1e-6 per pair or finer
      expect(Math.abs(result.stats.totalImbalance - referenceImbalance)).toBeLessThanOrEqual(reference.pairs * 1e-6);
      expect(greedySortAndPair(stock, rule, BOTH).pairs.length).toBeLessThanOrEqual(result.pairs.length);
    }
  });
});

describe("sort-and-pair", () => {
  it("pairs neighbours in order of the first value", () => {
    // gm 100, 101, 102, 103 with 1.5 % on gm: (100, 101) and (102, 103) (arithmetic: 1 % and 0.98 %)
    const candidates = [100, 101, 102, 103].map((gm, index) => section(`S${index}`, `T${index}`, 1, [gm]));
    const result = greedySortAndPair(candidates, { maxRelativeDifference: [0.015] }, BOTH);
    expect(result.stats.method).toBe("sort-and-pair");
    expect(result.pairs.map((pair) => [pair.a.id, pair.b.id])).toEqual([
      ["S2", "S3"],
      ["S0", "S1"],
    ]);
  });

  it("is as good as the optimum in pair count when there is one value and no envelope restriction", () => {
    // with one value the admissible pairs form a unit-interval graph, where pairing neighbours
    // is a maximum matching (a fact of the trade, checked here by the exact method)
    const random = createSeededRandom(4242);
    for (let instance = 0; instance < 30; instance++) {
      const candidates = inventSmallInstance(20 + Math.floor(random() * 60), 1, random);
      const rule = { maxRelativeDifference: [0.005 + random() * 0.03] };
      expect(greedySortAndPair(candidates, rule, BOTH).pairs.length).toBe(pairSections(candidates, rule, BOTH).pairs.length);
    }
  });

  it("finds far fewer good pairs than the exact method with two readings per section", () => {
    // invented stock of 1,000 sections, 3 % on gm and Ia (counts from this run, compared only as an order)
    const stock = inventDualTriodeStock(500, 99);
    const rule = { maxRelativeDifference: [0.03, 0.03] };
    const exact = pairSections(stock, rule, BOTH).pairs.length;
    const greedy = greedySortAndPair(stock, rule, BOTH).pairs.length;
    expect(greedy).toBeLessThan(exact * 0.75);
  });
});

describe("envelopes", () => {
  // two dual triodes whose own sections match, and one mismatched tube (values invented)
  const stock = [
    section("A1", "A", 1, [2200, 10.5]),
    section("A2", "A", 2, [2210, 10.6]),
    section("B1", "B", 1, [2205, 10.5]),
    section("B2", "B", 2, [2195, 10.4]),
    section("C1", "C", 1, [2400, 9.0]),
    section("C2", "C", 2, [2000, 12.0]),
  ];
  const rule = { maxRelativeDifference: [0.03, 0.03] };

  it("with only same-envelope pairs, pairs each tube whose sections meet the rule, directly", () => {
    const result = pairSections(stock, rule, { allowSameEnvelope: true, allowAcrossEnvelopes: false, valueLabels: GM_IA });
    expect(result.stats.method).toBe("same-envelope-only");
    expect(result.pairs.map((pair) => pair.a.tubeId).sort()).toEqual(["A", "B"]);
    expect(result.pairs.every((pair) => pair.sameEnvelope)).toBe(true);
    const reasons = result.leftovers.map((leftover) => leftover.reason);
    // C: gm 2000 vs 2400 is 18.2 % (arithmetic), far outside 3 %
    expect(reasons).toEqual(["no partner in its envelope within 3 % on gm", "no partner in its envelope within 3 % on gm"]);
  });

  it("ranks same-envelope pairs by their section balance like any pair", () => {
    const result = pairSections(stock, rule, { allowSameEnvelope: true, allowAcrossEnvelopes: false });
    // B: gm 0.46 %, Ia 0.96 %; A: gm 0.45 %, Ia 0.95 % (arithmetic) — A is better balanced
    expect(result.pairs[0].a.tubeId).toBe("A");
    expect(result.pairs[0].imbalance).toBeCloseTo(relativeDifference(2200, 2210) + relativeDifference(10.5, 10.6), 12);
  });

  it("never pairs a tube with itself when same-envelope pairs are not allowed", () => {
    const result = pairSections(stock, rule, { allowSameEnvelope: false, allowAcrossEnvelopes: true });
    expect(result.pairs.length).toBe(2);
    expect(result.pairs.some((pair) => pair.sameEnvelope)).toBe(false);
  });

  it("says when the only partner is in the same envelope and that is not allowed", () => {
    const lonelyTube = [section("D1", "D", 1, [3000, 20]), section("D2", "D", 2, [3010, 20.1]), section("E1", "E", 1, [1000, 5])];
    const result = pairSections(lonelyTube, rule, { allowSameEnvelope: false, allowAcrossEnvelopes: true });
    expect(result.pairs).toEqual([]);
    const d1 = result.leftovers.find((leftover) => leftover.candidate.id === "D1");
    expect(d1?.reasonCode).toBe("partner-only-in-same-envelope");
    expect(result.leftovers.find((leftover) => leftover.candidate.id === "E1")?.reasonCode).toBe("no-partner-within-rule");
  });

  it("pairs nothing when neither kind of pair is allowed", () => {
    const result = pairSections(stock, rule, { allowSameEnvelope: false, allowAcrossEnvelopes: false });
    expect(result.pairs).toEqual([]);
    expect(result.stats.method).toBe("none");
    expect(result.leftovers.every((leftover) => leftover.reasonCode === "pairing-not-allowed")).toBe(true);
  });

  it("solves a tube with three usable sections as a small matching of its own", () => {
    const triple = [section("F1", "F", 1, [100]), section("F2", "F", 2, [101]), section("F3", "F", 3, [102.5])];
    const result = pairSections(triple, { maxRelativeDifference: [0.02] }, { allowSameEnvelope: true, allowAcrossEnvelopes: false });
    // F1–F2 is 1.0 %, F2–F3 1.5 %, F1–F3 2.5 % (arithmetic): one pair, the better balanced
    expect(result.pairs.map((pair) => [pair.a.id, pair.b.id])).toEqual([["F1", "F2"]]);
  });
});

describe("maxPairs", () => {
  it("keeps the best-balanced pairs of the optimal pairing and says why the rest were left", () => {
    const stock = inventDualTriodeStock(60, 8);
    const rule = { maxRelativeDifference: [0.03, 0.03] };
    const full = pairSections(stock, rule, BOTH);
    expect(full.pairs.length).toBeGreaterThan(10);
    const limited = pairSections(stock, rule, { ...BOTH, maxPairs: 10 });
    expect(limited.pairs).toEqual(full.pairs.slice(0, 10));
    expect(limited.stats.pairsFound).toBe(full.pairs.length);
    expect(limited.stats.pairs).toBe(10);
    const beyond = limited.leftovers.filter((leftover) => leftover.reasonCode === "beyond-max-pairs");
    expect(beyond.length).toBe(2 * (full.pairs.length - 10));
    expect(beyond[0].reason).toMatch(/^paired with \S+ in the optimal pairing \(imbalance \d+\.\d %\), but only the 10 best-balanced pairs were asked for$/);
    expectWellFormed(limited, stock, rule.maxRelativeDifference, BOTH);
  });

  it("returns no pairs for maxPairs 0 and rejects a negative or fractional maxPairs", () => {
    const stock = inventDualTriodeStock(10, 9);
    const rule = { maxRelativeDifference: [0.05, 0.05] };
    expect(pairSections(stock, rule, { ...BOTH, maxPairs: 0 }).pairs).toEqual([]);
    expect(() => pairSections(stock, rule, { ...BOTH, maxPairs: -1 })).toThrow(RangeError);
    expect(() => pairSections(stock, rule, { ...BOTH, maxPairs: 1.5 })).toThrow(RangeError);
  });
});

describe("explanations and leftovers", () => {
  const rule = { maxRelativeDifference: [0.03, 0.03] };

  it("explains a pair value by value", () => {
    const result = pairSections(
      [section("A1", "A", 1, [2210, 10.2]), section("B1", "B", 1, [2180, 10.4])],
      rule,
      { ...BOTH, valueLabels: GM_IA },
    );
    // |2210 − 2180| / 2195 = 1.37 %, |10.2 − 10.4| / 10.3 = 1.94 % (arithmetic of the definition)
    expect(result.pairs[0].explanation).toBe("gm 2180 vs 2210 µS (1.4 %), Ia 10.4 vs 10.2 mA (1.9 %), tubes B and A");
    expect(result.pairs[0].perValueDifference[0]).toBeCloseTo(30 / 2195, 12);
    expect(result.pairs[0].perValueDifference[1]).toBeCloseTo(0.2 / 10.3, 12);
    expect(result.pairs[0].imbalance).toBeCloseTo(30 / 2195 + 0.2 / 10.3, 12);
  });

  it("names the same envelope in the explanation", () => {
    const result = pairSections([section("A1", "A", 1, [2210, 10.2]), section("A2", "A", 2, [2180, 10.4])], rule, {
      ...BOTH,
      valueLabels: GM_IA,
    });
    expect(result.pairs[0].explanation).toBe("gm 2180 vs 2210 µS (1.4 %), Ia 10.4 vs 10.2 mA (1.9 %), same envelope (A)");
  });

  it("says which value has no partner within the rule", () => {
    const result = pairSections(
      [
        section("A1", "A", 1, [2200, 10.5]),
        section("B1", "B", 1, [2230, 12.0]), // gm 1.4 % from A1 but Ia 13.3 % (arithmetic)
        section("C1", "C", 1, [3000, 10.5]), // gm 30.8 % from A1 (arithmetic)
      ],
      rule,
      { ...BOTH, valueLabels: GM_IA },
    );
    expect(result.pairs).toEqual([]);
    const reasonOf = (id: string): string | undefined => result.leftovers.find((leftover) => leftover.candidate.id === id)?.reason;
    expect(reasonOf("A1")).toBe("no partner within 3 % on Ia among the sections within the rule on gm");
    expect(reasonOf("C1")).toBe("no partner within 3 % on gm");
  });

  it("says when every partner went to a better overall pairing", () => {
    // P–Q 1.0 %, Q–R 0.5 %, P–R 1.5 % on one value, 1.2 % rule: only one pair fits, Q–R is best
    const result = pairSections(
      [section("P", "P", 1, [100]), section("Q", "Q", 1, [101]), section("R", "R", 1, [101.5])],
      { maxRelativeDifference: [0.012] },
      BOTH,
    );
    expect(result.pairs.map((pair) => [pair.a.id, pair.b.id])).toEqual([["Q", "R"]]);
    expect(result.leftovers[0].reasonCode).toBe("partners-taken");
    expect(result.leftovers[0].reason).toBe(
      "its only partner within the rule went to a pairing with more stages or less total imbalance; the closest, Q (1.0 %), is paired with R",
    );
  });

  it("lists readings that cannot be used as leftovers", () => {
    const result = pairSections(
      [section("A1", "A", 1, [2200, 10.5]), section("B1", "B", 1, [0, 10.5]), section("C1", "C", 1, [2200])],
      rule,
      { ...BOTH, valueLabels: GM_IA },
    );
    expect(result.stats.validCandidates).toBe(1);
    const invalid = result.leftovers.filter((leftover) => leftover.reasonCode === "invalid-values");
    expect(invalid.map((leftover) => leftover.candidate.id)).toEqual(["B1", "C1"]);
    expect(invalid[0].reason).toBe("needs 2 positive readings (gm, Ia)");
  });

  it("accepts a pair exactly at the limit", () => {
    // 100 and 100 × 1.015 / 0.985 differ by exactly 3 % of their mean (arithmetic)
    const result = pairSections([section("X", "X", 1, [100]), section("Y", "Y", 1, [(100 * 1.015) / 0.985])], { maxRelativeDifference: [0.03] }, BOTH);
    expect(result.pairs.length).toBe(1);
    expect(result.pairs[0].perValueDifference[0]).toBeCloseTo(0.03, 12);
  });

  it("uses the weights in the imbalance", () => {
    const candidates = [section("A1", "A", 1, [2200, 10.5]), section("B1", "B", 1, [2220, 10.7])];
    const result = pairSections(candidates, rule, { ...BOTH, weights: [1, 0] });
    // gm only: 20 / 2210 (arithmetic)
    expect(result.pairs[0].imbalance).toBeCloseTo(20 / 2210, 12);
  });

  it("rejects malformed rules and options", () => {
    const candidates = [section("A1", "A", 1, [2200, 10.5])];
    expect(() => pairSections(candidates, { maxRelativeDifference: [] }, BOTH)).toThrow(RangeError);
    expect(() => pairSections(candidates, { maxRelativeDifference: [0.03, -0.01] }, BOTH)).toThrow(RangeError);
    expect(() => pairSections(candidates, rule, { ...BOTH, weights: [1] })).toThrow(RangeError);
    expect(() => pairSections(candidates, rule, { ...BOTH, valueLabels: [{ name: "gm" }] })).toThrow(RangeError);
  });
});

describe("determinism", () => {
  it("gives the same pairs whatever the order of the candidates", () => {
    const stock = inventDualTriodeStock(80, 21);
    const rule = { maxRelativeDifference: [0.03, 0.03] };
    const random = createSeededRandom(5);
    const shuffled = [...stock];
    for (let index = shuffled.length - 1; index > 0; index--) {
      const other = Math.floor(random() * (index + 1));
      [shuffled[index], shuffled[other]] = [shuffled[other], shuffled[index]];
    }
    const key = (result: PairingResult): string[] => result.pairs.map((pair) => `${pair.a.id}+${pair.b.id}`);
    expect(key(pairSections(shuffled, rule, BOTH))).toEqual(key(pairSections(stock, rule, BOTH)));
  });
});

describe("admissible pairs", () => {
  it("counts exactly the pairs that meet the rule, for one to three values", () => {
    // the engine tests only nearby candidates (sorted windows and a grid); the definition tests all pairs
    const random = createSeededRandom(808);
    for (let instance = 0; instance < 12; instance++) {
      const valueCount = 1 + (instance % 3);
      const candidates = instance % 2 === 0 ? inventSmallInstance(300, valueCount, random) : inventDualTriodeStock(150, instance);
      const limits = candidates[0].values.map(() => 0.005 + random() * 0.05);
      const options: PairingOptions = { allowSameEnvelope: random() < 0.5, allowAcrossEnvelopes: true };
      const result = pairSections(candidates, { maxRelativeDifference: limits }, options);
      expect(result.stats.admissibleEdges).toBe(admissiblePairsByDefinition(candidates, { maxRelativeDifference: limits }, options).length);
    }
  });

  it("measures the relative difference against the mean of the two readings", () => {
    // |2210 − 2180| / ((2210 + 2180) / 2) = 30 / 2195 (definition); symmetric; zero for equal readings
    expect(relativeDifference(2210, 2180)).toBeCloseTo(30 / 2195, 15);
    expect(relativeDifference(2180, 2210)).toBe(relativeDifference(2210, 2180));
    expect(relativeDifference(10.5, 10.5)).toBe(0);
  });
});
