import { describe, expect, it } from "vitest";
import { analyzeBistable, type BistableCircuit, type BistableState } from "../../../server/engine/bistable/index.ts";
import {
  scaleModelToMeasuredTransconductance,
  transconductanceMicroSiemens,
  tubeElementFromModel,
  tubeModelLibrary,
} from "../../../server/engine/models/index.ts";
import { largestNodeImbalanceAmps } from "./kirchhoff-check.ts";

const twelveAU7 = tubeElementFromModel(tubeModelLibrary["12AU7"]);
const el34 = tubeElementFromModel(tubeModelLibrary.EL34);
const symmetricSide = { tube: twelveAU7, plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 220e3 };
const standard: BistableCircuit = { bPlusVolts: 250, negativeRailVolts: -150, sideA: symmetricSide, sideB: symmetricSide };
const asymmetric: BistableCircuit = {
  bPlusVolts: 250,
  negativeRailVolts: -150,
  sideA: { tube: twelveAU7, plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 180e3 },
  sideB: { tube: twelveAU7, plateLoadOhms: 33e3, couplingOhms: 270e3, gridReturnOhms: 220e3 },
  cathode: { kind: "common", ohms: 1500 },
};
const mixed: BistableCircuit = {
  bPlusVolts: 250,
  negativeRailVolts: -150,
  sideA: {
    tube: el34,
    plateLoadOhms: 27e3,
    couplingOhms: 220e3,
    gridReturnOhms: 220e3,
    screen: { kind: "resistor", supplyVolts: 250, ohms: 47e3 },
  },
  sideB: symmetricSide,
  cathode: { kind: "common", ohms: 2000 },
};

function swapSides(circuit: BistableCircuit): BistableCircuit {
  const cathode = circuit.cathode;
  return {
    ...circuit,
    sideA: circuit.sideB,
    sideB: circuit.sideA,
    cathode: cathode?.kind === "separate" ? { kind: "separate", sideAOhms: cathode.sideBOhms, sideBOhms: cathode.sideAOhms } : cathode,
  };
}

function stateWithOn(states: BistableState[], side: "A" | "B"): BistableState {
  const state = states.find((candidate) => candidate.onSide === side);
  if (!state) throw new Error(`no state with side ${side} on`);
  return state;
}

describe("a 12AU7 pair with fixed negative bias", () => {
  const analysis = analyzeBistable(standard);

  it("is bistable with three equilibria satisfying every node equation", () => {
    expect(analysis.bistable).toBe(true);
    expect(analysis.states).toHaveLength(3);
    expect(analysis.states.filter((state) => state.stable)).toHaveLength(2);
    // Brute force: Kirchhoff's current law recomputed from the element functions.
    for (const state of analysis.states) expect(largestNodeImbalanceAmps(standard, state)).toBeLessThan(1e-9);
  });

  it("clamps the on grid slightly above its cathode with the stated grid-current law", () => {
    const aOn = stateWithOn(analysis.states, "A");
    expect(aOn.sideA.gridVolts).toBeGreaterThan(0);
    expect(aOn.sideA.gridVolts).toBeLessThan(1.5);
    // Ig = 0.35 mA/V^1.5 · Vg^1.5 (the parameter set's stated approximation).
    expect(aOn.onGridMilliamps).toBeCloseTo(0.35 * aOn.sideA.gridVolts ** 1.5, 9);
    expect(aOn.sideB.gridVolts).toBeLessThan(aOn.cutoffGridVolts as number);
  });

  it("has inverting stages whose product is the loop gain, and a return ratio above 1 only at the unstable state", () => {
    expect(analysis.stageGains?.aToB).toBeLessThan(-1);
    expect(analysis.stageGains?.bToA).toBeLessThan(-1);
    expect(analysis.loopGain).toBeCloseTo((analysis.stageGains?.aToB ?? 0) * (analysis.stageGains?.bToA ?? 0), 12);
    for (const state of analysis.states) expect(state.returnRatio > 1).toBe(!state.stable);
  });

  it("compares plate dissipation with a given rating", () => {
    // 12AU7 rating 2.75 W per plate is not reached; a 0.2 W override is.
    expect(analysis.states.every((state) => !state.sideA.overDissipation && !state.sideB.overDissipation)).toBe(true);
    const strict = analyzeBistable({ ...standard, sideA: { ...symmetricSide, maxPlateWatts: 0.2 } });
    const aOn = stateWithOn(strict.states, "A");
    expect(aOn.sideA.overDissipation).toBe(true);
    expect(aOn.sideA.maxPlateWatts).toBe(0.2);
    expect(strict.warnings.some((warning) => warning.includes("side A dissipates"))).toBe(true);
  });
});

describe("symmetry", () => {
  for (const [name, circuit] of [
    ["asymmetric values, common cathode", asymmetric],
    ["separate cathode resistors", { ...asymmetric, cathode: { kind: "separate", sideAOhms: 1000, sideBOhms: 680 } }],
    ["pentode against triode", mixed],
  ] as const) {
    it(`swapping sides mirrors the states (${name})`, () => {
      const original = analyzeBistable(circuit as BistableCircuit);
      const swapped = analyzeBistable(swapSides(circuit as BistableCircuit));
      expect(original.bistable).toBe(true);
      expect(swapped.bistable).toBe(true);
      for (const side of ["A", "B"] as const) {
        const mine = stateWithOn(original.states, side);
        const theirs = stateWithOn(swapped.states, side === "A" ? "B" : "A");
        for (const field of ["plateVolts", "gridVolts", "cathodeVolts", "plateMilliamps", "gridMilliamps"] as const) {
          expect(theirs.sideB[field]).toBeCloseTo(mine.sideA[field], 6);
          expect(theirs.sideA[field]).toBeCloseTo(mine.sideB[field], 6);
        }
        expect(theirs.cutoffMarginVolts).toBeCloseTo(mine.cutoffMarginVolts as number, 6);
      }
      expect(swapped.loopGain).toBeCloseTo(original.loopGain as number, 4);
    });
  }
});

describe("circuits that do not latch", () => {
  it("says so when the coupling is too weak: one equilibrium, loop gain below 1", () => {
    const weakSide = { tube: twelveAU7, plateLoadOhms: 10e3, couplingOhms: 2.2e6, gridReturnOhms: 100e3 };
    const analysis = analyzeBistable({ bPlusVolts: 250, negativeRailVolts: -20, sideA: weakSide, sideB: weakSide });
    expect(analysis.bistable).toBe(false);
    expect(analysis.states).toHaveLength(1);
    expect(analysis.states[0].stable).toBe(true);
    expect(analysis.states[0].onSide).toBeNull();
    expect(analysis.loopGain).toBeLessThan(1);
    expect(analysis.levels).toBeNull();
    expect(analysis.reasons.some((reason) => reason.startsWith("only one equilibrium"))).toBe(true);
    expect(analysis.reasons.some((reason) => reason.includes("loop gain"))).toBe(true);
  });

  it("says so when it latches but the off side is not cut off", () => {
    const marginal = { tube: twelveAU7, plateLoadOhms: 10e3, couplingOhms: 1e6, gridReturnOhms: 100e3 };
    const analysis = analyzeBistable({ bPlusVolts: 250, negativeRailVolts: -20, sideA: marginal, sideB: marginal });
    expect(analysis.bistable).toBe(false);
    expect(analysis.states).toHaveLength(3);
    expect(analysis.loopGain).toBeGreaterThan(1);
    expect(analysis.levels?.cutoffMarginVolts).toBeLessThan(0);
    expect(analysis.reasons.some((reason) => reason.includes("is not cut off"))).toBe(true);
  });
});

describe("cathode arrangements", () => {
  for (const cathode of [
    { kind: "common", ohms: 2000 },
    { kind: "separate", sideAOhms: 1000, sideBOhms: 470 },
  ] as const) {
    it(`solves the ${cathode.kind} cathode consistently`, () => {
      const circuit: BistableCircuit = { ...standard, cathode };
      const analysis = analyzeBistable(circuit);
      expect(analysis.bistable).toBe(true);
      for (const state of analysis.states) expect(largestNodeImbalanceAmps(circuit, state)).toBeLessThan(1e-9);
      const aOn = stateWithOn(analysis.states, "A");
      expect(aOn.sideA.cathodeVolts).toBeGreaterThan(0);
      // Cathode bias lifts the on side's grid with its cathode: it still clamps just above it.
      expect(aOn.sideA.gridVolts - aOn.sideA.cathodeVolts).toBeGreaterThan(0);
      expect(aOn.sideA.gridVolts - aOn.sideA.cathodeVolts).toBeLessThan(1.5);
    });
  }
});

describe("a pentode against a triode", () => {
  const analysis = analyzeBistable(mixed);

  it("latches with both sides able to be on, every node balanced", () => {
    expect(analysis.bistable).toBe(true);
    for (const state of analysis.states) expect(largestNodeImbalanceAmps(mixed, state)).toBeLessThan(1e-9);
    expect(analysis.states.every((state) => state.sideA.screenVolts !== null && state.sideB.screenVolts === null)).toBe(true);
  });

  it("drops the screen through its resistor and pulls its plate lower than the triode does", () => {
    const pentodeOn = stateWithOn(analysis.states, "A");
    const triodeOn = stateWithOn(analysis.states, "B");
    expect(pentodeOn.sideA.screenVolts as number).toBeLessThan(250);
    expect(pentodeOn.sideA.screenMilliamps).toBeGreaterThan(0);
    // Fact of the trade: a pentode's plate current barely depends on its plate voltage above the knee,
    // so with the same load it saturates lower than a triode.
    expect(pentodeOn.lowLevelVolts as number).toBeLessThan(triodeOn.lowLevelVolts as number);
  });

  it("accepts a fixed screen voltage", () => {
    const fixedScreen: BistableCircuit = { ...mixed, sideA: { ...mixed.sideA, screen: { kind: "fixed", volts: 150 } } };
    const result = analyzeBistable(fixedScreen);
    expect(result.bistable).toBe(true);
    expect(result.states.every((state) => state.sideA.screenVolts === 150)).toBe(true);
    for (const state of result.states) expect(largestNodeImbalanceAmps(fixedScreen, state)).toBeLessThan(1e-9);
  });

  it("refuses a pentode without a screen supply", () => {
    const { screen: _unused, ...withoutScreen } = mixed.sideA;
    expect(() => analyzeBistable({ ...mixed, sideA: withoutScreen })).toThrow(RangeError);
  });
});

describe("robustness of the search", () => {
  it("finds the same three equilibria from very coarse first sweeps", () => {
    const reference = analyzeBistable(asymmetric);
    for (const sweepPoints of [4, 5, 7, 12, 100]) {
      const coarse = analyzeBistable(asymmetric, { sweepPoints });
      expect(coarse.states).toHaveLength(3);
      coarse.states.forEach((state, index) => {
        expect(state.sideA.plateVolts).toBeCloseTo(reference.states[index].sideA.plateVolts, 6);
        expect(state.sideB.plateVolts).toBeCloseTo(reference.states[index].sideB.plateVolts, 6);
      });
    }
  });

  it("handles far-off operating regions without losing states", () => {
    const sixSN7 = tubeElementFromModel(tubeModelLibrary["6SN7"]);
    const highVoltage: BistableCircuit = {
      bPlusVolts: 450,
      negativeRailVolts: -300,
      sideA: { tube: sixSN7, plateLoadOhms: 47e3, couplingOhms: 470e3, gridReturnOhms: 390e3 },
      sideB: { tube: sixSN7, plateLoadOhms: 47e3, couplingOhms: 470e3, gridReturnOhms: 390e3 },
      cathode: { kind: "common", ohms: 3300 },
    };
    const analysis = analyzeBistable(highVoltage);
    expect(analysis.bistable).toBe(true);
    for (const state of analysis.states) expect(largestNodeImbalanceAmps(highVoltage, state)).toBeLessThan(1e-9);
  });
});

describe("worn tubes", () => {
  const testPoint = { plateVolts: 250, gridVolts: -8.5 };
  const model = tubeModelLibrary["12AU7"];
  const worn = scaleModelToMeasuredTransconductance(model, testPoint, 0.7 * transconductanceMicroSiemens(model, testPoint).microSiemens);
  if (!worn.ok) throw new Error(worn.reason);
  const wornTube = tubeElementFromModel(worn.model);

  it("reduce swing and cut-off margin", () => {
    const fresh = analyzeBistable(standard);
    const tired = analyzeBistable({ ...standard, sideA: { ...symmetricSide, tube: wornTube }, sideB: { ...symmetricSide, tube: wornTube } });
    expect(tired.bistable).toBe(true);
    expect(tired.levels?.cutoffMarginVolts as number).toBeLessThan(fresh.levels?.cutoffMarginVolts as number);
    expect(tired.levels?.swingVolts as number).toBeLessThan(fresh.levels?.swingVolts as number);
    expect(tired.levels?.lowLevelVolts as number).toBeGreaterThan(fresh.levels?.lowLevelVolts as number);
  });

  it("on one side hurt the state in which that side is on", () => {
    const oneWorn = analyzeBistable({ ...standard, sideA: { ...symmetricSide, currentScale: worn.scale } });
    const wornOn = stateWithOn(oneWorn.states, "A");
    const freshOn = stateWithOn(oneWorn.states, "B");
    expect(wornOn.cutoffMarginVolts as number).toBeLessThan(freshOn.cutoffMarginVolts as number);
    expect(oneWorn.levels?.cutoffMarginVolts).toBe(wornOn.cutoffMarginVolts);
  });
});

describe("numerical failure", () => {
  it("returns not bistable with the solver's reason instead of throwing", () => {
    const broken = { ...twelveAU7, plateAmps: () => Number.NaN };
    const analysis = analyzeBistable({ ...standard, sideA: { ...symmetricSide, tube: broken }, sideB: { ...symmetricSide, tube: broken } });
    expect(analysis.bistable).toBe(false);
    expect(analysis.solverFailure).toBeDefined();
    expect(analysis.reasons[0]).toContain("the DC solver failed");
    expect(analysis.states).toEqual([]);
  });
});

describe("input checks", () => {
  it("throws on impossible values", () => {
    expect(() => analyzeBistable({ ...standard, bPlusVolts: 0 })).toThrow(RangeError);
    expect(() => analyzeBistable({ ...standard, sideA: { ...symmetricSide, plateLoadOhms: -1 } })).toThrow(RangeError);
    expect(() => analyzeBistable({ ...standard, cathode: { kind: "common", ohms: -5 } })).toThrow(RangeError);
    expect(() => analyzeBistable(standard, { cutoffFractionOfOnCurrent: 2 })).toThrow(RangeError);
  });
});
