import { describe, expect, it } from "vitest";
import { analyzeBistable, type BistableCircuit } from "../../../server/engine/bistable/index.ts";
import type { TubeElement } from "../../../server/engine/models/index.ts";
import { largestNodeImbalanceAmps } from "./kirchhoff-check.ts";

/**
 * An idealised linear tube: Ip = gm·(Vg + Vp/µ) while positive, no grid current.
 * With gm = 2 mA/V, µ = 20, RL = 20 kΩ, R1 = 200 kΩ, R2 = 100 kΩ, B+ = 200 V, rail −100 V,
 * every equilibrium follows by hand (brute force on the linear node equations):
 *  - off plate: B+ through RL into R1 + R2 to the rail: (200·300k − 100·20k)/320k = 181.25 V;
 *    on grid: −100 + 281.25/3 = −6.25 V.
 *  - on plate p: 15(200 − p) = 600(−6.25 + p/20) + p + 100 ⇒ p = 6650/46 = 144.5652 V,
 *    Ip = 2 mA·(−6.25 + p/20) = 1.956522 mA; off grid −100 + (p + 100)/3 = −18.47826 V.
 *  - balanced point P: 15(200 − P) = 600(−100 + (P + 100)/3 + P/20) + P + 100 ⇒ P = 42900/246 = 174.3902 V,
 *    grid −8.536585 V, Ip = 0.365854 mA.
 *  - stage gain: −(R2/(R1+R2))·gm·Rp/(1 + gm·Rp/µ), Rp = RL‖(R1+R2) = 18.75 kΩ ⇒ −4.347826; loop gain 18.90359.
 *  - return ratio at B's plate current: (gm·Rp/3)²/(1 + gm·Rp/µ) − gm·Rp/µ = 52.47283.
 *  - cut-off margin: cut-off grid at 1 % of the on current is 1.956522e-5/2e-3 − 181.25/20 = −9.052717 V,
 *    so the margin is −9.052717 + 18.478261 = 9.425543 V.
 */
const linearTube: TubeElement = {
  designation: "linear test element",
  hasScreen: false,
  plateAmps: (plateVolts, gridVolts) => (plateVolts <= 0 ? 0 : 2e-3 * Math.max(0, gridVolts + plateVolts / 20)),
  screenAmps: () => 0,
  gridAmps: () => 0,
  outsideValidity: () => false,
};
const side = { tube: linearTube, plateLoadOhms: 20e3, couplingOhms: 200e3, gridReturnOhms: 100e3 };
const circuit: BistableCircuit = { bPlusVolts: 200, negativeRailVolts: -100, sideA: side, sideB: side };

describe("bistable solver on a piecewise-linear element with hand-computed equilibria", () => {
  const analysis = analyzeBistable(circuit);

  it("finds the two stable states and the balanced unstable one", () => {
    expect(analysis.bistable).toBe(true);
    expect(analysis.reasons).toEqual([]);
    expect(analysis.states.map((state) => [state.onSide, state.stable])).toEqual([
      ["A", true],
      ["B", true],
      [null, false],
    ]);
    const [aOn, bOn, balanced] = analysis.states;
    expect(aOn.sideA.plateVolts).toBeCloseTo(144.5652174, 5);
    expect(aOn.sideB.plateVolts).toBeCloseTo(181.25, 5);
    expect(aOn.sideA.gridVolts).toBeCloseTo(-6.25, 5);
    expect(aOn.sideB.gridVolts).toBeCloseTo(-18.4782609, 5);
    expect(aOn.sideA.plateMilliamps).toBeCloseTo(1.9565217, 6);
    expect(aOn.sideB.plateMilliamps).toBe(0);
    expect(bOn.sideB.plateVolts).toBeCloseTo(144.5652174, 5);
    expect(bOn.sideA.plateVolts).toBeCloseTo(181.25, 5);
    expect(balanced.sideA.plateVolts).toBeCloseTo(174.3902439, 5);
    expect(balanced.sideB.gridVolts).toBeCloseTo(-8.5365854, 5);
    expect(balanced.sideA.plateMilliamps).toBeCloseTo(0.3658537, 6);
  });

  it("reports levels, swing and the cut-off margin", () => {
    expect(analysis.levels?.highLevelVolts).toBeCloseTo(181.25, 5);
    expect(analysis.levels?.lowLevelVolts).toBeCloseTo(144.5652174, 5);
    expect(analysis.levels?.swingVolts).toBeCloseTo(181.25 - 144.5652174, 5);
    expect(analysis.levels?.cutoffMarginVolts).toBeCloseTo(9.4255435, 5);
    expect(analysis.states[0].cutoffGridVolts).toBeCloseTo(-9.0527174, 5);
    expect(analysis.levels?.onGridMilliamps).toBe(0);
  });

  it("reports the loop gain as the product of the signed stage gains and the return ratios", () => {
    expect(analysis.stageGains?.aToB).toBeCloseTo(-4.3478261, 5);
    expect(analysis.stageGains?.bToA).toBeCloseTo(-4.3478261, 5);
    expect(analysis.loopGain).toBeCloseTo(18.9035917, 4);
    expect(analysis.states[2].returnRatio).toBeCloseTo(52.4728261, 3);
    expect(analysis.states[0].returnRatio).toBeLessThan(1);
    expect(analysis.states[1].returnRatio).toBeLessThan(1);
  });

  it("satisfies Kirchhoff's current law at every node of every state", () => {
    for (const state of analysis.states) expect(largestNodeImbalanceAmps(circuit, state)).toBeLessThan(1e-9);
  });

  it("cuts off at a stated fraction of the on current", () => {
    // Same hand calculation at 5 %: 0.05 × 1.956522 mA ÷ 2 mA/V − 181.25/20 = −9.013587 V.
    const loose = analyzeBistable(circuit, { cutoffFractionOfOnCurrent: 0.05 });
    expect(loose.states[0].cutoffGridVolts).toBeCloseTo(-9.0135870, 5);
    expect(loose.cutoffDefinition).toContain("5 %");
  });
});
