import { describe, expect, it } from "vitest";
import {
  DEFAULT_VERDICT_THRESHOLDS,
  findComparableReference,
  percentOfReference,
  sectionBalancePercent,
} from "../../../server/engine/verdicts/index.ts";
import type { ComparableReference, TestConditions } from "../../../server/engine/verdicts/index.ts";
import {
  dualDiodeSections,
  sixV6GtAt250Volts,
  twelveAu7At100Volts,
  twelveAu7At250Volts,
  twelveAu7Heater,
} from "./reference-sections.ts";

const twelveAu7Points = [twelveAu7At250Volts, twelveAu7At100Volts];

function reasonOf(match: ComparableReference): string {
  if (match.comparable) throw new Error("expected no match");
  return match.reason;
}

function indexOf(match: ComparableReference): number {
  if (!match.comparable) throw new Error(match.reason);
  return match.referenceIndex;
}

describe("percentOfReference", () => {
  it("is measured / reference × 100", () => {
    expect(percentOfReference(1650, 2200)).toBe(75); // against RCA RC-30 12AU7 2200 µmho
    expect(percentOfReference(1540, 2200)).toBe(70); // exact, so threshold boundaries are exact
    expect(percentOfReference(2420, 2200)).toBeCloseTo(110, 9);
  });

  it("is null for a reference that is not positive or a value that is not finite", () => {
    expect(percentOfReference(1000, 0)).toBeNull();
    expect(percentOfReference(1000, -5)).toBeNull();
    expect(percentOfReference(Number.NaN, 2200)).toBeNull();
  });
});

describe("sectionBalancePercent", () => {
  it("is |a − b| / mean × 100 for two sections", () => {
    // 200 / 2100 × 100, worked by hand
    expect(sectionBalancePercent([2000, 2200])).toBeCloseTo(9.523809524, 8);
    expect(sectionBalancePercent([2200, 2000])).toBeCloseTo(9.523809524, 8);
    expect(sectionBalancePercent([1600, 1600])).toBe(0);
  });

  it("is (max − min) / mean × 100 for more sections", () => {
    // (1100 − 900) / 1000 × 100, worked by hand
    expect(sectionBalancePercent([900, 1000, 1100])).toBeCloseTo(20, 9);
  });

  it("is null when it cannot be worked out", () => {
    expect(sectionBalancePercent([2200])).toBeNull();
    expect(sectionBalancePercent([0, 0])).toBeNull();
    expect(sectionBalancePercent([-1, 5])).toBeNull();
  });
});

describe("findComparableReference", () => {
  const thresholds = DEFAULT_VERDICT_THRESHOLDS;

  it("matches the published point the tester was set to", () => {
    expect(indexOf(findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: -8.5 }, thresholds))).toBe(0);
    expect(indexOf(findComparableReference(twelveAu7Points, { plateVolts: 100, gridVolts: 0 }, thresholds))).toBe(1);
  });

  it("lists what did not match for every point", () => {
    expect(reasonOf(findComparableReference(twelveAu7Points, { plateVolts: 150, gridVolts: -8.5 }, thresholds))).toBe(
      "no reference point matches: plate 150 V vs reference 250 V; plate 150 V vs reference 100 V, grid -8.5 V vs reference 0 V",
    );
  });

  it("includes plate volts within ±5 % and excludes just beyond", () => {
    // 250 V ± 5 % = 237.5 … 262.5 V (default tolerance, common practice)
    expect(indexOf(findComparableReference(twelveAu7Points, { plateVolts: 262.5, gridVolts: -8.5 }, thresholds))).toBe(0);
    expect(indexOf(findComparableReference(twelveAu7Points, { plateVolts: 237.5, gridVolts: -8.5 }, thresholds))).toBe(0);
    expect(reasonOf(findComparableReference(twelveAu7Points, { plateVolts: 263, gridVolts: -8.5 }, thresholds))).toContain(
      "plate 263 V vs reference 250 V",
    );
  });

  it("includes grid volts within ±0.25 V and excludes just beyond", () => {
    expect(indexOf(findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: -8.75 }, thresholds))).toBe(0);
    expect(reasonOf(findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: -8.8 }, thresholds))).toContain(
      "grid -8.8 V vs reference -8.5 V",
    );
  });

  it("points out a bias entered without its minus sign", () => {
    expect(reasonOf(findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: 8.5 }, thresholds))).toContain(
      "grid 8.5 V vs reference -8.5 V (sign?)",
    );
  });

  it("refuses when plate or grid volts were not recorded", () => {
    expect(reasonOf(findComparableReference(twelveAu7Points, { gridVolts: -8.5 }, thresholds))).toBe("plate volts not recorded");
    expect(reasonOf(findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: null }, thresholds))).toBe(
      "grid volts not recorded",
    );
  });

  it("needs screen volts for a point that states them, and ignores them otherwise", () => {
    const pentodeConditions: TestConditions = { plateVolts: 250, gridVolts: -12.5 };
    expect(reasonOf(findComparableReference([sixV6GtAt250Volts], pentodeConditions, thresholds))).toBe(
      "no reference point matches: screen volts not recorded (reference 250 V)",
    );
    expect(
      reasonOf(findComparableReference([sixV6GtAt250Volts], { ...pentodeConditions, screenVolts: 200 }, thresholds)),
    ).toContain("screen 200 V vs reference 250 V");
    expect(indexOf(findComparableReference([sixV6GtAt250Volts], { ...pentodeConditions, screenVolts: 250 }, thresholds))).toBe(0);
    // A triode point has no screen; a screen voltage recorded for the session does not matter.
    expect(
      indexOf(findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: -8.5, screenVolts: 150 }, thresholds)),
    ).toBe(0);
  });

  it("checks a recorded heater voltage against the rating or its centre-tap half", () => {
    const at = (heaterVolts: number | null) =>
      findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: -8.5, heaterVolts }, thresholds, twelveAu7Heater);
    expect(indexOf(at(12.6))).toBe(0); // RCA RC-30: 12.6 V series heater
    expect(indexOf(at(6.3))).toBe(0); // RCA RC-30: 6.3 V with the halves in parallel
    expect(indexOf(at(null))).toBe(0); // not recorded: taken to be at its rating
    expect(reasonOf(at(5))).toBe("heater 5 V vs rated 12.6 V or 6.3 V");
  });

  it("picks the nearest point when several match", () => {
    // With ±50 % and ±10 V both points match both conditions below; distances worked by hand:
    // (140 V, −1 V): 250 V point (110/125)² + (7.5/10)² = 1.337, 100 V point (40/50)² + (1/10)² = 0.65.
    // (150 V, −8 V): 250 V point (100/125)² + (0.5/10)² = 0.6425, 100 V point (50/50)² + (8/10)² = 1.64.
    const wide = { ...thresholds, plateVoltsTolerancePercent: 50, gridVoltsToleranceVolts: 10 };
    expect(indexOf(findComparableReference(twelveAu7Points, { plateVolts: 140, gridVolts: -1 }, wide))).toBe(1);
    expect(indexOf(findComparableReference(twelveAu7Points, { plateVolts: 150, gridVolts: -8 }, wide))).toBe(0);
  });

  it("refuses a section with no reference transconductance", () => {
    expect(reasonOf(findComparableReference(dualDiodeSections[0].typical, { plateVolts: 250, gridVolts: 0 }, thresholds))).toBe(
      "no reference transconductance for this section",
    );
  });

  it("names the field of bad conditions or thresholds", () => {
    expect(reasonOf(findComparableReference(twelveAu7Points, { plateVolts: -250, gridVolts: -8.5 }, thresholds))).toBe(
      "Plate volts: -250 is negative",
    );
    expect(reasonOf(findComparableReference(twelveAu7Points, { plateVolts: Number.NaN, gridVolts: -8.5 }, thresholds))).toBe(
      "Plate volts: not a number",
    );
    expect(
      reasonOf(findComparableReference(twelveAu7Points, { plateVolts: 250, gridVolts: -8.5 }, { ...thresholds, gridVoltsToleranceVolts: -1 })),
    ).toContain("Grid volts tolerance against the reference: -1 is below the minimum 0 V");
  });
});
