import { describe, expect, it } from "vitest";
import { analyzeBistable, type BistableCircuit, type BistableState } from "../../../server/engine/bistable/index.ts";
import { tubeElementFromModel, tubeModelLibrary } from "../../../server/engine/models/index.ts";
import { largestNodeImbalanceAmps } from "./kirchhoff-check.ts";

/**
 * A pentode against a triode on one shared cathode resistor: an EL34 (Koren pentode equations)
 * on side A with its screen fed through 47 kΩ, a 12AU7 on side B. No check value below comes
 * from an earlier run of the solver: each state is checked against Kirchhoff's current law
 * recomputed from the element functions, against a brute-force 1500-cell sweep, and against
 * the stated definition of the cut-off margin.
 */
const twelveAU7 = tubeElementFromModel(tubeModelLibrary["12AU7"]);
const el34 = tubeElementFromModel(tubeModelLibrary.EL34);
const triodeSide = { tube: twelveAU7, plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 220e3 };
const resistorScreen: BistableCircuit = {
  bPlusVolts: 250,
  negativeRailVolts: -150,
  sideA: { ...triodeSide, tube: el34, screen: { kind: "resistor", supplyVolts: 250, ohms: 47e3 } },
  sideB: triodeSide,
  cathode: { kind: "common", ohms: 2000 },
};
const fixedScreen: BistableCircuit = {
  ...resistorScreen,
  sideA: { ...resistorScreen.sideA, screen: { kind: "fixed", volts: 200 } },
};

const NODE_FIELDS = ["plateVolts", "gridVolts", "cathodeVolts", "plateMilliamps", "gridMilliamps", "screenMilliamps"] as const;

function expectSameStates(actual: BistableState[], reference: BistableState[], digits: number): void {
  expect(actual.map((state) => [state.stable, state.onSide])).toEqual(reference.map((state) => [state.stable, state.onSide]));
  actual.forEach((state, index) => {
    for (const side of ["sideA", "sideB"] as const) {
      for (const field of NODE_FIELDS) expect(state[side][field]).toBeCloseTo(reference[index][side][field], digits);
    }
    if (reference[index].cutoffMarginVolts !== null) {
      expect(state.cutoffMarginVolts as number).toBeCloseTo(reference[index].cutoffMarginVolts as number, digits);
    }
  });
}

describe("an EL34 against a 12AU7 on a shared cathode resistor", () => {
  for (const [name, circuit] of [
    ["screen through a resistor", resistorScreen],
    ["fixed screen voltage", fixedScreen],
  ] as const) {
    describe(name, () => {
      const analysis = analyzeBistable(circuit);

      it("latches with a stable state for each side and one unstable state between them", () => {
        expect(analysis.bistable).toBe(true);
        expect(analysis.states.map((state) => [state.onSide, state.stable])).toEqual([
          ["A", true],
          ["B", true],
          [null, false],
        ]);
      });

      it("balances Kirchhoff's current law at every node of every state", () => {
        // Source: Kirchhoff's current law, recomputed from the element functions (kirchhoff-check.ts).
        for (const state of analysis.states) expect(largestNodeImbalanceAmps(circuit, state)).toBeLessThan(1e-9);
        for (const state of analysis.states) expect(state.sideA.cathodeVolts).toBe(state.sideB.cathodeVolts);
      });

      it("agrees with a brute-force 1500-cell sweep", () => {
        // Source: brute force — the same circuit swept in 1500 cells instead of 32.
        expectSameStates(analysis.states, analyzeBistable(circuit, { sweepPoints: 1500 }).states, 5);
      });

      it("finds the same states from very coarse and finer first sweeps", () => {
        // Source: brute force — sweeps of other sizes meet other currents on the way to the same roots.
        for (const sweepPoints of [4, 7, 12, 100]) expectSameStates(analyzeBistable(circuit, { sweepPoints }).states, analysis.states, 6);
      });

      it("puts the off side's cut-off grid where its plate current is 1 % of the on side's", () => {
        // Source: the cut-off definition stated in cutoffDefinition, checked with the element's own plate law.
        for (const state of analysis.states.filter((candidate) => candidate.onSide !== null)) {
          const [on, off, offTube] =
            state.onSide === "A" ? [state.sideA, state.sideB, twelveAU7] : [state.sideB, state.sideA, el34];
          const screenToCathode = off.screenVolts === null ? 0 : off.screenVolts - off.cathodeVolts;
          const cutoffGrid = state.cutoffGridVolts as number;
          const plateAmps = offTube.plateAmps(off.plateVolts - off.cathodeVolts, cutoffGrid, screenToCathode);
          expect((1000 * plateAmps) / on.plateMilliamps).toBeCloseTo(0.01, 8);
          expect(state.cutoffMarginVolts as number).toBeCloseTo(cutoffGrid - (off.gridVolts - off.cathodeVolts), 10);
          expect(state.cutoffMarginVolts as number).toBeGreaterThan(0);
        }
      });
    });
  }
});
