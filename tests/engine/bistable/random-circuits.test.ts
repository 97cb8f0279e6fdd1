import { describe, expect, it } from "vitest";
import { analyzeBistable, preferredValuesInRange, type BistableCircuit } from "../../../server/engine/bistable/index.ts";
import { tubeElementFromModel, tubeModelLibrary } from "../../../server/engine/models/index.ts";
import { largestNodeImbalanceAmps } from "./kirchhoff-check.ts";

/** A small linear congruential generator so the circuits are the same on every run. */
function generator(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648;
  };
}

function randomCircuits(count: number, seed: number): BistableCircuit[] {
  const uniform = generator(seed);
  const pick = <T,>(items: T[]): T => items[Math.floor(uniform() * items.length)];
  const loads = preferredValuesInRange("E12", 4_700, 220_000);
  const dividers = preferredValuesInRange("E12", 47_000, 2_200_000);
  const types = ["12AU7", "12AX7", "12AT7", "6SN7", "EL34", "6L6GC"];
  const side = () => {
    const tube = tubeElementFromModel(tubeModelLibrary[pick(types)]);
    const screen = !tube.hasScreen
      ? undefined
      : uniform() < 0.5
        ? { kind: "fixed" as const, volts: 100 + 150 * uniform() }
        : { kind: "resistor" as const, supplyVolts: 250, ohms: pick(dividers) };
    return { tube, plateLoadOhms: pick(loads), couplingOhms: pick(dividers), gridReturnOhms: pick(dividers), screen };
  };
  const circuits: BistableCircuit[] = [];
  for (let index = 0; index < count; index++) {
    const choice = uniform();
    const cathode =
      choice < 0.33
        ? undefined
        : choice < 0.66
          ? { kind: "common" as const, ohms: pick([470, 1000, 2200, 4700]) }
          : { kind: "separate" as const, sideAOhms: pick([0, 470, 1000, 2200]), sideBOhms: pick([0, 470, 1000]) };
    circuits.push({ bPlusVolts: 150 + 250 * uniform(), negativeRailVolts: -200 * uniform(), sideA: side(), sideB: side(), cathode });
  }
  return circuits;
}

describe("random circuits (brute-force checks)", () => {
  const circuits = randomCircuits(40, 2024);
  // The pentode pair on a shared cathode, fixed screens: the case that needs the plane search.
  const twoPentodes: BistableCircuit = {
    bPlusVolts: 163.4,
    negativeRailVolts: -140.9,
    sideA: {
      tube: tubeElementFromModel(tubeModelLibrary.EL34),
      plateLoadOhms: 22e3,
      couplingOhms: 47e3,
      gridReturnOhms: 68e3,
      screen: { kind: "fixed", volts: 204.6 },
    },
    sideB: {
      tube: tubeElementFromModel(tubeModelLibrary.EL34),
      plateLoadOhms: 56e3,
      couplingOhms: 100e3,
      gridReturnOhms: 330e3,
      screen: { kind: "fixed", volts: 216.1 },
    },
    cathode: { kind: "common", ohms: 4700 },
  };

  it("every reported state satisfies Kirchhoff's current law at every node", () => {
    for (const circuit of [...circuits, twoPentodes]) {
      const analysis = analyzeBistable(circuit);
      expect(analysis.solverFailure).toBeUndefined();
      for (const state of analysis.states) expect(largestNodeImbalanceAmps(circuit, state)).toBeLessThan(1e-9);
    }
  });

  it("finds an odd number of equilibria, as a continuous loop must have", () => {
    for (const circuit of [...circuits, twoPentodes]) expect(analyzeBistable(circuit).states.length % 2).toBe(1);
  });

  it("agrees with a 1500-cell sweep", () => {
    for (const circuit of circuits.slice(0, 20)) {
      const coarse = analyzeBistable(circuit);
      const dense = analyzeBistable(circuit, { sweepPoints: 1500 });
      expect(coarse.states.length).toBe(dense.states.length);
      coarse.states.forEach((state, index) => {
        expect(state.sideA.plateVolts).toBeCloseTo(dense.states[index].sideA.plateVolts, 5);
        expect(state.sideB.plateVolts).toBeCloseTo(dense.states[index].sideB.plateVolts, 5);
      });
    }
  });

  it("alternates stable and unstable states along a bistable pair", () => {
    const analysis = analyzeBistable(twoPentodes);
    expect(analysis.states).toHaveLength(3);
    expect(analysis.states.filter((state) => state.stable)).toHaveLength(2);
    expect(analysis.states[2].stable).toBe(false);
  });
});
