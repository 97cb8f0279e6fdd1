import { describe, expect, it } from "vitest";
import { groupSections, pairSections } from "../../../server/engine/pairing/index.ts";
import type { GroupingResult, PairingCandidate } from "../../../server/engine/pairing/index.ts";
import { relativeDifferenceByDefinition } from "./brute-force.ts";
import { createSeededRandom, inventDualTriodeStock, inventSmallInstance } from "./invented-stock.ts";

/** Sound: every group has setSize members that all meet the rule with each other; nobody twice. */
function expectSound(result: GroupingResult, candidates: PairingCandidate[], limits: number[], setSize: number): void {
  const seen = new Map<string, number>();
  for (const group of result.groups) {
    expect(group.members.length).toBe(setSize);
    for (let x = 0; x < group.members.length; x++) {
      for (let y = x + 1; y < group.members.length; y++) {
        limits.forEach((limit, index) => {
          expect(relativeDifferenceByDefinition(group.members[x].values[index], group.members[y].values[index])).toBeLessThanOrEqual(limit + 1e-12);
        });
      }
    }
    limits.forEach((_, index) => {
      const readings = group.members.map((member) => member.values[index]);
      const lowest = Math.min(...readings);
      const highest = Math.max(...readings);
      expect(group.perValueSpread[index]).toBeCloseTo(relativeDifferenceByDefinition(lowest, highest), 12);
    });
    expect(group.envelopes).toBe(new Set(group.members.map((member) => member.tubeId)).size);
    for (const member of group.members) seen.set(member.id, (seen.get(member.id) ?? 0) + 1);
  }
  for (const leftover of result.leftovers) seen.set(leftover.candidate.id, (seen.get(leftover.candidate.id) ?? 0) + 1);
  expect(seen.size).toBe(candidates.length);
  for (const candidate of candidates) expect(seen.get(candidate.id)).toBe(1);
}

describe("groupSections (heuristic sets of N alike)", () => {
  it("is sound on random instances for sets of 3, 4 and 6", () => {
    const random = createSeededRandom(31);
    for (let instance = 0; instance < 40; instance++) {
      const valueCount = 1 + Math.floor(random() * 3);
      const candidates = inventSmallInstance(10 + Math.floor(random() * 80), valueCount, random);
      const limits = Array.from({ length: valueCount }, () => 0.02 + random() * 0.06);
      for (const setSize of [3, 4, 6]) {
        expectSound(groupSections(candidates, { maxRelativeDifference: limits }, setSize), candidates, limits, setSize);
      }
    }
  });

  it("groups evenly spaced sections into consecutive sets", () => {
    // gm 100, 100.5, …, 103.5 with 2 % on gm: {100…101.5} spread 1.5 %, {102…103.5} spread 1.5 % (arithmetic)
    const candidates = Array.from({ length: 8 }, (_, index) => ({ id: `S${index}`, tubeId: `T${index}`, section: 1, values: [100 + index / 2] }));
    const result = groupSections(candidates, { maxRelativeDifference: [0.02] }, 4, { valueLabels: [{ name: "gm", unit: "µS" }] });
    expect(result.groups.map((group) => group.members.map((member) => member.id))).toEqual([
      ["S4", "S5", "S6", "S7"],
      ["S0", "S1", "S2", "S3"],
    ]);
    expect(result.groups[1].perValueSpread[0]).toBeCloseTo(1.5 / 100.75, 12);
    expect(result.groups[1].explanation).toBe("gm 100–101.5 µS (1.5 % spread), 4 envelopes");
    expect(result.leftovers).toEqual([]);
  });

  it("leaves a section over when too few close sections remain", () => {
    // 100, 100.5, 101, 101.5 and 200 with 2 %: one set of four, 200 left (arithmetic)
    const candidates = [100, 100.5, 101, 101.5, 200].map((gm, index) => ({ id: `S${index}`, tubeId: `T${index}`, section: 1, values: [gm] }));
    const result = groupSections(candidates, { maxRelativeDifference: [0.02] }, 4);
    expect(result.groups.length).toBe(1);
    expect(result.leftovers.map((leftover) => [leftover.candidate.id, leftover.reasonCode])).toEqual([["S4", "no-set-within-rule"]]);
  });

  it("with sets of two never finds more pairs than the exact pairing", () => {
    for (const seed of [1, 2, 3, 4]) {
      const stock = inventDualTriodeStock(100, seed);
      const rule = { maxRelativeDifference: [0.03, 0.03] };
      const groups = groupSections(stock, rule, 2);
      expectSound(groups, stock, rule.maxRelativeDifference, 2);
      expect(groups.groups.length).toBeLessThanOrEqual(pairSections(stock, rule, { allowSameEnvelope: true, allowAcrossEnvelopes: true }).pairs.length);
    }
  });

  it("is deterministic and rejects a set size below two", () => {
    const stock = inventDualTriodeStock(50, 6);
    const rule = { maxRelativeDifference: [0.04, 0.04] };
    expect(groupSections(stock, rule, 4)).toEqual(groupSections(stock, rule, 4));
    expect(() => groupSections(stock, rule, 1)).toThrow(RangeError);
    expect(() => groupSections(stock, rule, 2.5)).toThrow(RangeError);
  });
});
