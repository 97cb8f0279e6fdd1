import { describe, expect, it } from "vitest";
import { preferredValuesInRange, suggestResistors } from "../../../server/engine/bistable/index.ts";
import { tubeElementFromModel, tubeModelLibrary } from "../../../server/engine/models/index.ts";

const twelveAU7 = { tube: tubeElementFromModel(tubeModelLibrary["12AU7"]) };
const supplies = { bPlusVolts: 250, negativeRailVolts: -150 };

describe("suggestResistors", () => {
  it("returns E12 designs that meet the level targets, best worst-case margin first", () => {
    const result = suggestResistors({ sideA: twelveAU7 }, supplies, { highLevelVolts: 220, lowLevelVolts: 50 }, "E12", { topN: 4 });
    if (!result.ok) throw new Error(result.reason);
    expect(result.suggestions.length).toBeGreaterThan(0);
    expect(result.suggestions.length).toBeLessThanOrEqual(4);
    const e12 = new Set(preferredValuesInRange("E12", 1, 1e7));
    for (const suggestion of result.suggestions) {
      expect(e12.has(suggestion.plateLoadOhms)).toBe(true);
      expect(e12.has(suggestion.couplingOhms)).toBe(true);
      expect(e12.has(suggestion.gridReturnOhms)).toBe(true);
      expect(suggestion.analysis.bistable).toBe(true);
      expect(suggestion.levelErrorVolts).toBeLessThanOrEqual(10);
      expect(Math.abs((suggestion.analysis.levels?.highLevelVolts ?? 0) - 220)).toBeLessThanOrEqual(10);
      expect(Math.abs((suggestion.analysis.levels?.lowLevelVolts ?? 0) - 50)).toBeLessThanOrEqual(10);
      expect(suggestion.worstCase.notBistableCount).toBe(0);
    }
    const margins = result.suggestions.map((suggestion) => suggestion.worstCase.cutoffMarginVolts as number);
    for (let index = 1; index < margins.length; index++) expect(margins[index]).toBeLessThanOrEqual(margins[index - 1]);
  });

  it("works with E24, a common cathode and a mixed pair", () => {
    const result = suggestResistors(
      {
        sideA: { tube: tubeElementFromModel(tubeModelLibrary.EL34), screen: { kind: "resistor", supplyVolts: 250, ohms: 47e3 } },
        sideB: twelveAU7,
      },
      { ...supplies, cathode: { kind: "common", ohms: 1000 } },
      { highLevelVolts: 215, lowLevelVolts: 55, toleranceVolts: 15 },
      "E24",
    );
    if (!result.ok) throw new Error(result.reason);
    const e24 = new Set(preferredValuesInRange("E24", 1, 1e7));
    for (const suggestion of result.suggestions) {
      expect(e24.has(suggestion.plateLoadOhms)).toBe(true);
      expect(suggestion.levelErrorVolts).toBeLessThanOrEqual(15);
    }
  });

  it("says plainly when nothing in range reaches the targets", () => {
    const result = suggestResistors({ sideA: twelveAU7 }, supplies, { highLevelVolts: 245, lowLevelVolts: 5, toleranceVolts: 1 }, "E12", {
      plateLoadRangeOhms: { min: 10_000, max: 15_000 },
    });
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.reason).toContain("no E12 combination");
  });

  it("rejects inconsistent targets", () => {
    expect(() => suggestResistors({ sideA: twelveAU7 }, supplies, { highLevelVolts: 50, lowLevelVolts: 100 }, "E12")).toThrow(RangeError);
  });
});
