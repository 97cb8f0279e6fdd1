import { CircuitModel, type Equilibrium, type SideModel, type SideNodes } from "./circuit-solver.ts";
import { SolverError } from "./root-finding.ts";
import type {
  AnalyzeBistableOptions,
  BistableAnalysis,
  BistableCircuit,
  BistableLevels,
  BistableState,
  SideOperatingPoint,
} from "./types.ts";

const DEFAULT_SWEEP_POINTS = 32;
const MIN_SWEEP_POINTS = 4;
const DEFAULT_CUTOFF_FRACTION = 0.01;
/** Plate currents within this fraction of each other count as balanced. */
const BALANCED_FRACTION = 0.01;

function operatingPoint(side: SideModel, nodes: SideNodes): SideOperatingPoint {
  const plateToCathode = nodes.plate - nodes.cathode;
  const plateWatts = nodes.plateAmps * plateToCathode;
  const screenToCathode = side.screen === null ? 0 : nodes.screen - nodes.cathode;
  return {
    plateVolts: nodes.plate,
    gridVolts: nodes.grid,
    cathodeVolts: nodes.cathode,
    screenVolts: side.screen === null ? null : nodes.screen,
    plateMilliamps: 1000 * nodes.plateAmps,
    screenMilliamps: 1000 * nodes.screenAmps,
    gridMilliamps: 1000 * nodes.gridAmps,
    cathodeMilliamps: 1000 * (nodes.plateAmps + nodes.gridAmps + nodes.screenAmps),
    plateWatts,
    maxPlateWatts: side.maxPlateWatts,
    overDissipation: side.maxPlateWatts !== null && plateWatts > side.maxPlateWatts,
    outsideValidity: side.tube.outsideValidity(plateToCathode, nodes.grid - nodes.cathode, screenToCathode),
  };
}

function buildState(model: CircuitModel, equilibrium: Equilibrium, cutoffFraction: number): BistableState {
  const { point, returnRatio, stable } = equilibrium;
  const sideA = operatingPoint(model.sideA, point.a);
  const sideB = operatingPoint(model.sideB, point.b);
  const base: BistableState = {
    stable,
    onSide: null,
    sideA,
    sideB,
    highLevelVolts: null,
    lowLevelVolts: null,
    swingVolts: null,
    cutoffGridVolts: null,
    cutoffMarginVolts: null,
    onGridMilliamps: null,
    returnRatio,
  };
  const larger = Math.max(point.a.plateAmps, point.b.plateAmps);
  // A balanced stable state (both sides at the same current) has no on side.
  if (!stable || Math.abs(point.a.plateAmps - point.b.plateAmps) <= BALANCED_FRACTION * larger) return base;
  const onSide = point.a.plateAmps > point.b.plateAmps ? "A" : "B";
  const [on, off, offSide, offNodes] =
    onSide === "A" ? [sideA, sideB, model.sideB, point.b] : [sideB, sideA, model.sideA, point.a];
  const cutoffGrid = model.cutoffGridVolts(offSide, offNodes, (cutoffFraction * on.plateMilliamps) / 1000);
  const actualGrid = offNodes.grid - offNodes.cathode;
  return {
    ...base,
    onSide,
    highLevelVolts: off.plateVolts,
    lowLevelVolts: on.plateVolts,
    swingVolts: off.plateVolts - on.plateVolts,
    cutoffGridVolts: cutoffGrid,
    cutoffMarginVolts: cutoffGrid === null ? Number.POSITIVE_INFINITY : cutoffGrid - actualGrid,
    onGridMilliamps: on.gridMilliamps,
  };
}

function format(value: number, digits = 2): string {
  const text = value.toFixed(digits);
  // A value that rounds to zero prints as 0, not "-0.00".
  return Number(text) === 0 ? (0).toFixed(digits) : text;
}

function sideOrder(state: BistableState): number {
  return state.onSide === "A" ? 0 : state.onSide === "B" ? 1 : 2;
}

function describeState(state: BistableState): string {
  return (
    `A plate ${format(state.sideA.plateVolts, 1)} V at ${format(state.sideA.plateMilliamps)} mA, ` +
    `B plate ${format(state.sideB.plateVolts, 1)} V at ${format(state.sideB.plateMilliamps)} mA`
  );
}

/**
 * Implements analyzeBistable (documented in index.ts).
 * Throws RangeError on an impossible circuit description; solver failures come back as
 * bistable false with solverFailure set.
 */
export function analyzeBistableImpl(circuit: BistableCircuit, options: AnalyzeBistableOptions = {}): BistableAnalysis {
  const sweepPoints = Math.max(MIN_SWEEP_POINTS, Math.round(options.sweepPoints ?? DEFAULT_SWEEP_POINTS));
  const cutoffFraction = options.cutoffFractionOfOnCurrent ?? DEFAULT_CUTOFF_FRACTION;
  if (!(cutoffFraction > 0 && cutoffFraction < 1)) throw new RangeError("cutoffFractionOfOnCurrent must be between 0 and 1");
  const cutoffDefinition =
    `the off side counts as cut off when its plate current, at its own plate and screen voltages, is below ` +
    `${cutoffFraction * 100} % of the on side's plate current; the margin is how far its grid sits below that grid voltage`;
  const model = new CircuitModel(circuit);
  try {
    return analyzeWithModel(model, sweepPoints, cutoffFraction, cutoffDefinition);
  } catch (error) {
    if (!(error instanceof SolverError)) throw error;
    return {
      bistable: false,
      reasons: [`the DC solver failed: ${error.message}`],
      warnings: [],
      states: [],
      levels: null,
      loopGain: null,
      stageGains: null,
      cutoffDefinition,
      solverFailure: error.message,
    };
  }
}

function analyzeWithModel(
  model: CircuitModel,
  sweepPoints: number,
  cutoffFraction: number,
  cutoffDefinition: string,
): BistableAnalysis {
  const solved = model
    .solveEquilibria(sweepPoints)
    .map((equilibrium) => ({ point: equilibrium.point, state: buildState(model, equilibrium, cutoffFraction) }));
  const stableOnes = solved.filter((entry) => entry.state.stable);
  const unstableOnes = solved.filter((entry) => !entry.state.stable);
  stableOnes.sort((first, second) => sideOrder(first.state) - sideOrder(second.state));
  const states = [...stableOnes, ...unstableOnes].map((entry) => entry.state);

  const reasons: string[] = [];
  const warnings: string[] = [];
  // The loop gain belongs to the unstable state; with a single state it explains why nothing latches.
  const gainSource = unstableOnes[0] ?? (solved.length === 1 ? solved[0] : undefined);
  let stageGains: { aToB: number; bToA: number } | null = null;
  let loopGain: number | null = null;
  if (gainSource) {
    stageGains = { aToB: model.stageGain("A", gainSource.point), bToA: model.stageGain("B", gainSource.point) };
    loopGain = stageGains.aToB * stageGains.bToA;
  }

  const aOn = stableOnes.find((entry) => entry.state.onSide === "A");
  const bOn = stableOnes.find((entry) => entry.state.onSide === "B");
  if (solved.length === 1) {
    reasons.push(`only one equilibrium: ${describeState(solved[0].state)}`);
  } else if (!aOn || !bOn) {
    reasons.push(
      `${solved.length} equilibria but not one stable state with each side on (stable states: ${stableOnes.length})`,
    );
  }
  if (loopGain !== null && loopGain < 1) {
    reasons.push(
      `loop gain ${format(loopGain)} < 1 at the ${unstableOnes.length > 0 ? "unstable" : "only"} equilibrium: ` +
        `the coupling cannot hold one side cut off`,
    );
  }
  for (const entry of aOn && bOn ? stableOnes : []) {
    const { state } = entry;
    if (state.cutoffMarginVolts !== null && state.cutoffMarginVolts < 0) {
      const offSide = state.onSide === "A" ? "B" : "A";
      reasons.push(
        `with side ${state.onSide} on, side ${offSide} is not cut off: its grid is ` +
          `${format(-state.cutoffMarginVolts)} V above the cut-off grid voltage`,
      );
    }
  }
  for (const state of states) {
    const label = state.onSide ? `state with side ${state.onSide} on` : state.stable ? "balanced state" : "unstable state";
    for (const [name, side] of [
      ["A", state.sideA],
      ["B", state.sideB],
    ] as const) {
      if (side.overDissipation) {
        warnings.push(
          `${label}: side ${name} dissipates ${format(side.plateWatts)} W on its plate, over its ${side.maxPlateWatts} W rating`,
        );
      }
      const conducting = state.onSide === null || state.onSide === name;
      if (side.outsideValidity && conducting) {
        warnings.push(`${label}: side ${name}'s tube model is used outside the range its parameters were fitted over`);
      }
    }
  }

  let levels: BistableLevels | null = null;
  if (aOn && bOn) {
    const pair = [aOn.state, bOn.state];
    levels = {
      highLevelVolts: Math.min(...pair.map((state) => state.highLevelVolts as number)),
      lowLevelVolts: Math.max(...pair.map((state) => state.lowLevelVolts as number)),
      swingVolts: Math.min(...pair.map((state) => state.swingVolts as number)),
      cutoffMarginVolts: Math.min(...pair.map((state) => state.cutoffMarginVolts as number)),
      onGridMilliamps: Math.max(...pair.map((state) => state.onGridMilliamps as number)),
    };
  }
  return {
    bistable: reasons.length === 0,
    reasons,
    warnings,
    states,
    levels,
    loopGain,
    stageGains,
    cutoffDefinition,
  };
}
