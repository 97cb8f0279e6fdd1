import { describe, expect, it } from "vitest";
import {
  DEFAULT_VERDICT_THRESHOLDS,
  evaluateTube,
  resolveVerdictThresholds,
  VERDICT_SEVERITY_ORDER,
  VERDICT_THRESHOLD_DESCRIPTIONS,
  worstStatus,
} from "../../../server/engine/verdicts/index.ts";
import type { SectionReading, TubeEvaluation, VerdictStatus } from "../../../server/engine/verdicts/index.ts";
import { dualDiodeSections, triodePentodeSections, twelveAu7Heater, twelveAu7Sections } from "./reference-sections.ts";

const at250Volts = { plateVolts: 250, gridVolts: -8.5 }; // RCA RC-30, 12AU7 typical operation
const at150Volts = { plateVolts: 150, gridVolts: -8.5 }; // no published 12AU7 point here

function gm(section: number, microSiemens: number, extra: Partial<SectionReading> = {}): SectionReading {
  return { section, transconductanceMicroSiemens: microSiemens, shorts: [], heaterOpen: false, ...extra };
}

function resultOf(evaluation: TubeEvaluation) {
  if (!evaluation.ok) throw new Error(evaluation.reason);
  return evaluation;
}

function reasonOf(evaluation: TubeEvaluation): string {
  if (evaluation.ok) throw new Error("expected a rejection");
  return evaluation.reason;
}

describe("worstStatus", () => {
  it("orders failed > worn > not-comparable > untested > good", () => {
    expect(VERDICT_SEVERITY_ORDER).toEqual(["good", "untested", "not-comparable", "worn", "failed"]);
    const order: VerdictStatus[] = ["good", "untested", "not-comparable", "worn", "failed"];
    for (let lower = 0; lower < order.length; lower++) {
      for (let higher = lower; higher < order.length; higher++) {
        expect(worstStatus([order[lower], order[higher]])).toBe(order[higher]);
        expect(worstStatus([order[higher], order[lower]])).toBe(order[higher]);
      }
    }
  });

  it("is untested for an empty list", () => {
    expect(worstStatus([])).toBe("untested");
  });
});

describe("evaluateTube — verdict is the worst section", () => {
  it("is good when both sections are good", () => {
    const result = resultOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2200), gm(2, 2000)]));
    expect(result.verdict).toBe("good");
    expect(result.sections.map((section) => section.status)).toEqual(["good", "good"]);
  });

  it("is failed when one section fails", () => {
    const result = resultOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2200), gm(2, 2200, { shorts: ["g1-k"] })]));
    expect(result.verdict).toBe("failed");
    expect(result.reasons).toContain("section 2: short g1-k");
  });

  it("is worn over not-comparable, and untested when a section was not read", () => {
    // Section 2's emission puts it on an emission basis; section 1's transconductance alone cannot be compared at 150 V.
    const mixed = resultOf(
      evaluateTube(twelveAu7Sections, at150Volts, [
        gm(1, 2200),
        { section: 2, emission: { value: 55, passMark: 50, fullScale: 100 }, shorts: [], heaterOpen: false },
      ]),
    );
    expect(mixed.sections.map((section) => section.status)).toEqual(["not-comparable", "worn"]);
    expect(mixed.verdict).toBe("worn");

    const half = resultOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2200)]));
    expect(half.sections.map((section) => section.status)).toEqual(["good", "untested"]);
    expect(half.verdict).toBe("untested");
    expect(half.reasons).toContain("section 2: section 2 not read");
  });

  it("is untested when there are no readings", () => {
    const result = resultOf(evaluateTube(twelveAu7Sections, at250Volts, []));
    expect(result.verdict).toBe("untested");
    expect(result.reasons).toEqual(["no readings"]);
    expect(result.balancePercent).toBeNull();
    expect(result.balanceOk).toBeNull();
    expect(result.unbalanced).toBe(false);
  });

  it("passes the heater rating through to reference matching", () => {
    const result = resultOf(
      evaluateTube(twelveAu7Sections, { ...at250Volts, heaterVolts: 5 }, [gm(1, 2200), gm(2, 2200)], DEFAULT_VERDICT_THRESHOLDS, {
        heater: twelveAu7Heater,
      }),
    );
    expect(result.verdict).toBe("not-comparable");
    expect(result.sections[0].notComparableReason).toBe("heater 5 V vs rated 12.6 V or 6.3 V"); // RCA RC-30 12AU7 heater
  });
});

describe("evaluateTube — section balance", () => {
  it("uses percent of reference on a dual triode read at the published point", () => {
    // 2200 and 2000 µS against 2200 µS (RCA RC-30 12AU7): 100 % and 90.909 %;
    // |100 − 90.909| / 95.4545 × 100 = 9.5238 %, worked by hand; within the default 10 %.
    const result = resultOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2200), gm(2, 2000)]));
    expect(result.balanceBasis).toBe("percent-of-reference");
    expect(result.balancePercent).toBeCloseTo(9.523809524, 8);
    expect(result.balanceOk).toBe(true);
    expect(result.unbalanced).toBe(false);
  });

  it("flags an unbalanced pair without changing a good verdict", () => {
    // |2200 − 1900| / 2050 × 100 = 14.634 %, worked by hand; over the default 10 %.
    const result = resultOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2200), gm(2, 1900)]));
    expect(result.balancePercent).toBeCloseTo(14.634146341, 8);
    expect(result.balanceOk).toBe(false);
    expect(result.unbalanced).toBe(true);
    expect(result.verdict).toBe("good");
    expect(result.reasons).toContain("sections 1 and 2 differ by 14.6 % on percent-of-reference (limit 10 %)");
  });

  it("counts a spread exactly at the limit as balanced", () => {
    // |2100 − 1900| / 2000 × 100 = 10 %, worked by hand
    const result = resultOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2100), gm(2, 1900)]));
    expect(result.balancePercent).toBeCloseTo(10, 9);
    expect(result.balanceOk).toBe(true);
  });

  it("falls back to raw transconductance when the conditions match no reference", () => {
    const result = resultOf(evaluateTube(twelveAu7Sections, at150Volts, [gm(1, 1500), gm(2, 1200)]));
    expect(result.verdict).toBe("not-comparable");
    expect(result.balanceBasis).toBe("transconductance");
    expect(result.balancePercent).toBeCloseTo((300 / 1350) * 100, 9); // |1500 − 1200| / mean, by hand
    expect(result.unbalanced).toBe(true);
  });

  it("falls back to emission as percent of full scale", () => {
    const emission = (section: number, value: number): SectionReading => ({
      section,
      emission: { value, passMark: 40, fullScale: 100 },
      shorts: [],
      heaterOpen: false,
    });
    const result = resultOf(evaluateTube(dualDiodeSections, {}, [emission(1, 80), emission(2, 74)]));
    expect(result.balanceBasis).toBe("emission");
    expect(result.balancePercent).toBeCloseTo((6 / 77) * 100, 9); // |80 − 74| / 77 × 100 = 7.79 %, by hand
    expect(result.balanceOk).toBe(true);
    expect(result.verdict).toBe("good");
  });

  it("has no balance when a section is missing its figure or the sections differ in kind", () => {
    expect(resultOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2200)])).balancePercent).toBeNull();
    const mixedKinds = resultOf(evaluateTube(triodePentodeSections, at250Volts, [gm(1, 2200), gm(2, 2200)]));
    expect(mixedKinds.balancePercent).toBeNull();
    expect(mixedKinds.balanceOk).toBeNull();
  });
});

describe("evaluateTube — bad input", () => {
  it("names the field", () => {
    expect(reasonOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(3, 2200)]))).toBe("Section: this type has no section 3");
    expect(reasonOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(1, 2200), gm(1, 2100)]))).toBe("Section 1: read twice");
    expect(reasonOf(evaluateTube(twelveAu7Sections, at250Volts, [gm(2, -1)]))).toBe("Section 2 transconductance: -1 is negative");
    expect(reasonOf(evaluateTube(twelveAu7Sections, { plateVolts: 250, gridVolts: Number.NaN }, []))).toBe("Grid volts: not a number");
    expect(reasonOf(evaluateTube([], at250Volts, []))).toBe("Tube type: has no sections");
    expect(
      reasonOf(evaluateTube(twelveAu7Sections, at250Volts, [], { ...DEFAULT_VERDICT_THRESHOLDS, maxImbalancePercent: Number.NaN })),
    ).toBe("Largest section imbalance, (max − min) / mean: not a number");
  });
});

describe("thresholds", () => {
  it("describes every threshold with a default inside its own range and a source", () => {
    const keys = VERDICT_THRESHOLD_DESCRIPTIONS.map((description) => description.key).sort();
    expect(keys).toEqual(Object.keys(DEFAULT_VERDICT_THRESHOLDS).sort());
    for (const description of VERDICT_THRESHOLD_DESCRIPTIONS) {
      expect(description.default).toBeGreaterThanOrEqual(description.min);
      expect(description.default).toBeLessThanOrEqual(description.max);
      expect(description.source.length).toBeGreaterThan(0);
      expect(DEFAULT_VERDICT_THRESHOLDS[description.key]).toBe(description.default);
    }
  });

  it("keeps the defaults stated in the descriptions (common practice, no source)", () => {
    expect(DEFAULT_VERDICT_THRESHOLDS.wornBelowPercent).toBe(70);
    expect(DEFAULT_VERDICT_THRESHOLDS.failedBelowPercent).toBe(50);
    expect(DEFAULT_VERDICT_THRESHOLDS.maxImbalancePercent).toBe(10);
  });

  it("merges and validates overrides", () => {
    const resolved = resolveVerdictThresholds({ wornBelowPercent: 65 });
    expect(resolved.ok && resolved.thresholds.wornBelowPercent).toBe(65);
    expect(resolved.ok && resolved.thresholds.failedBelowPercent).toBe(50);
    expect(resolveVerdictThresholds({ failedBelowPercent: 80 })).toEqual({
      ok: false,
      reason: "Failed below: 80 % must not exceed the worn-below threshold of 70 %",
    });
    expect(resolveVerdictThresholds({ maxLeakageMicroamps: "lots" })).toEqual({
      ok: false,
      reason: "Largest leakage current: not a number",
    });
    expect(resolveVerdictThresholds({ colour: 3 } as never)).toEqual({ ok: false, reason: "Thresholds: unknown setting 'colour'" });
  });
});
