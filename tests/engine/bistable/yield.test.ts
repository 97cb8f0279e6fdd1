import { describe, expect, it } from "vitest";
import { analyzeYield, directedWorstCase, type BistableCircuit } from "../../../server/engine/bistable/index.ts";
import { tubeElementFromModel, tubeModelLibrary } from "../../../server/engine/models/index.ts";

const side = { tube: tubeElementFromModel(tubeModelLibrary["12AU7"]), plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 220e3 };
const circuit: BistableCircuit = { bPlusVolts: 250, negativeRailVolts: -150, sideA: side, sideB: side };
const tolerances = { resistorTolerancePercent: 5, supplyDriftPercent: 5, tubeSpreadPercent: 20 };
const thresholds = { minSwingVolts: 100, minCutoffMarginVolts: 5 };

describe("analyzeYield", () => {
  it("is reproducible with the same seed and differs with another", () => {
    const options = { ...tolerances, trials: 60, seed: 42, thresholds, maxCornerFactors: 3 };
    const first = analyzeYield(circuit, options);
    const second = analyzeYield(circuit, options);
    expect(second).toEqual(first);
    const other = analyzeYield(circuit, { ...options, seed: 43 });
    expect(other.monteCarlo.worst.cutoffMarginVolts).not.toBe(first.monteCarlo.worst.cutoffMarginVolts);
  });

  it("evaluates 2^k corners for k factors, and every Monte Carlo trial", () => {
    const result = analyzeYield(circuit, { ...tolerances, trials: 50, seed: 1, thresholds });
    // Triode pair, grounded cathodes: 3 resistors and a tube per side, B+ and the rail.
    expect(result.factors).toHaveLength(10);
    expect(result.corners.method).toBe("full-factorial");
    expect(result.corners.evaluated).toBe(1024);
    expect(result.monteCarlo.trials).toBe(50);
    expect(result.nominal.pass).toBe(true);
    expect(result.corners.passFraction).toBe(1);
    expect(result.monteCarlo.passFraction).toBe(1);
    // Corners bound the Monte Carlo spread for this monotone circuit.
    expect(result.corners.worst.cutoffMarginVolts as number).toBeLessThanOrEqual(result.monteCarlo.worst.cutoffMarginVolts as number);
    expect(result.corners.worst.swingVolts as number).toBeLessThanOrEqual(result.monteCarlo.worst.swingVolts as number);
    expect(result.corners.worst.cutoffMarginVolts as number).toBeLessThan(result.nominal.analysis.levels?.cutoffMarginVolts as number);
  });

  it("falls back to a reduced corner set beyond maxCornerFactors", () => {
    const result = analyzeYield(circuit, { ...tolerances, trials: 0, seed: 3, thresholds, maxCornerFactors: 4 });
    expect(result.corners.method).toBe("reduced");
    // Each factor alone at both ends (20), all high, all low (2), and 2^4 random corners.
    expect(result.corners.evaluated).toBe(20 + 2 + 16);
  });

  it("a worn tube at the wear threshold lowers the worst margin", () => {
    const options = { ...tolerances, trials: 100, seed: 9, thresholds, maxCornerFactors: 10 };
    const fresh = analyzeYield(circuit, options);
    const worn = analyzeYield(circuit, { ...options, wornScale: 0.5 });
    expect(worn.corners.worst.cutoffMarginVolts as number).toBeLessThan(fresh.corners.worst.cutoffMarginVolts as number);
    expect(worn.monteCarlo.worst.cutoffMarginVolts as number).toBeLessThan(fresh.monteCarlo.worst.cutoffMarginVolts as number);
  });

  it("counts failures against the thresholds and names the failing corners", () => {
    const strict = analyzeYield(circuit, {
      ...tolerances,
      trials: 100,
      seed: 5,
      thresholds: { minSwingVolts: 160, minCutoffMarginVolts: 5, maxLowLevelVolts: 60 },
    });
    expect(strict.corners.passFraction).toBeGreaterThan(0);
    expect(strict.corners.passFraction).toBeLessThan(1);
    expect(strict.monteCarlo.passFraction).toBeLessThan(1);
    expect(strict.corners.failing.length).toBeGreaterThan(0);
    expect(strict.corners.failing[0].corner).toMatch(/[+−]/);
    expect(strict.corners.failing[0].failures.join(" ")).toMatch(/swing|low level/);
  });

  it("rejects out-of-range options", () => {
    expect(() => analyzeYield(circuit, { ...tolerances, resistorTolerancePercent: -1, trials: 1, seed: 1, thresholds })).toThrow(RangeError);
    expect(() => analyzeYield(circuit, { ...tolerances, wornScale: 1.5, trials: 1, seed: 1, thresholds })).toThrow(RangeError);
    expect(() => analyzeYield(circuit, { ...tolerances, trials: 1.5, seed: 1, thresholds })).toThrow(RangeError);
  });
});

describe("directedWorstCase", () => {
  it("finds the same worst margin and swing as the full 2^10 corner search here", () => {
    // Brute force: all 1024 corners.
    const exhaustive = analyzeYield(circuit, { ...tolerances, trials: 0, seed: 1, thresholds });
    const directed = directedWorstCase(circuit, tolerances);
    expect(directed.evaluated).toBeLessThanOrEqual(2 * 10 + 5);
    expect(directed.cutoffMarginVolts as number).toBeCloseTo(exhaustive.corners.worst.cutoffMarginVolts as number, 6);
    expect(directed.swingVolts as number).toBeCloseTo(exhaustive.corners.worst.swingVolts as number, 6);
  });
});
