import { describe, expect, it } from "vitest";
import { parseTransconductance } from "../../../server/engine/units/index.ts";
import { DEFAULT_VERDICT_THRESHOLDS, evaluateSection } from "../../../server/engine/verdicts/index.ts";
import type { SectionEvaluation, SectionReading, TestConditions } from "../../../server/engine/verdicts/index.ts";
import { dualDiodeSections, el84Sections, twelveAu7Sections, twelveAx7Sections } from "./reference-sections.ts";

const twelveAu7Section = twelveAu7Sections[0];
const at250Volts: TestConditions = { plateVolts: 250, gridVolts: -8.5 }; // RCA RC-30, 12AU7 typical operation
const at150Volts: TestConditions = { plateVolts: 150, gridVolts: -8.5 }; // no published 12AU7 point here

function reading(overrides: Partial<SectionReading> = {}): SectionReading {
  return { section: 1, shorts: [], heaterOpen: false, ...overrides };
}

function resultOf(evaluation: SectionEvaluation) {
  if (!evaluation.ok) throw new Error(evaluation.reason);
  return evaluation;
}

function reasonOf(evaluation: SectionEvaluation): string {
  if (evaluation.ok) throw new Error("expected a rejection");
  return evaluation.reason;
}

function statusAt(microSiemens: number): string {
  return resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ transconductanceMicroSiemens: microSiemens }))).status;
}

describe("evaluateSection — transconductance against the reference", () => {
  it("reports percent of the matched reference", () => {
    const result = resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ transconductanceMicroSiemens: 1650 })));
    expect(result.basis).toBe("transconductance");
    expect(result.comparable).toBe(true);
    expect(result.referenceMicroSiemens).toBe(2200); // RCA RC-30, 12AU7 at 250 V, −8.5 V
    expect(result.percentOfReference).toBe(75);
    expect(result.status).toBe("good");
    expect(result.reasons).toEqual(["transconductance 1650 µS is 75 % of 2200 µS at 250 V, grid -8.5 V"]);
  });

  it("puts values exactly on a threshold on the better side", () => {
    // Against 2200 µS (RCA RC-30 12AU7): 70 % = 1540 µS, 50 % = 1100 µS; defaults worn < 70 %, failed < 50 %.
    expect(statusAt(1540)).toBe("good");
    expect(statusAt(1539)).toBe("worn");
    expect(statusAt(1100)).toBe("worn");
    expect(statusAt(1099)).toBe("failed");
    expect(statusAt(0)).toBe("failed");
  });

  it("follows configured thresholds", () => {
    const strict = { ...DEFAULT_VERDICT_THRESHOLDS, wornBelowPercent: 80, failedBelowPercent: 60 };
    // 1650 / 2200 = 75 % (RCA RC-30 12AU7 reference)
    expect(resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ transconductanceMicroSiemens: 1650 }), strict)).status).toBe(
      "worn",
    );
  });

  it("takes a reading typed in mA/V against a reference published in mA/V", () => {
    const parsed = parseTransconductance("9.04 mA/V", "Transconductance");
    if (!parsed.ok) throw new Error(parsed.reason);
    const el84Conditions = { plateVolts: 250, screenVolts: 250, gridVolts: -7.3 }; // Mullard EL84 data sheet
    const result = resultOf(
      evaluateSection(el84Sections[0], el84Conditions, reading({ transconductanceMicroSiemens: parsed.microSiemens })),
    );
    expect(result.percentOfReference).toBeCloseTo(80, 9); // 9.04 / 11.3 mA/V (Mullard EL84 data sheet)
    expect(result.status).toBe("good");
  });

  it("judges a 12AX7 against its own reference", () => {
    const result = resultOf(
      evaluateSection(twelveAx7Sections[0], { plateVolts: 250, gridVolts: -2 }, reading({ transconductanceMicroSiemens: 1000 })),
    );
    expect(result.percentOfReference).toBeCloseTo(62.5, 9); // 1000 / 1600 µmho, RCA RC-30 12AX7
    expect(result.status).toBe("worn");
    expect(result.reasons[0]).toContain("(worn below 70 %)");
  });
});

describe("evaluateSection — conditions that do not match", () => {
  it("never compares a transconductance read at other conditions", () => {
    const result = resultOf(evaluateSection(twelveAu7Section, at150Volts, reading({ transconductanceMicroSiemens: 2200 })));
    expect(result.status).toBe("not-comparable");
    expect(result.comparable).toBe(false);
    expect(result.basis).toBe("none");
    expect(result.percentOfReference).toBeNull();
    expect(result.notComparableReason).toContain("plate 150 V vs reference 250 V");
    expect(result.reasons.join(" ")).toContain("transconductance not compared");
  });

  it("falls back to emission, keeping the reason the transconductance was not compared", () => {
    const result = resultOf(
      evaluateSection(
        twelveAu7Section,
        at150Volts,
        reading({ transconductanceMicroSiemens: 2200, emission: { value: 80, passMark: 50, fullScale: 100 } }),
      ),
    );
    expect(result.basis).toBe("emission");
    expect(result.comparable).toBe(true);
    expect(result.status).toBe("good");
    expect(result.notComparableReason).toContain("plate 150 V vs reference 250 V");
  });

  it("is not comparable when plate volts were not recorded", () => {
    const result = resultOf(evaluateSection(twelveAu7Section, { gridVolts: -8.5 }, reading({ transconductanceMicroSiemens: 2200 })));
    expect(result.status).toBe("not-comparable");
    expect(result.notComparableReason).toBe("plate volts not recorded");
  });
});

describe("evaluateSection — emission against the instrument's pass mark", () => {
  // Instrument scale: pass mark 50, full scale 100; default worn margin 10 % of full scale ⇒ worn below 60.
  const emissionStatus = (value: number) =>
    resultOf(evaluateSection(dualDiodeSections[0], {}, reading({ emission: { value, passMark: 50, fullScale: 100 } }))).status;

  it("fails below the pass mark, is worn just above it, good beyond the margin", () => {
    expect(emissionStatus(0)).toBe("failed");
    expect(emissionStatus(49.9)).toBe("failed");
    expect(emissionStatus(50)).toBe("worn");
    expect(emissionStatus(59.9)).toBe("worn");
    expect(emissionStatus(60)).toBe("good");
    expect(emissionStatus(100)).toBe("good");
  });

  it("is comparable with no test conditions at all and reports percent of full scale", () => {
    const result = resultOf(evaluateSection(dualDiodeSections[0], {}, reading({ emission: { value: 72, passMark: 50, fullScale: 120 } })));
    expect(result.basis).toBe("emission");
    expect(result.comparable).toBe(true);
    expect(result.emissionPercentOfFullScale).toBeCloseTo(60, 9); // 72 / 120
    expect(result.percentOfReference).toBeNull();
  });

  it("takes the worse of transconductance and emission when both were read", () => {
    const result = resultOf(
      evaluateSection(
        twelveAu7Section,
        at250Volts,
        reading({ transconductanceMicroSiemens: 2200, emission: { value: 40, passMark: 50, fullScale: 100 } }),
      ),
    );
    expect(result.basis).toBe("transconductance");
    expect(result.percentOfReference).toBe(100);
    expect(result.status).toBe("failed");
  });
});

describe("evaluateSection — hard failures", () => {
  const healthy = { transconductanceMicroSiemens: 2200 }; // 100 % of RCA RC-30 12AU7

  it("fails on any short whatever the transconductance", () => {
    const result = resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ ...healthy, shorts: ["g1-k", "h-k"] })));
    expect(result.status).toBe("failed");
    expect(result.hardFailure).toBe(true);
    expect(result.percentOfReference).toBe(100);
    expect(result.reasons).toContain("short g1-k");
    expect(result.reasons).toContain("short h-k");
  });

  it("fails on an open heater", () => {
    const result = resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ ...healthy, heaterOpen: true })));
    expect(result.status).toBe("failed");
    expect(result.reasons).toContain("heater open");
  });

  it("fails on grid current over the limit, not at it", () => {
    // Default gas limit 1 µA (common practice, no source).
    const at = (gridCurrentMicroamps: number) =>
      resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ ...healthy, gridCurrentMicroamps })));
    expect(at(1).status).toBe("good");
    expect(at(1.5).status).toBe("failed");
    expect(at(1.5).reasons).toContain("grid current 1.5 µA over the 1 µA limit (gas)");
  });

  it("fails on leakage over the limit", () => {
    // Default leakage limit 5 µA (common practice, no source).
    const at = (leakageMicroamps: number) =>
      resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ ...healthy, leakageMicroamps })));
    expect(at(5).status).toBe("good");
    expect(at(6).status).toBe("failed");
  });

  it("fails even when nothing else was read or could be compared", () => {
    expect(resultOf(evaluateSection(twelveAu7Section, {}, reading({ shorts: ["a-g1"] }))).status).toBe("failed");
    expect(
      resultOf(evaluateSection(twelveAu7Section, at150Volts, reading({ transconductanceMicroSiemens: 2200, heaterOpen: true }))).status,
    ).toBe("failed");
  });
});

describe("evaluateSection — untested and bad input", () => {
  it("is untested with no reading or with nothing judged", () => {
    expect(resultOf(evaluateSection(twelveAu7Section, at250Volts, null)).status).toBe("untested");
    const shortsOnly = resultOf(evaluateSection(twelveAu7Section, at250Volts, reading()));
    expect(shortsOnly.status).toBe("untested");
    expect(shortsOnly.reasons).toEqual(["no transconductance or emission reading"]);
    const plateOnly = resultOf(evaluateSection(twelveAu7Section, at250Volts, reading({ plateMilliamps: 10.5 })));
    expect(plateOnly.status).toBe("untested");
  });

  it("rejects bad readings with a reason naming the field", () => {
    const cases: Array<[Partial<SectionReading>, string]> = [
      [{ transconductanceMicroSiemens: -5 }, "Section 1 transconductance: -5 is negative"],
      [{ transconductanceMicroSiemens: Number.NaN }, "Section 1 transconductance: not a number"],
      [{ plateMilliamps: Number.POSITIVE_INFINITY }, "Section 1 plate current: not a number"],
      [{ gridCurrentMicroamps: -1 }, "Section 1 grid current: -1 is negative"],
      [{ leakageMicroamps: -1 }, "Section 1 leakage: -1 is negative"],
      [{ emission: { value: 50, passMark: 120, fullScale: 100 } }, "Section 1 emission pass mark: 120 is above the full scale 100"],
      [{ emission: { value: 110, passMark: 50, fullScale: 100 } }, "Section 1 emission: 110 is above the full scale 100"],
      [{ emission: { value: 10, passMark: 0, fullScale: 0 } }, "Section 1 emission full scale: must be above zero"],
      [{ shorts: [""] }, "Section 1 shorts: an entry is empty"],
      [{ section: 0 }, "Section: '0' is not a section number (1, 2, …)"],
      [{ section: 2 }, "Section: reading is for section 2, not section 1"],
    ];
    for (const [overrides, reason] of cases) {
      expect(reasonOf(evaluateSection(twelveAu7Section, at250Volts, reading(overrides)))).toBe(reason);
    }
  });

  it("rejects bad conditions and thresholds", () => {
    expect(reasonOf(evaluateSection(twelveAu7Section, { plateVolts: 250, heaterVolts: -6.3 }, reading()))).toBe(
      "Heater volts: -6.3 is negative",
    );
    expect(
      reasonOf(evaluateSection(twelveAu7Section, at250Volts, reading(), { ...DEFAULT_VERDICT_THRESHOLDS, wornBelowPercent: 120 })),
    ).toBe("Worn below (percent of reference transconductance): 120 is above the maximum 100 %");
  });
});
