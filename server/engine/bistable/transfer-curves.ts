/**
 * Transfer curves of a cross-coupled pair, for drawing: for each side, the grid voltage it
 * produces on the other side as a function of its own grid voltage, with that grid held by an
 * ideal source. Every node equation of the circuit holds on a curve except the one at the held
 * grid, so the two curves cross exactly at the circuit's equilibria.
 *
 * Method: with both grids held, every other node follows from nested monotone solves (screen,
 * plate, then cathode). The two grid-node residuals are evaluated over a square grid of grid
 * voltages; each curve is the zero contour of one residual (marching squares), every contour
 * crossing of a cell edge solved exactly. Contours, unlike a function of one grid, also follow a
 * curve that folds back (a shared cathode resistor can make one half latch on its own).
 *
 * Named tolerances and iteration caps; a point that cannot be solved is reported, never invented.
 */
import type { BistableCircuit, BistableSide, CathodeCircuit } from "./types.ts";
import { brentRoot, SolverError } from "./root-finding.ts";

/** Node voltages are solved to this. */
const ROOT_TOLERANCE_VOLTS = 1e-6;
/** Brent iterations per root before giving up on that point. */
const ROOT_ITERATION_CAP = 200;
/** Cells per axis of the grid the contours are traced on; each crossing is then solved exactly. */
const GRID_CELLS = 40;


/**
 * Root inside a bracket the circuit guarantees. Both ends with one sign can then only come from
 * rounding at an end where f is all but zero (a cut-off tube), so that end is the root.
 */
function rootOrThrow(f: (x: number) => number, low: number, high: number): number {
  const atLow = f(low);
  const atHigh = f(high);
  if (Math.sign(atLow) === Math.sign(atHigh)) return Math.abs(atLow) <= Math.abs(atHigh) ? low : high;
  return brentRoot(f, low, high, atLow, atHigh, ROOT_TOLERANCE_VOLTS, ROOT_ITERATION_CAP, "transfer curve");
}

interface SideSolution {
  plateVolts: number;
  /** Plate + screen + grid current, amps. */
  cathodeAmps: number;
}

/** One side with its cathode, its own grid and the other grid fixed: screen node, then plate node (both monotone). */
function solveSide(side: BistableSide, bPlusVolts: number, cathodeVolts: number, gridVolts: number, otherGridVolts: number): SideSolution {
  const { tube } = side;
  const scale = side.currentScale ?? 1;
  const gridToCathode = gridVolts - cathodeVolts;
  let screenVolts = cathodeVolts;
  if (tube.hasScreen && side.screen) {
    const screen = side.screen;
    if (screen.kind === "fixed") screenVolts = screen.volts;
    else {
      const residual = (volts: number) => (screen.supplyVolts - volts) / screen.ohms - scale * tube.screenAmps(gridToCathode, volts - cathodeVolts);
      screenVolts = rootOrThrow(residual, Math.min(cathodeVolts, screen.supplyVolts), screen.supplyVolts);
    }
  }
  const screenToCathode = screenVolts - cathodeVolts;
  const screenAmps = tube.hasScreen ? scale * tube.screenAmps(gridToCathode, screenToCathode) : 0;
  // Current in from the load equals tube current plus current into the divider; falls as the plate rises.
  const plateResidual = (plateVolts: number) =>
    (bPlusVolts - plateVolts) / side.plateLoadOhms -
    scale * tube.plateAmps(plateVolts - cathodeVolts, gridToCathode, screenToCathode) -
    (plateVolts - otherGridVolts) / side.couplingOhms;
  const plateVolts = rootOrThrow(plateResidual, Math.min(cathodeVolts, otherGridVolts, bPlusVolts), Math.max(bPlusVolts, otherGridVolts));
  const plateAmps = scale * tube.plateAmps(plateVolts - cathodeVolts, gridToCathode, screenToCathode);
  return { plateVolts, cathodeAmps: plateAmps + screenAmps + tube.gridAmps(gridToCathode) };
}

interface PairSolution {
  sideA: SideSolution & { cathodeVolts: number };
  sideB: SideSolution & { cathodeVolts: number };
}

/** Both grids fixed: solve the cathode node(s); each cathode residual rises with its voltage. */
function solveWithGrids(circuit: BistableCircuit, gridA: number, gridB: number): PairSolution {
  const { bPlusVolts, sideA, sideB } = circuit;
  const cathode: CathodeCircuit = circuit.cathode ?? { kind: "grounded" };
  const at = (side: BistableSide, cathodeVolts: number, grid: number, otherGrid: number) => ({
    ...solveSide(side, bPlusVolts, cathodeVolts, grid, otherGrid),
    cathodeVolts,
  });
  const ownCathode = (side: BistableSide, ohms: number, grid: number, otherGrid: number) => {
    if (!(ohms > 0)) return at(side, 0, grid, otherGrid);
    const highest = ohms * at(side, 0, grid, otherGrid).cathodeAmps;
    if (!(highest > 0)) return at(side, 0, grid, otherGrid);
    const volts = rootOrThrow((v) => v - ohms * at(side, v, grid, otherGrid).cathodeAmps, 0, highest);
    return at(side, volts, grid, otherGrid);
  };
  if (cathode.kind === "grounded") return { sideA: at(sideA, 0, gridA, gridB), sideB: at(sideB, 0, gridB, gridA) };
  if (cathode.kind === "separate") {
    return { sideA: ownCathode(sideA, cathode.sideAOhms, gridA, gridB), sideB: ownCathode(sideB, cathode.sideBOhms, gridB, gridA) };
  }
  const total = (v: number) => at(sideA, v, gridA, gridB).cathodeAmps + at(sideB, v, gridB, gridA).cathodeAmps;
  const highest = cathode.ohms * total(0);
  const volts = highest > 0 ? rootOrThrow((v) => v - cathode.ohms * total(v), 0, highest) : 0;
  return { sideA: at(sideA, volts, gridA, gridB), sideB: at(sideB, volts, gridB, gridA) };
}

/** Kirchhoff at both grid nodes with both grids held: current in from the coupling resistor minus what leaves. */
function gridResiduals(circuit: BistableCircuit, gridA: number, gridB: number): { atGridA: number; atGridB: number } {
  const solution = solveWithGrids(circuit, gridA, gridB);
  const { sideA, sideB, negativeRailVolts } = circuit;
  return {
    atGridB:
      (solution.sideA.plateVolts - gridB) / sideA.couplingOhms -
      (gridB - negativeRailVolts) / sideA.gridReturnOhms -
      sideB.tube.gridAmps(gridB - solution.sideB.cathodeVolts),
    atGridA:
      (solution.sideB.plateVolts - gridA) / sideB.couplingOhms -
      (gridA - negativeRailVolts) / sideB.gridReturnOhms -
      sideA.tube.gridAmps(gridA - solution.sideA.cathodeVolts),
  };
}

type Field = "atGridA" | "atGridB";

/**
 * The zero contour of one grid-node residual over the square [low, high]², by marching squares
 * on the precomputed corner values, each edge crossing refined onto the contour by Brent.
 */
function contour(
  circuit: BistableCircuit,
  field: Field,
  volts: number[],
  values: Float64Array,
): { polylines: Array<Array<{ gridAVolts: number; gridBVolts: number }>>; unsolvedCrossings: number } {
  const n = volts.length;
  const at = (i: number, j: number) => values[i * n + j];
  const crossings = new Map<string, { gridAVolts: number; gridBVolts: number } | null>();
  let unsolvedCrossings = 0;
  // Edge keys: "h:i:j" runs from (i, j) to (i + 1, j) along side A's grid; "v:i:j" from (i, j) to (i, j + 1).
  const crossing = (key: string): { gridAVolts: number; gridBVolts: number } | null => {
    if (crossings.has(key)) return crossings.get(key) ?? null;
    const [kind, iText, jText] = key.split(":");
    const i = Number(iText);
    const j = Number(jText);
    const horizontal = kind === "h";
    const startValue = at(i, j);
    const endValue = horizontal ? at(i + 1, j) : at(i, j + 1);
    const f = horizontal
      ? (x: number) => gridResiduals(circuit, x, volts[j])[field]
      : (y: number) => gridResiduals(circuit, volts[i], y)[field];
    let point: { gridAVolts: number; gridBVolts: number } | null = null;
    try {
      const root = brentRoot(f, horizontal ? volts[i] : volts[j], horizontal ? volts[i + 1] : volts[j + 1], startValue, endValue, ROOT_TOLERANCE_VOLTS, ROOT_ITERATION_CAP, "transfer curve");
      point = horizontal ? { gridAVolts: root, gridBVolts: volts[j] } : { gridAVolts: volts[i], gridBVolts: root };
    } catch (error) {
      if (!(error instanceof SolverError)) throw error;
    }
    if (point === null) unsolvedCrossings++;
    crossings.set(key, point);
    return point;
  };
  const changes = (first: number, second: number) => Number.isFinite(first) && Number.isFinite(second) && (first > 0) !== (second > 0);

  // Segments between edge keys, then chained into polylines through the shared keys.
  const neighbours = new Map<string, string[]>();
  const link = (from: string, to: string) => {
    if (!crossing(from) || !crossing(to)) return;
    neighbours.set(from, [...(neighbours.get(from) ?? []), to]);
    neighbours.set(to, [...(neighbours.get(to) ?? []), from]);
  };
  for (let i = 0; i + 1 < n; i++) {
    for (let j = 0; j + 1 < n; j++) {
      const corners = [at(i, j), at(i + 1, j), at(i + 1, j + 1), at(i, j + 1)];
      if (!corners.every(Number.isFinite)) continue;
      const edges: string[] = [];
      if (changes(corners[0], corners[1])) edges.push(`h:${i}:${j}`);
      if (changes(corners[1], corners[2])) edges.push(`v:${i + 1}:${j}`);
      if (changes(corners[3], corners[2])) edges.push(`h:${i}:${j + 1}`);
      if (changes(corners[0], corners[3])) edges.push(`v:${i}:${j}`);
      if (edges.length === 2) link(edges[0], edges[1]);
      else if (edges.length === 4) {
        // Saddle: the mean of the corners decides which corners the contour separates.
        const centreAbove = (corners[0] + corners[1] + corners[2] + corners[3]) / 4 > 0;
        if (centreAbove === corners[0] > 0) {
          link(edges[0], edges[1]);
          link(edges[2], edges[3]);
        } else {
          link(edges[0], edges[3]);
          link(edges[1], edges[2]);
        }
      }
    }
  }
  const visited = new Set<string>();
  const polylines: Array<Array<{ gridAVolts: number; gridBVolts: number }>> = [];
  const walk = (start: string) => {
    const keys = [start];
    visited.add(start);
    let current = start;
    for (;;) {
      const next = (neighbours.get(current) ?? []).find((key) => !visited.has(key));
      if (next === undefined) break;
      visited.add(next);
      keys.push(next);
      current = next;
    }
    return keys;
  };
  // Open chains start at an end (one neighbour); closed loops at any unvisited key.
  for (const key of neighbours.keys()) if (!visited.has(key) && (neighbours.get(key) ?? []).length === 1) polylines.push(walk(key).map((k) => crossing(k)!));
  for (const key of neighbours.keys()) if (!visited.has(key)) polylines.push(walk(key).map((k) => crossing(k)!));
  return { polylines, unsolvedCrossings };
}

export interface TransferCurve {
  /** "A": the side-B grid that side A produces (all but side A's grid node balanced); "B" the other way round. */
  drivingSide: "A" | "B";
  /** Polylines in the plane of (side A grid, side B grid), volts to ground. */
  polylines: Array<Array<{ gridAVolts: number; gridBVolts: number }>>;
}

export interface TransferCurvesResult {
  curveA: TransferCurve;
  curveB: TransferCurve;
  /** Grid corners and edge crossings whose solve hit an iteration cap (left out of the drawing). */
  unsolvedPoints: number;
  /** Node solves spent, for the benchmark. */
  gridCells: number;
}

/**
 * Both transfer curves over the square of grid voltages [lowVolts, highVolts]² (side A's grid
 * across, side B's up). Throws RangeError for an empty range or fewer than 4 cells. A point whose
 * solve hits an iteration cap is left out and counted in `unsolvedPoints`.
 * Example: for two 12AU7 sections, RL 27 kΩ, R1 = R2 = 220 kΩ, B+ 250 V, rail −150 V over
 * −70…20 V, curve A passes through (0.95 V, −52.1 V), (−5.5 V, −5.5 V) and (−52.1 V, 0.95 V) —
 * the three equilibria analyzeBistable reports — and so does curve B.
 */
export function transferCurves(circuit: BistableCircuit, lowVolts: number, highVolts: number, cells = GRID_CELLS): TransferCurvesResult {
  if (!(highVolts > lowVolts) || !Number.isFinite(lowVolts) || !Number.isFinite(highVolts)) {
    throw new RangeError("the grid-voltage range must be finite and not empty");
  }
  if (!Number.isInteger(cells) || cells < 4) throw new RangeError("at least 4 cells per axis are needed");
  const volts = Array.from({ length: cells + 1 }, (_, index) => lowVolts + ((highVolts - lowVolts) * index) / cells);
  const n = volts.length;
  const atGridA = new Float64Array(n * n);
  const atGridB = new Float64Array(n * n);
  let unsolvedPoints = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      try {
        const residuals = gridResiduals(circuit, volts[i], volts[j]);
        atGridA[i * n + j] = residuals.atGridA;
        atGridB[i * n + j] = residuals.atGridB;
      } catch (error) {
        if (!(error instanceof SolverError)) throw error;
        atGridA[i * n + j] = Number.NaN;
        atGridB[i * n + j] = Number.NaN;
        unsolvedPoints++;
      }
    }
  }
  const curveA = contour(circuit, "atGridB", volts, atGridB);
  const curveB = contour(circuit, "atGridA", volts, atGridA);
  return {
    curveA: { drivingSide: "A", polylines: curveA.polylines },
    curveB: { drivingSide: "B", polylines: curveB.polylines },
    unsolvedPoints: unsolvedPoints + curveA.unsolvedCrossings + curveB.unsolvedCrossings,
    gridCells: cells,
  };
}
