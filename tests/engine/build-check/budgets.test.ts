/**
 * Budget arithmetic against hand-computed cases. Heater currents and typical points are the
 * datasheet values in fixtures.ts (RCA RC-30 receiving tube manual unless said otherwise).
 */
import { describe, expect, it } from "vitest";
import {
  bistableStageLoad,
  checkBuild,
  heaterDrawOnSupply,
  rectifierLoad,
  singleStageLoad,
  type BuildCheckInput,
  type BuildLinePlan,
} from "../../../server/engine/build-check/index.ts";
import { bistableLine, library, noSpares, spec12AU7, spec5963, spec5Y3GT, spec6AU6, spec6CG7, spec6SN7GT, stockTube, supplies } from "./fixtures.ts";

function input(lines: BuildLinePlan[], extra: Partial<BuildCheckInput> = {}): BuildCheckInput {
  return {
    supplies,
    balanceRule: { maxDifferencePercent: 5, source: "test rule" },
    lines,
    library,
    freeStock: [],
    allocations: [],
    ...extra,
  };
}

const singleLine = (key: string, designation: string, count: number, heaterSupplyIndex = 0): BuildLinePlan => ({
  key, label: `Line ${key}`, kind: "single", designation, count, heaterSupplyIndex, spares: noSpares, allowSubstitutes: false, acceptedSubstitutes: [],
  // RCA RC-30 6AU6 typical operation: 250 V plate, 10.6 mA plate, 4.3 mA screen.
  operating: { plateVolts: 250, plateMilliamps: 10.6, screenMilliamps: 4.3 },
});

describe("heater draw on a supply", () => {
  it("runs a 12AU7 at 0.15 A on 12.6 V and at 0.3 A on 6.3 V (RCA RC-30)", () => {
    expect(heaterDrawOnSupply(spec12AU7.heater, 12.6)).toEqual({ ok: true, mode: "full", volts: 12.6, amps: 0.15 });
    expect(heaterDrawOnSupply(spec12AU7.heater, 6.3)).toEqual({ ok: true, mode: "half", volts: 6.3, amps: 0.3 });
  });

  it("runs a 6SN7GT at 0.6 A on 6.3 V and refuses 12.6 V (RCA RC-30)", () => {
    expect(heaterDrawOnSupply(spec6SN7GT.heater, 6.3)).toEqual({ ok: true, mode: "full", volts: 6.3, amps: 0.6 });
    const refused = heaterDrawOnSupply(spec6SN7GT.heater, 12.6);
    expect(refused.ok).toBe(false);
    if (!refused.ok) expect(refused.reason).toContain("6.3 V");
  });

  it("accepts a supply within the ranker's 3 % of the rating and refuses 5 V for a 6.3 V heater", () => {
    // 6.0 V is 4.8 % under 6.3 V: outside 3 % (HEATER_RATING_MATCH_FRACTION, common practice, no source).
    expect(heaterDrawOnSupply(spec6AU6.heater, 6.2).ok).toBe(true);
    expect(heaterDrawOnSupply(spec6AU6.heater, 6.0).ok).toBe(false);
    expect(heaterDrawOnSupply(spec5Y3GT.heater, 5)).toEqual({ ok: true, mode: "full", volts: 5, amps: 2 });
  });
});

describe("heater budget per supply", () => {
  it("adds 10 × 12AU7 at 0.3 A and 2 × 6SN7GT at 0.6 A on 6.3 V: 4.2 A, 26.46 W", () => {
    // 10 bistable 12AU7 stages, one tube each when bought: 10 × 0.3 A = 3.0 A (RCA RC-30 12AU7 at 6.3 V).
    // 4 single 6SN7GT stages = 2 tubes × 0.6 A = 1.2 A (RCA RC-30 6SN7GT). Total 4.2 A; 6.3 V × 4.2 A = 26.46 W.
    const result = checkBuild(input([bistableLine("1", "12AU7", 10), { ...singleLine("2", "6SN7GT", 4), operating: { plateVolts: 250, plateMilliamps: 9, screenMilliamps: null } }]));
    const heater = result.budgets.heaterSupplies[0];
    expect(heater.ampsUsed).toBeCloseTo(4.2, 9);
    expect(heater.wattsUsed).toBeCloseTo(26.46, 9);
    expect(heater.wattsAvailable).toBeCloseTo(63, 9); // 6.3 V × 10 A
    expect(heater.over).toBe(false);
    expect(heater.contributions.map((c) => [c.designation, c.tubes, c.ampsEach, c.mode])).toEqual([
      ["12AU7", 10, 0.3, "half"],
      ["6SN7GT", 2, 0.6, "full"],
    ]);
  });

  it("flags a 6.3 V 5 A supply carrying 10 × 12AU7 and 4 × 6SN7GT: 5.4 A drawn, over", () => {
    // 10 × 0.3 A + 4 × 0.6 A = 5.4 A > 5 A (RCA RC-30 heater ratings); 34.02 W against 31.5 W.
    const lines = [
      { ...singleLine("1", "12AU7", 20), operating: { plateVolts: 250, plateMilliamps: 10.5, screenMilliamps: null } },
      { ...singleLine("2", "6SN7GT", 8), operating: { plateVolts: 250, plateMilliamps: 9, screenMilliamps: null } },
    ];
    const result = checkBuild(input(lines, { supplies: { ...supplies, heater: [{ name: "6.3 V", volts: 6.3, amps: 5 }] } }));
    expect(result.budgets.heaterSupplies[0].ampsUsed).toBeCloseTo(5.4, 9);
    expect(result.budgets.heaterWatts.used).toBeCloseTo(34.02, 9);
    expect(result.budgets.heaterWatts.available).toBeCloseTo(31.5, 9);
    expect(result.budgets.heaterSupplies[0].over).toBe(true);
    expect(result.budgets.heaterWatts.over).toBe(true);
    expect(result.verdict).toBe("short");
    expect(result.verdictReasons.join(" ")).toContain('heater supply "6.3 V" (6.3 V): 5.4 A drawn, 5 A available');
  });

  it("keeps supplies apart: 8 × 12AU7 at 0.15 A on 12.6 V and 2 × 5Y3GT at 2 A on 5 V", () => {
    const twoSupplies = { ...supplies, heater: [{ name: "12.6 V", volts: 12.6, amps: 2 }, { name: "5 V", volts: 5, amps: 6 }] };
    const rectifiers: BuildLinePlan = { key: "2", label: "Line 2", kind: "rectifier", designation: "5Y3GT", count: 2, heaterSupplyIndex: 1, spares: noSpares, allowSubstitutes: false, acceptedSubstitutes: [], loadMilliamps: null };
    const result = checkBuild(input([bistableLine("1", "12AU7", 8), rectifiers], { supplies: twoSupplies }));
    const [twelve, five] = result.budgets.heaterSupplies;
    // 8 × 0.15 A = 1.2 A → 15.12 W (RCA RC-30 12AU7 at 12.6 V); 2 × 2 A = 4 A → 20 W (RCA RC-30 5Y3GT).
    expect(twelve.ampsUsed).toBeCloseTo(1.2, 9);
    expect(twelve.wattsUsed).toBeCloseTo(15.12, 9);
    expect(five.ampsUsed).toBeCloseTo(4, 9);
    expect(five.wattsUsed).toBeCloseTo(20, 9);
    expect(result.budgets.heaterWatts.used).toBeCloseTo(35.12, 9);
  });

  it("reports a type whose heater cannot run on its supply as a problem, not a throw", () => {
    const result = checkBuild(input([{ ...bistableLine("1", "6SN7GT", 2), heaterSupplyIndex: 0 }], { supplies: { ...supplies, heater: [{ name: "12.6 V", volts: 12.6, amps: 5 }] } }));
    expect(result.verdict).toBe("short");
    expect(result.lines[0].problems[0]).toContain("6SN7GT heater runs at 6.3 V, not on a 12.6 V supply");
  });

  it("counts powered tubes only: spares draw no heater current", () => {
    // 4 stages + 10 % spares (1, common practice, no source): heater for 4 tubes only, 4 × 0.3 A = 1.2 A.
    // Tubes 200 µS apart (> 5 %) with balanced halves: every pair is one envelope.
    const stock = Array.from({ length: 6 }, (_, index) => stockTube(index + 1, "12AU7", [1600 + 200 * index, 1601 + 200 * index]));
    const result = checkBuild(input([bistableLine("1", "12AU7", 4, { spares: { percent: 10, source: "common practice, no source" } })], { freeStock: stock }));
    expect(result.lines[0].coveredSpares).toBe(1);
    expect(result.budgets.heaterSupplies[0].ampsUsed).toBeCloseTo(1.2, 9);
  });
});

describe("B+, negative rail and plate dissipation", () => {
  it("single 6AU6 stages: B+ = plate + screen, 8 × 14.9 mA = 119.2 mA; 8 × 2.65 W plates (RCA RC-30 6AU6 typical)", () => {
    expect(singleStageLoad({ plateVolts: 250, plateMilliamps: 10.6, screenMilliamps: 4.3 }).bPlusMilliamps).toBeCloseTo(14.9, 9);
    const result = checkBuild(input([singleLine("1", "6AU6", 8)]));
    expect(result.budgets.bPlus.milliampsUsed).toBeCloseTo(119.2, 9);
    expect(result.budgets.plateDissipationWatts).toBeCloseTo(21.2, 9);
  });

  it("a 12AU7 bistable stage drawn from the solver's stable state: Σ (B+ − Vp)/RL", () => {
    // The solver's documented example: levels ≈ 222.8 V and 45.8 V (server/engine/bistable/index.ts).
    // B+ = (250 − 45.8)/27 kΩ + (250 − 222.8)/27 kΩ = 7.563 + 1.007 = 8.570 mA (hand computation).
    const load = bistableStageLoad(spec12AU7, { plateLoadOhms: 27_000, couplingOhms: 220_000, gridReturnOhms: 220_000, cathodeOhms: null }, supplies);
    expect(load.basis).toBe("koren-solve");
    expect(load.bistable).toBe(true);
    expect(Math.abs(load.bPlusMilliamps - 8.570)).toBeLessThan(0.01);
    // Rail: off grid by the divider (45.8 − 150)/2 = −52.1 V; on grid clamped between 0 and +1 V by grid current.
    // (−52.1 + 150)/220 kΩ + (0…1 + 150)/220 kΩ = 0.445 + 0.682…0.686 = 1.127…1.131 mA.
    expect(load.negativeRailMilliamps).toBeGreaterThan(1.125);
    expect(load.negativeRailMilliamps).toBeLessThan(1.133);
    expect(load.note).toContain("Koren 12AU7");
  });

  it("falls back to the typical plate current without a Koren set (6CG7: 9 mA at 250 V, RCA data from memory)", () => {
    const load = bistableStageLoad(spec6CG7, { plateLoadOhms: 27_000, couplingOhms: 220_000, gridReturnOhms: 220_000, cathodeOhms: null }, supplies);
    expect(load.basis).toBe("typical-point");
    expect(load.bPlusMilliamps).toBeCloseTo(9, 9);
    expect(load.plateWatts).toBeCloseTo(2.25, 9); // 250 V × 9 mA
    // Both grids at 0 V: 2 × 150 V / 220 kΩ = 1.3636 mA.
    expect(load.negativeRailMilliamps).toBeCloseTo(1.3636, 3);
  });

  it("bounds a type with neither (5963): 2 × B+/RL and B+²/(4·RL)", () => {
    const load = bistableStageLoad(spec5963, { plateLoadOhms: 27_000, couplingOhms: 220_000, gridReturnOhms: 220_000, cathodeOhms: null }, supplies);
    expect(load.basis).toBe("plate-load-bound");
    expect(load.bPlusMilliamps).toBeCloseTo((2 * 250 * 1000) / 27_000, 9); // 18.52 mA
    expect(load.plateWatts).toBeCloseTo((250 * 250) / (4 * 27_000), 9); // 0.579 W
  });

  it("sums bistable and single lines against B+ and flags the rail when over", () => {
    // 20 × 12AU7 stages at ≈ 8.57 mA + 8 × 6AU6 at 14.9 mA = 171.4 + 119.2 ≈ 290.6 mA (cases above).
    // Rail: 20 × ≈ 1.13 mA ≈ 22.6 mA against 20 mA → over.
    const tightRail = { ...supplies, negativeRail: { volts: -150, milliamps: 20 } };
    const result = checkBuild(input([bistableLine("1", "12AU7", 20), singleLine("2", "6AU6", 8)], { supplies: tightRail }));
    expect(Math.abs(result.budgets.bPlus.milliampsUsed - (20 * 8.570 + 119.2))).toBeLessThan(0.3);
    expect(result.budgets.bPlus.over).toBe(false);
    expect(result.budgets.negativeRail?.over).toBe(true);
    expect(result.verdict).toBe("short");
  });

  it("counts a regulator's shunt current and nothing for a rectifier", () => {
    expect(rectifierLoad(30).bPlusMilliamps).toBe(30);
    expect(rectifierLoad(null).bPlusMilliamps).toBe(0);
  });
});
