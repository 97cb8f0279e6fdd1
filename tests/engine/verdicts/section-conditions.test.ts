/**
 * A section read at its own conditions: the field-by-field override of the tube-wide
 * conditions, the judgement against the type's point, balance, and input checks.
 */
import { describe, expect, it } from "vitest";
import { evaluateSection, evaluateTube, mergeTestConditions } from "../../../server/engine/verdicts/index.ts";
import type { SectionReading, TubeEvaluation } from "../../../server/engine/verdicts/index.ts";
import { el84Sections, twelveAu7Sections, twelveAx7Sections } from "./reference-sections.ts";

/** The sitting was set for a 12AU7: 250 V plate, −8.5 V grid (RCA RC-30, 12AU7 typical operation). */
const sittingFor12au7 = { plateVolts: 250, gridVolts: -8.5, heaterVolts: 12.6 };

function gm(section: number, microSiemens: number, conditions?: SectionReading["conditions"]): SectionReading {
  return { section, transconductanceMicroSiemens: microSiemens, shorts: [], heaterOpen: false, ...(conditions ? { conditions } : {}) };
}

function resultOf(evaluation: TubeEvaluation) {
  if (!evaluation.ok) throw new Error(evaluation.reason);
  return evaluation;
}

describe("mergeTestConditions", () => {
  it("takes each field the section gives and the rest from the tube-wide conditions", () => {
    expect(mergeTestConditions(sittingFor12au7, { gridVolts: -2 })).toEqual({ heaterVolts: 12.6, plateVolts: 250, screenVolts: null, gridVolts: -2 });
    expect(mergeTestConditions(sittingFor12au7, { plateVolts: 150, screenVolts: 150, gridVolts: null })).toEqual({ heaterVolts: 12.6, plateVolts: 150, screenVolts: 150, gridVolts: -8.5 });
  });

  it("is the tube-wide conditions when the section gives none", () => {
    expect(mergeTestConditions(sittingFor12au7, null)).toEqual({ ...sittingFor12au7, screenVolts: null });
    expect(mergeTestConditions({}, undefined)).toEqual({ heaterVolts: null, plateVolts: null, screenVolts: null, gridVolts: null });
  });
});

describe("a section read at its own conditions", () => {
  it("is compared with the type's point its own conditions match", () => {
    // 12AX7 at 250 V, −2 V: 1600 µmho (RCA RC-30); 1500 / 1600 = 93.75 %, worked by hand.
    const result = resultOf(evaluateTube(twelveAx7Sections, sittingFor12au7, [gm(1, 1500, { gridVolts: -2 }), gm(2, 1400, { plateVolts: 250, gridVolts: -2 })]));
    expect(result.verdict).toBe("good");
    expect(result.sections[0].percentOfReference).toBeCloseTo(93.75, 10);
    // 1400 / 1600 = 87.5 %, worked by hand.
    expect(result.sections[1].percentOfReference).toBeCloseTo(87.5, 10);
    expect(result.sections[0].reference?.gridVolts).toBe(-2);
  });

  it("without its own conditions the same reading is not comparable at the sitting's", () => {
    const result = resultOf(evaluateTube(twelveAx7Sections, sittingFor12au7, [gm(1, 1500), gm(2, 1400)]));
    expect(result.verdict).toBe("not-comparable");
    expect(result.sections[0].notComparableReason).toContain("grid -8.5 V vs reference -2 V");
  });

  it("keeps the tube-wide fields it does not give: a plate-only override still needs the grid to match", () => {
    // 12AU7 point is 250 V / −8.5 V (RCA RC-30); the sitting was at 100 V / −8.5 V.
    const sitting = { plateVolts: 100, gridVolts: -8.5 };
    const result = resultOf(evaluateTube(twelveAu7Sections, sitting, [gm(1, 2200, { plateVolts: 250 }), gm(2, 2200)]));
    // 2200 / 2200 = 100 % (RCA RC-30 12AU7 at 250 V, −8.5 V).
    expect(result.sections[0].percentOfReference).toBeCloseTo(100, 10);
    expect(result.sections[1].status).toBe("not-comparable");
  });

  it("a pentode's own screen volts are used for the screen match", () => {
    // Mullard EL84: 250 V anode and screen, −7.3 V grid, 11.3 mA/V; 9040 / 11300 = 80 %, worked by hand.
    const result = evaluateSection(el84Sections[0], sittingFor12au7, gm(1, 9040, { plateVolts: 250, screenVolts: 250, gridVolts: -7.3 }));
    if (!result.ok) throw new Error(result.reason);
    expect(result.status).toBe("good");
    expect(result.percentOfReference).toBeCloseTo(80, 10);
  });

  it("balance on raw transconductance only when both sections were read at the same conditions", () => {
    // The 12AX7 sections above hold only the 250 V / −2 V point (RCA RC-30), so at 150 V neither section has a percent.
    const same = resultOf(evaluateTube(twelveAx7Sections, sittingFor12au7, [gm(1, 1000, { plateVolts: 150, gridVolts: -2 }), gm(2, 1100, { plateVolts: 150, gridVolts: -2 })]));
    expect(same.balanceBasis).toBe("transconductance");
    // (1100 − 1000) / 1050 × 100 = 9.5238…, the balance formula worked by hand.
    expect(same.balancePercent).toBeCloseTo(9.5238095, 5);
    const different = resultOf(evaluateTube(twelveAx7Sections, sittingFor12au7, [gm(1, 1000, { plateVolts: 150, gridVolts: -2 }), gm(2, 1100, { plateVolts: 160, gridVolts: -2 })]));
    expect(different.balancePercent).toBeNull();
    expect(different.balanceBasis).toBeNull();
  });

  it("refuses bad own conditions naming the section and the field", () => {
    const negative = evaluateTube(twelveAx7Sections, sittingFor12au7, [gm(1, 1500, { plateVolts: -250 })]);
    expect(negative).toEqual({ ok: false, reason: "Section 1 plate volts: -250 is negative" });
    const notNumber = evaluateTube(twelveAx7Sections, sittingFor12au7, [gm(2, 1500, { gridVolts: Number.NaN })]);
    expect(notNumber).toEqual({ ok: false, reason: "Section 2 grid volts: not a number" });
  });
});
