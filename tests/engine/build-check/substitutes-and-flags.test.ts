/**
 * Substitutes for a short line (the substitute ranker's candidates, accepted or not) and
 * allocated tubes that no longer read good, with their proposed replacements.
 * Types and their sources are in fixtures.ts; stock readings are invented.
 */
import { describe, expect, it } from "vitest";
import { checkBuild, relativeDifferenceOf, type BuildCheckInput, type BuildLinePlan, type StockTube } from "../../../server/engine/build-check/index.ts";
import { allocatedTube, bistableLine, library, noSpares, stockTube, supplies, tenPercentSpares } from "./fixtures.ts";

function input(lines: BuildLinePlan[], freeStock: StockTube[], extra: Partial<BuildCheckInput> = {}): BuildCheckInput {
  return { supplies, balanceRule: { maxDifferencePercent: 5, source: "test rule" }, lines, library, freeStock, allocations: [], ...extra };
}

/** One 5963 and four 12AU7, every tube's halves balanced, tubes 200 µS apart (> 5 %). */
const registerStock = [
  stockTube(1, "5963", [2000, 2004]),
  ...[0, 1, 2, 3].map((index) => stockTube(10 + index, "12AU7", [1600 + 200 * index, 1606 + 200 * index])),
];

describe("substitutes", () => {
  it("lists 12AU7 for a short 5963 line: 4 good free, 4 stages coverable, closes the gap, latches", () => {
    const line = bistableLine("1", "5963", 3, { spares: tenPercentSpares, allowSubstitutes: true });
    const result = checkBuild(input([line], registerStock));
    const checked = result.lines[0];
    expect(checked.coveredStages).toBe(1);
    expect(checked.shortfallStages).toBe(2);
    expect(checked.shortfallSpares).toBe(1); // 10 % of 3 rounded up (common practice, no source)
    const option = checked.substitutes.find((candidate) => candidate.designation === "12AU7");
    expect(option).toMatchObject({ goodAvailable: 4, stagesCoverable: 4, wouldClose: true, accepted: false, pinFit: "direct" });
    expect(option?.solverCheck).toContain("latches");
    expect(result.verdict).toBe("short");
    expect(result.verdictReasons.join(" ")).toContain("accepting 12AU7 (4 good free) would close it");
  });

  it("counts an accepted substitute: ready with substitutes, budgets per type", () => {
    const line = bistableLine("1", "5963", 3, { spares: tenPercentSpares, allowSubstitutes: true, acceptedSubstitutes: ["12AU7"] });
    const result = checkBuild(input([line], registerStock));
    const checked = result.lines[0];
    expect(result.verdict).toBe("ready-with-substitutes");
    expect(checked.usesSubstitutes).toBe(true);
    expect(checked.shares.map((share) => [share.designation, share.stages, share.spares, share.poweredTubes])).toEqual([
      ["5963", 1, 0, 1],
      ["12AU7", 2, 1, 2],
    ]);
    // B+: 5963 has neither a Koren set nor a typical point → bound 2 × 250 V / 27 kΩ = 18.52 mA;
    // 12AU7 from the solver ≈ 8.570 mA per stage (budgets.test.ts): 18.52 + 2 × 8.570 ≈ 35.66 mA.
    expect(Math.abs(result.budgets.bPlus.milliampsUsed - (500 / 27 + 2 * 8.57))).toBeLessThan(0.03);
    // Heater: 3 powered tubes × 0.3 A at 6.3 V (RCA RC-30 12AU7; the 5963 heater as the 12AU7, from memory).
    expect(result.budgets.heaterSupplies[0].ampsUsed).toBeCloseTo(0.9, 9);
    expect(result.buyList).toEqual([]);
  });

  it("says when substitutes are not allowed", () => {
    const result = checkBuild(input([bistableLine("1", "5963", 3)], registerStock));
    expect(result.lines[0].substitutes).toEqual([]);
    expect(result.lines[0].substitutesNote).toBe("substitutes are not allowed on this line");
  });
});

describe("flagged allocations and replacements", () => {
  const stage1 = (side: "A" | "B", section: number) => ({ role: "stage" as const, number: 1, side, section });

  it("proposes the free tube whose section is closest to the worn tube's partner", () => {
    // Stage 1: P section 1 (side A) against Q section 1 (side B, 2180 µS). P now reads worn.
    const p = stockTube(1, "12AU7", [2200, 2300], { verdict: "worn" });
    const q = stockTube(2, "12AU7", [2180, 2500]);
    const allocations = [allocatedTube(p, 101, "1", [stage1("A", 1)]), allocatedTube(q, 102, "1", [stage1("B", 1)])];
    // Free: R1 2100 (3.7 % from 2180), S1 2170 (0.46 %), T1 2500 (13.7 %) → S.
    const free = [stockTube(3, "12AU7", [2100, 2000]), stockTube(4, "12AU7", [2170, 1500]), stockTube(5, "12AU7", [2500, 2500])];
    const result = checkBuild(input([bistableLine("1", "12AU7", 1)], free, { allocations }));
    expect(result.flagged).toHaveLength(1);
    const flagged = result.flagged[0];
    expect(flagged).toMatchObject({ tubeId: 1, reason: "now reads worn" });
    expect(flagged.replacement?.tubeId).toBe(4);
    expect(flagged.replacement?.withinRule).toBe(true);
    expect(flagged.replacement?.note).toContain(`(${(100 * relativeDifferenceOf(2170, 2180)).toFixed(1)} %)`);
    // The stage stays covered through the replacement; nothing to buy.
    expect(result.lines[0].coveredStages).toBe(1);
    expect(result.verdict).toBe("ready");
    expect(result.verdictReasons.join(" ")).toContain("replacement proposed: T004");
  });

  it("replaces a one-envelope pair with the free tube whose halves balance best", () => {
    const p = stockTube(1, "12AU7", [2200, 2210], { verdict: "failed" });
    const allocations = [allocatedTube(p, 101, "1", [stage1("A", 1), stage1("B", 2)])];
    // Free halves: R 2100/2000 (4.9 %), S 2170/1500 (36.5 %), T 2500/2500 (0 %) → T.
    const free = [stockTube(3, "12AU7", [2100, 2000]), stockTube(4, "12AU7", [2170, 1500]), stockTube(5, "12AU7", [2500, 2500])];
    const result = checkBuild(input([bistableLine("1", "12AU7", 1)], free, { allocations }));
    expect(result.flagged[0].replacement?.tubeId).toBe(5);
    expect(result.flagged[0].reason).toBe("now reads failed");
  });

  it("with nothing free: the stage is short and the buy list names the tube it replaces", () => {
    const p = stockTube(1, "12AU7", [2200, 2210], { verdict: "worn" });
    const allocations = [allocatedTube(p, 101, "1", [stage1("A", 1), stage1("B", 2)])];
    const result = checkBuild(input([bistableLine("1", "12AU7", 1)], [], { allocations }));
    expect(result.flagged[0].replacement).toBeNull();
    expect(result.lines[0].shortfallStages).toBe(1);
    expect(result.lines[0].stagesAwaitingReplacement).toBe(1);
    expect(result.verdict).toBe("short");
    expect(result.buyList).toEqual([{ designation: "12AU7", quantity: 1, why: "replaces T001 (now reads worn) in Line 1, stage 1 A, stage 1 B" }]);
    expect(result.reservationPlan).toEqual([]);
  });

  it("flags a retired tube, not a good reserved one; single stages get the strongest free tube", () => {
    const line: BuildLinePlan = { key: "1", label: "Line 1", kind: "single", designation: "6AU6", count: 2, heaterSupplyIndex: 0, spares: noSpares, allowSubstitutes: false, acceptedSubstitutes: [], operating: { plateVolts: 250, plateMilliamps: 10.6, screenMilliamps: 4.3 } };
    const retired = allocatedTube(stockTube(1, "6AU6", [5000]), 101, "1", [{ role: "stage", number: 1, side: "", section: 1 }], { state: "retired" });
    const fine = allocatedTube(stockTube(2, "6AU6", [5100]), 102, "1", [{ role: "stage", number: 2, side: "", section: 1 }]);
    const free = [stockTube(3, "6AU6", [4000], { percentOfReference: 77 }), stockTube(4, "6AU6", [5200], { percentOfReference: 100 })];
    const result = checkBuild(input([line], free, { allocations: [retired, fine] }));
    expect(result.flagged.map((tube) => [tube.tubeId, tube.reason, tube.replacement?.tubeId])).toEqual([[1, "retired since it was allocated", 4]]);
  });
});
