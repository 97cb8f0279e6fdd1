/**
 * Line coverage: pairs found, spares, shortfall, allocations, the verdict and the buy list.
 * The stock is invented; counts are checked by hand or by brute force on small stocks.
 */
import { describe, expect, it } from "vitest";
import { checkBuild, spareCountFor, tubesForStages, type BuildCheckInput, type BuildLinePlan, type StockTube } from "../../../server/engine/build-check/index.ts";
import { allocatedTube, bistableLine, library, noSpares, stockTube, supplies, tenPercentSpares } from "./fixtures.ts";

function input(lines: BuildLinePlan[], freeStock: StockTube[], extra: Partial<BuildCheckInput> = {}): BuildCheckInput {
  return { supplies, balanceRule: { maxDifferencePercent: 5, source: "test rule" }, lines, library, freeStock, allocations: [], ...extra };
}

/** mulberry32, seeded, for the brute-force cases. */
function seeded(seed: number) {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Most disjoint pairs within the rule among the sections, by trying every pairing (brute force). */
function bruteForceMostPairs(values: number[], rule: number): number {
  const within = (a: number, b: number) => Math.abs(a - b) / ((a + b) / 2) <= rule + 1e-12;
  const best = (remaining: number[]): number => {
    if (remaining.length < 2) return 0;
    const [first, ...rest] = remaining;
    let most = best(rest);
    rest.forEach((other, index) => {
      if (within(values[first], values[other])) most = Math.max(most, 1 + best(rest.filter((_, j) => j !== index)));
    });
    return most;
  };
  return best(values.map((_, index) => index));
}

describe("spares and tube counts", () => {
  it("rounds spares up: 10 % of 32 is 4, of 30 is 3, of 5 is 1 (common practice, no source)", () => {
    expect(spareCountFor(32, 10)).toBe(4);
    expect(spareCountFor(30, 10)).toBe(3);
    expect(spareCountFor(5, 10)).toBe(1);
    expect(spareCountFor(5, 0)).toBe(0);
  });

  it("counts tubes per stage: a dual triode holds one bistable stage or two single stages", () => {
    expect(tubesForStages("bistable", 5, 2)).toBe(5);
    expect(tubesForStages("bistable", 5, 1)).toBe(10);
    expect(tubesForStages("single", 5, 2)).toBe(3);
    expect(tubesForStages("rectifier", 4, 2)).toBe(4);
  });
});

describe("bistable coverage", () => {
  it("pairs both halves of balanced tubes and reports the shortfall and the buy list", () => {
    // 4 tubes whose halves agree and which lie 200 µS apart from each other (> 5 %): 4 one-envelope pairs.
    const stock = [0, 1, 2, 3].map((index) => stockTube(index + 1, "12AU7", [1600 + 200 * index, 1610 + 200 * index]));
    const result = checkBuild(input([bistableLine("1", "12AU7", 5, { spares: tenPercentSpares })], stock));
    const line = result.lines[0];
    expect(line.goodAvailable).toBe(4);
    expect(line.pairsFound).toBe(4);
    expect(line.coveredStages).toBe(4);
    expect(line.shortfallStages).toBe(1);
    expect(line.spareCount).toBe(1); // 10 % of 5, rounded up
    expect(line.shortfallSpares).toBe(1);
    expect(result.verdict).toBe("short");
    expect(result.buyList).toEqual([
      { designation: "12AU7", quantity: 1, why: expect.stringContaining("Line 1: 1 stage short") },
      { designation: "12AU7", quantity: 1, why: "Line 1: 1 spare short" },
    ]);
    // Each planned tube carries both sides of its stage.
    for (const planned of result.reservationPlan) {
      expect(planned.slots.map((slot) => slot.side).sort()).toEqual(["A", "B"]);
      expect(new Set(planned.slots.map((slot) => slot.section))).toEqual(new Set([1, 2]));
    }
  });

  it("pairs across envelopes when the halves disagree, and then reuses the same tubes", () => {
    // X halves 2000 / 2400 (18 % apart), Y 2010 / 2390: X1–Y1 0.5 %, X2–Y2 0.4 % → 2 stages on 2 tubes.
    const stock = [stockTube(1, "12AU7", [2000, 2400]), stockTube(2, "12AU7", [2010, 2390])];
    const result = checkBuild(input([bistableLine("1", "12AU7", 2)], stock));
    expect(result.lines[0].coveredStages).toBe(2);
    expect(result.reservationPlan.map((tube) => tube.tubeId).sort()).toEqual([1, 2]);
    expect(result.budgets.heaterSupplies[0].ampsUsed).toBeCloseTo(0.6, 9); // 2 tubes × 0.3 A (RCA RC-30 12AU7 at 6.3 V)
    expect(result.verdict).toBe("ready");
  });

  it("never compares readings taken at different test conditions", () => {
    const other = "gm µS at 100 V / -1 V";
    const stock = [stockTube(1, "12AU7", [2000, 2400]), { ...stockTube(2, "12AU7", [2010, 2390]), sections: [{ section: 1, balanceValue: 2010, balanceBasis: other }, { section: 2, balanceValue: 2390, balanceBasis: other }] }];
    const result = checkBuild(input([bistableLine("1", "12AU7", 1)], stock));
    expect(result.lines[0].pairsFound).toBe(0);
    expect(result.lines[0].shortfallStages).toBe(1);
  });

  it("covers as many stages as the most pairs brute force finds (20 random stocks of 3–5 tubes)", () => {
    const random = seeded(42);
    for (let trial = 0; trial < 20; trial++) {
      const tubes = 3 + Math.floor(random() * 3);
      const stock = Array.from({ length: tubes }, (_, index) => stockTube(index + 1, "12AU7", [1800 + Math.round(random() * 500), 1800 + Math.round(random() * 500)]));
      const values = stock.flatMap((tube) => tube.sections.map((section) => section.balanceValue!));
      const result = checkBuild(input([bistableLine("1", "12AU7", 10)], stock));
      expect(result.lines[0].coveredStages).toBe(bruteForceMostPairs(values, 0.05));
    }
  });

  it("shares the stock between lines in order: the second line gets what the first left", () => {
    const stock = [0, 1, 2].map((index) => stockTube(index + 1, "12AU7", [1600 + 200 * index, 1605 + 200 * index]));
    const result = checkBuild(input([bistableLine("1", "12AU7", 2), bistableLine("2", "12AU7", 2)], stock));
    expect(result.lines.map((line) => [line.coveredStages, line.shortfallStages])).toEqual([[2, 0], [1, 1]]);
    const tubeIds = result.reservationPlan.map((tube) => tube.tubeId);
    expect(new Set(tubeIds).size).toBe(tubeIds.length);
  });

  it("counts stages already allocated and plans only the missing ones", () => {
    const a = stockTube(1, "12AU7", [2000, 2010]);
    const allocations = [allocatedTube(a, 11, "1", [{ role: "stage", number: 1, side: "A", section: 1 }, { role: "stage", number: 1, side: "B", section: 2 }])];
    const stock = [stockTube(2, "12AU7", [2400, 2405])];
    const result = checkBuild(input([bistableLine("1", "12AU7", 2)], stock, { allocations }));
    const line = result.lines[0];
    expect(line.allocatedStages).toBe(1);
    expect(line.coveredStages).toBe(2);
    expect(result.reservationPlan).toHaveLength(1);
    expect(result.reservationPlan[0].slots.every((slot) => slot.number === 2)).toBe(true);
  });
});

describe("single stages and rectifiers", () => {
  it("puts two single stages in each dual triode and keeps the balanced pairs for last", () => {
    // Tube 1's halves balance (a bistable candidate); tube 2 and 3 do not: singles take those first.
    const stock = [stockTube(1, "12AU7", [2000, 2005]), stockTube(2, "12AU7", [1500, 2400]), stockTube(3, "12AU7", [1400, 2500])];
    const line: BuildLinePlan = { key: "1", label: "Line 1", kind: "single", designation: "12AU7", count: 3, heaterSupplyIndex: 0, spares: noSpares, allowSubstitutes: false, acceptedSubstitutes: [], operating: { plateVolts: 250, plateMilliamps: 10.5, screenMilliamps: null } };
    const result = checkBuild(input([line], stock));
    expect(result.lines[0].coveredStages).toBe(3);
    expect(result.reservationPlan.map((tube) => tube.tubeId).sort()).toEqual([2, 3]);
    expect(result.budgets.heaterSupplies[0].ampsUsed).toBeCloseTo(0.6, 9); // 2 tubes × 0.3 A
  });

  it("skips tubes that are not good and in stock", () => {
    const stock = [stockTube(1, "5Y3GT", []), stockTube(2, "5Y3GT", [], { verdict: "worn" }), stockTube(3, "5Y3GT", [], { state: "installed" })];
    const line: BuildLinePlan = { key: "1", label: "Line 1", kind: "rectifier", designation: "5Y3GT", count: 2, heaterSupplyIndex: 0, spares: noSpares, allowSubstitutes: false, acceptedSubstitutes: [], loadMilliamps: null };
    const result = checkBuild(input([line], stock, { supplies: { ...supplies, heater: [{ name: "5 V", volts: 5, amps: 6 }] } }));
    expect(result.lines[0].goodAvailable).toBe(1);
    expect(result.lines[0].shortfallStages).toBe(1);
    expect(result.buyList[0]).toEqual({ designation: "5Y3GT", quantity: 1, why: "Line 1: 1 tube short" });
  });
});

describe("input checks", () => {
  it("throws RangeError on a malformed line or rule", () => {
    expect(() => checkBuild(input([bistableLine("1", "12AU7", 0)], []))).toThrow(RangeError);
    expect(() => checkBuild(input([bistableLine("1", "12AU7", 1), bistableLine("1", "12AU7", 1)], []))).toThrow("two lines share the key 1");
    expect(() => checkBuild(input([{ ...bistableLine("1", "12AU7", 1), resistors: undefined }], []))).toThrow("resistor values");
    expect(() => checkBuild(input([], [], { balanceRule: { maxDifferencePercent: 0, source: "" } }))).toThrow(RangeError);
  });

  it("reports a type missing from the library as a problem", () => {
    const result = checkBuild(input([bistableLine("1", "6J6", 1)], []));
    expect(result.verdict).toBe("short");
    expect(result.lines[0].problems[0]).toContain("6J6 is not in the library");
  });
});
