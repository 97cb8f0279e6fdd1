import type { BistableCircuit, BistableState, SideOperatingPoint } from "../../../server/engine/bistable/index.ts";

/**
 * Independent check of a reported state: recomputes every tube current from the element
 * functions and returns the largest Kirchhoff current-law imbalance over all nodes, in amps.
 */
export function largestNodeImbalanceAmps(circuit: BistableCircuit, state: BistableState): number {
  const imbalances: number[] = [];
  const sides = [
    { spec: circuit.sideA, point: state.sideA, other: state.sideB },
    { spec: circuit.sideB, point: state.sideB, other: state.sideA },
  ];
  const cathodeAmps = (spec: BistableCircuit["sideA"], point: SideOperatingPoint) => {
    const scale = spec.currentScale ?? 1;
    const u = point.gridVolts - point.cathodeVolts;
    const x = point.screenVolts === null ? 0 : point.screenVolts - point.cathodeVolts;
    const plate = scale * spec.tube.plateAmps(point.plateVolts - point.cathodeVolts, u, x);
    const grid = spec.tube.gridAmps(u);
    const screen = spec.tube.hasScreen ? scale * spec.tube.screenAmps(u, x) : 0;
    return { plate, grid, screen, total: plate + grid + screen };
  };
  for (const { spec, point, other } of sides) {
    const own = cathodeAmps(spec, point);
    // Reported currents are the element's currents.
    imbalances.push(Math.abs(own.plate - point.plateMilliamps / 1000));
    imbalances.push(Math.abs(own.grid - point.gridMilliamps / 1000));
    imbalances.push(Math.abs(own.screen - point.screenMilliamps / 1000));
    // Plate node: load current in = tube current + coupling current out.
    imbalances.push(
      Math.abs(
        (circuit.bPlusVolts - point.plateVolts) / spec.plateLoadOhms -
          own.plate -
          (point.plateVolts - other.gridVolts) / spec.couplingOhms,
      ),
    );
    // The other side's grid node, fed by this side's divider.
    const otherSpec = spec === circuit.sideA ? circuit.sideB : circuit.sideA;
    const otherCurrents = cathodeAmps(otherSpec, other);
    imbalances.push(
      Math.abs(
        (point.plateVolts - other.gridVolts) / spec.couplingOhms -
          (other.gridVolts - circuit.negativeRailVolts) / spec.gridReturnOhms -
          otherCurrents.grid,
      ),
    );
    if (spec.screen?.kind === "resistor") {
      imbalances.push(Math.abs((spec.screen.supplyVolts - (point.screenVolts ?? 0)) / spec.screen.ohms - own.screen));
    }
    if (spec.screen?.kind === "fixed") imbalances.push(Math.abs((point.screenVolts ?? 0) - spec.screen.volts) / 1e6);
  }
  const cathode = circuit.cathode ?? { kind: "grounded" };
  const totalA = cathodeAmps(circuit.sideA, state.sideA).total;
  const totalB = cathodeAmps(circuit.sideB, state.sideB).total;
  // Cathode nodes, expressed as the current error through the resistor (volts over 1 MΩ when grounded).
  if (cathode.kind === "grounded") {
    imbalances.push(Math.abs(state.sideA.cathodeVolts) / 1e6, Math.abs(state.sideB.cathodeVolts) / 1e6);
  } else if (cathode.kind === "common") {
    imbalances.push(Math.abs(state.sideA.cathodeVolts / cathode.ohms - totalA - totalB));
    imbalances.push(Math.abs(state.sideB.cathodeVolts - state.sideA.cathodeVolts) / 1e6);
  } else {
    imbalances.push(Math.abs(state.sideA.cathodeVolts - cathode.sideAOhms * totalA) / Math.max(cathode.sideAOhms, 1));
    imbalances.push(Math.abs(state.sideB.cathodeVolts - cathode.sideBOhms * totalB) / Math.max(cathode.sideBOhms, 1));
  }
  return Math.max(...imbalances);
}
