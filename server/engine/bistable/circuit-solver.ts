/**
 * DC equations of a cross-coupled pair, reduced to one unknown.
 *
 * Why a plate current: breaking the loop at one tube's controlled current (here side
 * "b" of the solver) leaves a circuit with no positive feedback, also with a common
 * cathode resistor, which breaking at a grid would leave as a cathode-coupled loop with
 * hysteresis. For each injected current t, the other plate current i is forced as well
 * and found from the monotone residual i − Ip_a(nodes), so everything else is resistor
 * network plus the cheap grid and screen laws. The equilibria are the roots of
 * r(t) = Ip_b(model at the node voltages that t produces) − t, and 1 + r'(t) is the
 * Bode return ratio there.
 *
 * A screen on the injected side is a second current that follows its grid; with a shared
 * cathode it closes a loop again. So the triode side is injected when there is one, and
 * with two screens on a shared cathode (or whenever a root fails its check) the plane of
 * both forced plate currents is searched instead.
 *
 * Node equations (side X drives side Y's grid through its divider R1_X, R2_X):
 *   plate X:  (B+ − P_X)/RL_X = Ip_X + (P_X − G_Y)/R1_X
 *   grid Y:   (P_X − G_Y)/R1_X = (G_Y − Vneg)/R2_X + Ig_Y
 *   cathode:  K = Rk·(cathode currents through it)
 *   screen:   S_X = fixed, or Vsupply − Rs·Ig2_X
 */
import type { TubeElement } from "../models/index.ts";
import { brentRoot, goldenSectionMaximum, monotoneRoot, SolverError } from "./root-finding.ts";
import type { BistableCircuit, BistableSide, ScreenSupply } from "./types.ts";

/** Absolute tolerance on every node voltage solve. */
const VOLTS_TOLERANCE = 1e-8;
const INNER_ITERATION_CAP = 200;
/** Relative step at which the power-law clamp Newton solves (grid and screen) stop. */
const GRID_ROOT_RELATIVE_TOLERANCE = 1e-11;
const PLATE_GUESS_STEP_VOLTS = 0.5;
/** Tolerance on side A's plate current inside the chain, as a fraction of its largest possible value. */
const CURRENT_TOLERANCE_FRACTION = 1e-10;
const CATHODE_GUESS_STEP_VOLTS = 0.05;
const MAX_BRACKET_EXPANSIONS = 80;
/** Root tolerance on the injected current, as a fraction of the swept range. */
const CURRENT_ROOT_TOLERANCE_FRACTION = 1e-10;
const CURRENT_ROOT_ITERATION_CAP = 300;
/** The sweep is refined (×4 per pass) up to this many cells while fewer than three equilibria show. */
const REFINED_SWEEP_POINTS = 192;
const MAX_RANGE_DOUBLINGS = 8;
const EXTREMUM_ITERATION_CAP = 60;
/** Step for the return-ratio derivative, as a fraction of the swept range. */
const RETURN_RATIO_STEP_FRACTION = 1e-5;
/** Grid step for stage gains, volts. */
const STAGE_GAIN_STEP_VOLTS = 1e-3;
/** A one-dimensional root is accepted when |r(t)| is below this plus the fraction of the range below. */
const ROOT_CHECK_AMPS = 1e-9;
const ROOT_CHECK_FRACTION = 1e-7;
/** Cells per side of the plane search grid, the factor of its one refinement, and of the local look. */
const PLANE_CELLS = 40;
const PLANE_REFINEMENT = 5;
const PLANE_CLOSER_CELLS = 10;
const PLANE_NEWTON_CAP = 80;
/** Finite-difference step of the plane Jacobian, as a fraction of each range. */
const PLANE_JACOBIAN_FRACTION = 1e-7;
/** Two plane roots closer than this fraction of each range are the same equilibrium. */
const PLANE_DUPLICATE_FRACTION = 1e-6;
/** Smallest current used as a cut-off threshold, amps. */
const MIN_CUTOFF_AMPS = 1e-9;

export interface SideModel {
  tube: TubeElement;
  scale: number;
  plateLoadOhms: number;
  couplingOhms: number;
  gridReturnOhms: number;
  screen: ScreenSupply | null;
  maxPlateWatts: number | null;
}

/** Node voltages (to ground) and tube currents (amps) of one side. */
export interface SideNodes {
  plate: number;
  grid: number;
  cathode: number;
  /** NaN for a triode. */
  screen: number;
  plateAmps: number;
  gridAmps: number;
  screenAmps: number;
}

export interface ChainPoint {
  injectedAmps: number;
  residualAmps: number;
  a: SideNodes;
  b: SideNodes;
}

interface DrivenGrid {
  /** Grid-to-cathode volts. */
  u: number;
  /** Screen-to-cathode volts (0 for a triode). */
  x: number;
  cathode: number;
  grid: number;
  gridAmps: number;
  screenAmps: number;
}

interface ForcedNetwork {
  cathodeA: number;
  uA: number;
  xA: number;
  gridAmpsA: number;
  screenAmpsA: number;
  plateA: number;
  drivenB: DrivenGrid;
  /** Grid and screen currents through side A's (or the common) cathode resistor. */
  extraCathodeAmps: number;
}

/** Side A's grid and screen offsets and currents at one cathode voltage. */
interface SideAAtCathode {
  cathode: number;
  u: number;
  x: number;
  gridAmps: number;
  screenAmps: number;
}

/** Side A's plate current tried inside a chain solve, with its network and model current. */
interface SolvedTrialA {
  current: number;
  network: ForcedNetwork;
  modelPlateAmpsA: number;
}

type DrivenGridSolver = (theveninVolts: number, theveninOhms: number) => DrivenGrid;

type NormalizedCathode =
  | { kind: "grounded" }
  | { kind: "common"; ohms: number }
  | { kind: "separate"; sideAOhms: number; sideBOhms: number };

/**
 * Solves u + a·u^1.5 = w (w > 0) for u ≥ 0: with v = √u it is a·v³ + v² = w, convex and
 * increasing, so Newton from an upper bound (each term alone reaches w) falls monotonically.
 */
function clampedGridForPowerLaw(openVolts: number, scaledPerveance: number): number {
  if (!(scaledPerveance > 0)) return openVolts;
  let v = Math.min(Math.sqrt(openVolts), Math.cbrt(openVolts / scaledPerveance));
  for (let iteration = 0; iteration < INNER_ITERATION_CAP; iteration++) {
    const value = scaledPerveance * v * v * v + v * v - openVolts;
    const slope = 3 * scaledPerveance * v * v + 2 * v;
    if (!(slope > 0)) return v * v;
    const step = value / slope;
    v -= step;
    if (Math.abs(step) <= GRID_ROOT_RELATIVE_TOLERANCE * v) return v * v;
  }
  throw new SolverError(`grid clamp: no convergence in ${INNER_ITERATION_CAP} iterations`);
}

/**
 * Solves y + a·y^e = w (w > 0, e > 1) for y ≥ 0 by Newton (convex, increasing). It starts from
 * `start` when that lies in (0, w) — the previous root of a nearby solve, so a few steps
 * suffice — else from an upper bound (each term alone reaches w). From above the iterates
 * fall monotonically; from below the first step lands above the root (the tangent of a convex
 * function lies under it), so either way they converge from above.
 */
function clampedPowerLaw(openValue: number, scaled: number, exponent: number, start: number): number {
  if (!(openValue > 0)) return openValue;
  if (!(scaled > 0)) return openValue;
  let y = start > 0 && start < openValue ? start : Math.min(openValue, Math.pow(openValue / scaled, 1 / exponent));
  for (let iteration = 0; iteration < INNER_ITERATION_CAP; iteration++) {
    // exp∘log is about twice as fast as Math.pow here and as accurate as the tolerance needs.
    const power = Math.exp((exponent - 1) * Math.log(y));
    const value = y + scaled * power * y - openValue;
    const slope = 1 + scaled * exponent * power;
    const step = value / slope;
    // w itself is an upper bound: a step from below never needs to go past it.
    y = Math.min(openValue, y - step);
    if (Math.abs(step) <= GRID_ROOT_RELATIVE_TOLERANCE * y) return y;
  }
  throw new SolverError(`screen node: no convergence in ${INNER_ITERATION_CAP} iterations`);
}

/** The last two screen-node solves of one side in the clamp's variables (open value w, root y). */
interface ScreenRootMemory {
  open: number;
  root: number;
  earlierOpen: number;
  earlierRoot: number;
}

/**
 * A starting point for the next screen-node solve at open value w: on the secant through the
 * last two solves (y(w) is smooth and increasing), or the last root when they coincide; 0 (none) before any.
 */
function predictedScreenRoot(memory: ScreenRootMemory, open: number): number {
  const spacing = memory.open - memory.earlierOpen;
  if (!(spacing !== 0 && Number.isFinite(spacing))) return memory.root;
  return memory.root + ((memory.root - memory.earlierRoot) * (open - memory.open)) / spacing;
}

function requirePositiveOhms(value: number, name: string): void {
  if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`${name} must be a positive number of ohms`);
}

function normalizeSide(side: BistableSide, label: string): SideModel {
  requirePositiveOhms(side.plateLoadOhms, `side ${label} plateLoadOhms`);
  requirePositiveOhms(side.couplingOhms, `side ${label} couplingOhms`);
  requirePositiveOhms(side.gridReturnOhms, `side ${label} gridReturnOhms`);
  const scale = side.currentScale ?? 1;
  if (!(scale > 0) || !Number.isFinite(scale)) throw new RangeError(`side ${label} currentScale must be positive`);
  if (side.tube.hasScreen && !side.screen) throw new RangeError(`side ${label} has a screen grid: give a screen supply`);
  if (side.screen?.kind === "resistor") requirePositiveOhms(side.screen.ohms, `side ${label} screen resistor`);
  return {
    tube: side.tube,
    scale,
    plateLoadOhms: side.plateLoadOhms,
    couplingOhms: side.couplingOhms,
    gridReturnOhms: side.gridReturnOhms,
    screen: side.tube.hasScreen ? (side.screen ?? null) : null,
    maxPlateWatts: side.maxPlateWatts ?? side.tube.maxPlateWatts ?? null,
  };
}

function nonNegative(value: number, name: string): void {
  if (!(value >= 0) || !Number.isFinite(value)) throw new RangeError(`${name} must be zero or a positive number of ohms`);
}

function normalizeCathode(circuit: BistableCircuit): NormalizedCathode {
  const cathode = circuit.cathode ?? { kind: "grounded" };
  if (cathode.kind === "common") {
    nonNegative(cathode.ohms, "common cathode resistor");
    return cathode.ohms === 0 ? { kind: "grounded" } : cathode;
  }
  if (cathode.kind === "separate") {
    nonNegative(cathode.sideAOhms, "side A cathode resistor");
    nonNegative(cathode.sideBOhms, "side B cathode resistor");
    return cathode.sideAOhms === 0 && cathode.sideBOhms === 0 ? { kind: "grounded" } : cathode;
  }
  return { kind: "grounded" };
}

export interface Equilibrium {
  /** Nodes in the circuit's own orientation (a = side A). */
  point: ChainPoint;
  returnRatio: number;
  stable: boolean;
}

export class CircuitModel {
  /** Solver orientation: b is the side whose plate current is injected. */
  readonly a: SideModel;
  readonly b: SideModel;
  /** True when the solver's a is the circuit's side B. */
  readonly swapped: boolean;
  readonly needsPlaneSearch: boolean;
  readonly bPlusVolts: number;
  readonly negativeRailVolts: number;
  readonly cathode: NormalizedCathode;
  /** Highest voltage any electrode can see; bounds the cathode solves. */
  private readonly highestSupplyVolts: number;
  /** The last cathode solve: its forced voltage (undefined before any), result, and the slope of h it ended on. */
  private settledForcedVolts: number | undefined;
  private settledCathodeVolts = 0;
  private settleSlope = 1;
  /** Trials inside the current cathode solve: how many, and the last two with their residuals. */
  private settleTrials = 0;
  private latestSettleVolts = Number.NaN;
  private latestSettleResidual = Number.NaN;
  private previousSettleVolts = Number.NaN;
  private previousSettleResidual = Number.NaN;
  /** Points already chained, by injected current, with side A's solved plate current. */
  private readonly chained = new Map<number, { point: ChainPoint; plateAmpsA: number }>();
  /** The injected currents in `chained`, ascending. */
  private readonly chainedCurrents: number[] = [];
  /** The last two trials of side A's plate current inside the current chain solve. */
  private latestTrialA: SolvedTrialA | undefined;
  private previousTrialA: SolvedTrialA | undefined;
  /** The last two screen-node solves of each side, from which the next one's start is predicted. */
  private readonly screenRootsA: ScreenRootMemory = { open: Number.NaN, root: 0, earlierOpen: Number.NaN, earlierRoot: 0 };
  private readonly screenRootsB: ScreenRootMemory = { open: Number.NaN, root: 0, earlierOpen: Number.NaN, earlierRoot: 0 };
  /** The last screen-node solve under the power law: its side, grid and screen offsets, and current. */
  private solvedScreenSide: SideModel | null = null;
  private solvedScreenGridVolts = Number.NaN;
  private solvedScreenVolts = Number.NaN;
  private solvedScreenAmps = 0;

  constructor(circuit: BistableCircuit) {
    if (!(circuit.bPlusVolts > 0) || !Number.isFinite(circuit.bPlusVolts)) throw new RangeError("bPlusVolts must be positive");
    if (!Number.isFinite(circuit.negativeRailVolts)) throw new RangeError("negativeRailVolts must be a number");
    const sideA = normalizeSide(circuit.sideA, "A");
    const sideB = normalizeSide(circuit.sideB, "B");
    const cathode = normalizeCathode(circuit);
    // With a shared cathode, a screen on the injected side is a second current that follows its
    // grid and would close a loop through the cathode again; inject into the triode side instead.
    this.swapped = cathode.kind === "common" && sideB.screen !== null && sideA.screen === null;
    this.a = this.swapped ? sideB : sideA;
    this.b = this.swapped ? sideA : sideB;
    this.bPlusVolts = circuit.bPlusVolts;
    this.negativeRailVolts = circuit.negativeRailVolts;
    this.cathode = cathode;
    // Two screens on a shared cathode: no single break leaves the rest monotone, so search the plane.
    this.needsPlaneSearch = cathode.kind === "common" && this.b.screen !== null;
    const screenVolts = [this.a.screen, this.b.screen].map((screen) =>
      screen === null ? 0 : screen.kind === "fixed" ? screen.volts : screen.supplyVolts,
    );
    this.highestSupplyVolts = Math.max(this.bPlusVolts, this.negativeRailVolts, 0, ...screenVolts);
  }

  // ── element currents, with the side's scale ──────────────────────────────

  plateAmps(side: SideModel, plateVolts: number, gridVolts: number, screenVolts: number): number {
    return side.scale * side.tube.plateAmps(plateVolts, gridVolts, screenVolts);
  }

  /**
   * Screen current with the side's scale. At the point the last screen-node solve returned, the
   * current that solve implied (equal to the law there within the solve's tolerance) is reused.
   */
  screenAmps(side: SideModel, gridVolts: number, screenVolts: number): number {
    if (side.screen === null) return 0;
    if (side === this.solvedScreenSide && gridVolts === this.solvedScreenGridVolts && screenVolts === this.solvedScreenVolts) {
      return this.solvedScreenAmps;
    }
    return side.scale * side.tube.screenAmps(gridVolts, screenVolts);
  }

  gridAmps(side: SideModel, gridVolts: number): number {
    return side.tube.gridAmps(gridVolts);
  }

  // ── one-node solves ──────────────────────────────────────────────────────

  /** Grid-to-cathode voltage u with u + seriesOhms·Ig(u) = openVolts (a Thevenin source clamped by grid current). */
  gridOffset(side: SideModel, openVolts: number, seriesOhms: number): number {
    if (openVolts <= 0) return openVolts;
    const perveance = side.tube.gridPerveanceAmpsPerVolt1p5;
    if (perveance !== undefined) return clampedGridForPowerLaw(openVolts, seriesOhms * perveance);
    const atOpen = seriesOhms * this.gridAmps(side, openVolts);
    if (atOpen <= 0) return openVolts;
    return brentRoot(
      (trial) => trial + seriesOhms * this.gridAmps(side, trial) - openVolts,
      0,
      openVolts,
      -openVolts,
      atOpen,
      VOLTS_TOLERANCE,
      INNER_ITERATION_CAP,
      "grid clamp",
    );
  }

  /**
   * Screen-to-cathode voltage x with x + seriesOhms·Ig2(u, x) = openVolts. Under the screen
   * power law the current at the solved x is kept (see screenAmps): at the root it is
   * (openVolts − x)/seriesOhms, which spares the caller one more evaluation of the law.
   */
  screenOffset(side: SideModel, u: number, seriesOhms: number, openVolts: number): number {
    if (side.screen === null) return 0;
    if (seriesOhms === 0) return openVolts;
    const law = side.tube.screenPowerLaw;
    if (law !== undefined) {
      const gridPart = Math.min(u, 0);
      const base = openVolts / law.mu + gridPart;
      // Under the power law the current is zero exactly when its base is not positive.
      if (!(base > 0)) return openVolts;
      // With y = x/µ + min(u, 0) the node reads y + a·y^ex = open/µ + min(u, 0): the convex clamp shape again.
      const scaled = (seriesOhms * side.scale * law.ampsPerVoltPower) / law.mu;
      const memory = side === this.a ? this.screenRootsA : this.screenRootsB;
      const y = clampedPowerLaw(base, scaled, law.exponent, predictedScreenRoot(memory, base));
      memory.earlierOpen = memory.open;
      memory.earlierRoot = memory.root;
      memory.open = base;
      memory.root = y;
      const x = law.mu * (y - gridPart);
      if (x > 0) {
        // y + a·y^ex = base at the root, so the current a·y^ex·µ/R is (base − y)·µ/R, with no power to take.
        this.rememberScreenAmps(side, u, x, Math.max(0, ((base - y) * law.mu) / seriesOhms));
        return x;
      }
    }
    const currentAtOpen = this.screenAmps(side, u, openVolts);
    if (currentAtOpen <= 0) return openVolts;
    const low = openVolts - seriesOhms * currentAtOpen;
    const atLow = low + seriesOhms * this.screenAmps(side, u, low) - openVolts;
    if (atLow >= 0) return low;
    return brentRoot(
      (trial) => trial + seriesOhms * this.screenAmps(side, u, trial) - openVolts,
      low,
      openVolts,
      atLow,
      seriesOhms * currentAtOpen,
      VOLTS_TOLERANCE,
      INNER_ITERATION_CAP,
      "screen node",
    );
  }

  private rememberScreenAmps(side: SideModel, u: number, x: number, amps: number): void {
    this.solvedScreenSide = side;
    this.solvedScreenGridVolts = u;
    this.solvedScreenVolts = x;
    this.solvedScreenAmps = amps;
  }

  /** Screen offset for a cathode held at `cathodeVolts`. */
  screenOffsetFixedCathode(side: SideModel, u: number, cathodeVolts: number): number {
    const screen = side.screen;
    if (screen === null) return 0;
    if (screen.kind === "fixed") return screen.volts - cathodeVolts;
    return this.screenOffset(side, u, screen.ohms, screen.supplyVolts - cathodeVolts);
  }

  /** The driven grid with its cathode held at `cathodeVolts`. */
  drivenGridFixed(side: SideModel, theveninVolts: number, theveninOhms: number, cathodeVolts: number): DrivenGrid {
    const u = this.gridOffset(side, theveninVolts - cathodeVolts, theveninOhms);
    const x = this.screenOffsetFixedCathode(side, u, cathodeVolts);
    return {
      u,
      x,
      cathode: cathodeVolts,
      grid: u + cathodeVolts,
      gridAmps: this.gridAmps(side, u),
      screenAmps: this.screenAmps(side, u, x),
    };
  }

  /**
   * The driven grid of a side with its own cathode resistor, carrying a forced plate
   * current plus its own grid and screen current.
   */
  drivenGridSelfBiased(
    side: SideModel,
    theveninVolts: number,
    theveninOhms: number,
    cathodeOhms: number,
    plateAmps: number,
  ): DrivenGrid {
    if (side.screen === null) {
      // u + (R_th + Rk)·Ig(u) = V_th − Rk·Ip: the cathode resistor adds to the clamp's series resistance.
      const u = this.gridOffset(side, theveninVolts - cathodeOhms * plateAmps, theveninOhms + cathodeOhms);
      const gridAmps = this.gridAmps(side, u);
      const cathode = cathodeOhms * (plateAmps + gridAmps);
      return { u, x: 0, cathode, grid: u + cathode, gridAmps, screenAmps: 0 };
    }
    const high = theveninVolts - cathodeOhms * plateAmps;
    const atHigh = this.selfBiasedResidual(side, high, theveninVolts, theveninOhms, cathodeOhms, plateAmps);
    if (atHigh <= 0) return this.selfBiasedGridAt(side, high, cathodeOhms, plateAmps);
    let low = Math.min(high, 0) - 1;
    let atLow = this.selfBiasedResidual(side, low, theveninVolts, theveninOhms, cathodeOhms, plateAmps);
    for (let expansion = 0; atLow >= 0; expansion++) {
      if (expansion >= MAX_BRACKET_EXPANSIONS) throw new SolverError("self-biased grid: no lower bracket");
      low = high - 2 * (high - low);
      atLow = this.selfBiasedResidual(side, low, theveninVolts, theveninOhms, cathodeOhms, plateAmps);
    }
    const u = brentRoot(
      (trial) => this.selfBiasedResidual(side, trial, theveninVolts, theveninOhms, cathodeOhms, plateAmps),
      low,
      high,
      atLow,
      atHigh,
      VOLTS_TOLERANCE,
      INNER_ITERATION_CAP,
      "self-biased grid",
    );
    return this.selfBiasedGridAt(side, u, cathodeOhms, plateAmps);
  }

  /** Screen offset of a side whose cathode is Rk·(Ip + Ig + Ig2). */
  private selfBiasedScreenOffset(side: SideModel, u: number, gridAmps: number, cathodeOhms: number, plateAmps: number): number {
    const screen = side.screen;
    if (screen === null) return 0;
    const fixedPart = cathodeOhms * (plateAmps + gridAmps);
    return screen.kind === "fixed"
      ? this.screenOffset(side, u, cathodeOhms, screen.volts - fixedPart)
      : this.screenOffset(side, u, screen.ohms + cathodeOhms, screen.supplyVolts - fixedPart);
  }

  /** u + Rk·(Ip + Ig + Ig2) + R_th·Ig − V_th: zero at the self-biased grid offset, rising with u. */
  private selfBiasedResidual(
    side: SideModel,
    u: number,
    theveninVolts: number,
    theveninOhms: number,
    cathodeOhms: number,
    plateAmps: number,
  ): number {
    const gridAmps = this.gridAmps(side, u);
    const screenAmps = this.screenAmps(side, u, this.selfBiasedScreenOffset(side, u, gridAmps, cathodeOhms, plateAmps));
    return u + cathodeOhms * (plateAmps + gridAmps + screenAmps) + theveninOhms * gridAmps - theveninVolts;
  }

  private selfBiasedGridAt(side: SideModel, u: number, cathodeOhms: number, plateAmps: number): DrivenGrid {
    const gridAmps = this.gridAmps(side, u);
    const x = this.selfBiasedScreenOffset(side, u, gridAmps, cathodeOhms, plateAmps);
    const screenAmps = this.screenAmps(side, u, x);
    const cathode = cathodeOhms * (plateAmps + gridAmps + screenAmps);
    return { u, x, cathode, grid: u + cathode, gridAmps, screenAmps };
  }

  /**
   * Plate node of side X (grid and screen offsets given, cathode held) together with
   * the grid it drives. The node residual falls monotonically with plate voltage.
   */
  solvePlate(
    side: SideModel,
    cathodeVolts: number,
    u: number,
    x: number,
    drivenGrid: DrivenGridSolver,
    guess: number | undefined,
  ): { plate: number; driven: DrivenGrid } {
    const dividerRatio = side.gridReturnOhms / (side.couplingOhms + side.gridReturnOhms);
    const theveninOhms = side.couplingOhms * dividerRatio;
    const rail = this.negativeRailVolts;
    const plate = monotoneRoot(
      (trial) =>
        (this.bPlusVolts - trial) / side.plateLoadOhms -
        this.plateAmps(side, trial - cathodeVolts, u, x) -
        (trial - drivenGrid(rail + (trial - rail) * dividerRatio, theveninOhms).grid) / side.couplingOhms,
      Math.min(rail, 0),
      this.bPlusVolts,
      false,
      guess,
      PLATE_GUESS_STEP_VOLTS,
      VOLTS_TOLERANCE,
      INNER_ITERATION_CAP,
      "plate node",
    );
    return { plate, driven: drivenGrid(rail + (plate - rail) * dividerRatio, theveninOhms) };
  }

  // ── the chain: injected B plate current → every node ─────────────────────
  //
  // Inside the chain side A's plate current i is forced too and then solved for
  // (i = Ip_A at the nodes i produces, a monotone residual). With both plate currents
  // known, the cathode, plate and grid nodes follow from the resistor network and the
  // cheap grid and screen laws, so each residual costs one plate-current evaluation.

  /** Side A's plate node with its plate current forced, together with the grid it drives. */
  private plateForced(plateAmps: number, cathodeB: number, cathodeOhmsB: number, injectedAmps: number): { plate: number; driven: DrivenGrid } {
    const side = this.a;
    const rail = this.negativeRailVolts;
    const dividerTotal = side.couplingOhms + side.gridReturnOhms;
    const dividerRatio = side.gridReturnOhms / dividerTotal;
    const theveninOhms = side.couplingOhms * dividerRatio;
    const loadConductance = 1 / side.plateLoadOhms;
    // Unclamped driven grid: the divider is a plain resistor to the rail, so the node is linear.
    const linearPlate =
      (this.bPlusVolts * loadConductance - plateAmps + rail / dividerTotal) / (loadConductance + 1 / dividerTotal);
    const linearGridVolts = this.unclampedGridB(plateAmps);
    // With B's cathode held and the power grid law, B's grid draws exactly when the unclamped grid
    // is above its cathode; then the clamped form below is the answer and the unclamped one is not needed.
    const perveanceB = this.b.tube.gridPerveanceAmpsPerVolt1p5;
    const drawsSurely = cathodeOhmsB === 0 && perveanceB !== undefined && perveanceB > 0 && linearGridVolts > cathodeB;
    let linearDriven: DrivenGrid | undefined;
    if (!drawsSurely) {
      linearDriven = this.drivenGridB(linearGridVolts, theveninOhms, cathodeB, cathodeOhmsB, injectedAmps);
      if (linearDriven.gridAmps === 0) return { plate: linearPlate, driven: linearDriven };
    }
    if (cathodeOhmsB === 0 || this.b.screen === null) {
      // Eliminating the plate leaves c_lin − c1·G − Ig = 0 at B's grid G. With B's cathode at
      // K0 + Rk·Ig (K0 held, or Rk·t for its own resistor) that is u + (Rk + 1/c1)·Ig(u) = c_lin/c1 − K0:
      // the same clamp equation as a Thevenin-driven grid.
      const { c1, cLinear, nodeConductance } = this.plateNodeConstants(plateAmps);
      const heldCathode = cathodeOhmsB === 0 ? cathodeB : cathodeOhmsB * injectedAmps;
      const u = this.gridOffset(this.b, cLinear / c1 - heldCathode, cathodeOhmsB + 1 / c1);
      const gridAmps = this.gridAmps(this.b, u);
      const cathodeVolts = heldCathode + cathodeOhmsB * gridAmps;
      const grid = u + cathodeVolts;
      const plate = (this.bPlusVolts * loadConductance - plateAmps + grid / side.couplingOhms) / nodeConductance;
      const x = this.screenOffsetFixedCathode(this.b, u, cathodeVolts);
      return {
        plate,
        driven: { u, x, cathode: cathodeVolts, grid, gridAmps, screenAmps: this.screenAmps(this.b, u, x) },
      };
    }
    // A clamped grid sits at or above its cathode (≥ 0 V), which bounds the plate from below.
    const groundedGridPlate =
      (this.bPlusVolts * loadConductance - plateAmps) / (loadConductance + 1 / side.couplingOhms);
    const low = Math.min(linearPlate, groundedGridPlate);
    const atLow =
      (this.bPlusVolts - low) * loadConductance -
      plateAmps -
      (low - this.drivenGridB(rail + (low - rail) * dividerRatio, theveninOhms, cathodeB, cathodeOhmsB, injectedAmps).grid) /
        side.couplingOhms;
    const atHigh =
      (this.bPlusVolts - linearPlate) * loadConductance -
      plateAmps -
      (linearPlate - (linearDriven ?? this.drivenGridB(linearGridVolts, theveninOhms, cathodeB, cathodeOhmsB, injectedAmps)).grid) /
        side.couplingOhms;
    const plate =
      atHigh >= 0
        ? linearPlate
        : atLow <= 0
          ? low
          : brentRoot(
              (trial) =>
                (this.bPlusVolts - trial) * loadConductance -
                plateAmps -
                (trial -
                  this.drivenGridB(rail + (trial - rail) * dividerRatio, theveninOhms, cathodeB, cathodeOhmsB, injectedAmps).grid) /
                  side.couplingOhms,
              low,
              linearPlate,
              atLow,
              atHigh,
              VOLTS_TOLERANCE,
              INNER_ITERATION_CAP,
              "plate node",
            );
    return {
      plate,
      driven: this.drivenGridB(rail + (plate - rail) * dividerRatio, theveninOhms, cathodeB, cathodeOhmsB, injectedAmps),
    };
  }

  /** B's grid with A's plate current forced and B's grid drawing nothing: the divider alone sets it. */
  private unclampedGridB(plateAmpsA: number): number {
    const side = this.a;
    const rail = this.negativeRailVolts;
    const dividerTotal = side.couplingOhms + side.gridReturnOhms;
    const loadConductance = 1 / side.plateLoadOhms;
    const linearPlate =
      (this.bPlusVolts * loadConductance - plateAmpsA + rail / dividerTotal) / (loadConductance + 1 / dividerTotal);
    return rail + (linearPlate - rail) * (side.gridReturnOhms / dividerTotal);
  }

  /**
   * Side A's plate node with its current forced, reduced onto B's grid G:
   * c_lin − c1·G − Ig_B = 0, with the plate then (B+·gL − i + G/R1)/(gL + 1/R1).
   */
  private plateNodeConstants(plateAmps: number): { c1: number; cLinear: number; nodeConductance: number } {
    const side = this.a;
    const loadConductance = 1 / side.plateLoadOhms;
    const nodeConductance = loadConductance + 1 / side.couplingOhms;
    const throughCoupling = 1 / (side.couplingOhms * nodeConductance);
    return {
      c1: throughCoupling * loadConductance + 1 / side.gridReturnOhms,
      cLinear:
        throughCoupling * (this.bPlusVolts * loadConductance - plateAmps) + this.negativeRailVolts / side.gridReturnOhms,
      nodeConductance,
    };
  }

  private drivenGridB(theveninVolts: number, theveninOhms: number, cathodeB: number, cathodeOhmsB: number, injectedAmps: number): DrivenGrid {
    return cathodeOhmsB > 0
      ? this.drivenGridSelfBiased(this.b, theveninVolts, theveninOhms, cathodeOhmsB, injectedAmps)
      : this.drivenGridFixed(this.b, theveninVolts, theveninOhms, cathodeB);
  }

  /**
   * The resistor network for forced plate currents (A: plateAmpsA, B: injectedAmps) and a
   * trial cathode voltage of side A (the shared cathode when common). Tube plate
   * currents are not evaluated here.
   */
  private networkAtCathode(
    injectedAmps: number,
    plateAmpsA: number,
    theveninVolts: number,
    theveninOhms: number,
    cathodeA: number,
    solvedSideA?: SideAAtCathode,
  ): ForcedNetwork {
    const cathode = this.cathode;
    const sideA = solvedSideA ?? this.sideAAtCathode(theveninVolts, theveninOhms, cathodeA);
    const { u: uA, x: xA, gridAmps: gridAmpsA, screenAmps: screenAmpsA } = sideA;
    const cathodeB = cathode.kind === "common" ? cathodeA : 0;
    const cathodeOhmsB = cathode.kind === "separate" ? cathode.sideBOhms : 0;
    const { plate, driven } = this.plateForced(plateAmpsA, cathodeB, cathodeOhmsB, injectedAmps);
    const extraCathodeAmps =
      gridAmpsA + screenAmpsA + (cathode.kind === "common" ? driven.gridAmps + driven.screenAmps : 0);
    return { cathodeA, uA, xA, gridAmpsA, screenAmpsA, plateA: plate, drivenB: driven, extraCathodeAmps };
  }

  /** Side A's grid (fed by the Thevenin source) and screen with its cathode at `cathodeVolts`. */
  private sideAAtCathode(theveninVolts: number, theveninOhms: number, cathodeVolts: number): SideAAtCathode {
    const a = this.a;
    const u = this.gridOffset(a, theveninVolts - cathodeVolts, theveninOhms);
    const x = this.screenOffsetFixedCathode(a, u, cathodeVolts);
    return { cathode: cathodeVolts, u, x, gridAmps: this.gridAmps(a, u), screenAmps: this.screenAmps(a, u, x) };
  }

  /** The network with both plate currents forced; the cathode settles around them. */
  private networkAt(injectedAmps: number, plateAmpsA: number, theveninVolts: number, theveninOhms: number): ForcedNetwork {
    const cathode = this.cathode;
    const ohms = cathode.kind === "common" ? cathode.ohms : cathode.kind === "separate" ? cathode.sideAOhms : 0;
    if (ohms === 0) return this.networkAtCathode(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, 0);
    const forcedVolts = ohms * (plateAmpsA + (cathode.kind === "common" ? injectedAmps : 0));
    if (cathode.kind === "common" && this.b.screen === null) {
      const shared = this.sharedCathodeNetwork(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts, ohms);
      if (shared !== null) return shared;
    }
    const atForced = this.networkAtCathode(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts);
    if (atForced.extraCathodeAmps === 0) return atForced;
    if (this.b.screen === null) {
      // Usually one grid draws and the other is below its cathode. Then the cathode is
      // forced + Rk·Ig of that grid, and its clamp equation absorbs Rk as extra series resistance.
      if (this.a.screen === null && atForced.gridAmpsA > 0 && atForced.drivenB.gridAmps === 0) {
        const settled = this.settleOnGridA(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts, ohms);
        if (settled.extraCathodeAmps === settled.gridAmpsA) return settled;
      } else if (
        cathode.kind === "common" &&
        atForced.gridAmpsA === 0 &&
        atForced.screenAmpsA === 0 &&
        atForced.drivenB.gridAmps > 0
      ) {
        const settled = this.settleOnGridB(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts, ohms);
        if (settled.gridAmpsA === 0 && settled.screenAmpsA === 0) return settled;
      }
    }
    const high = forcedVolts + ohms * atForced.extraCathodeAmps;
    if (this.b.screen === null && atForced.drivenB.gridAmps === 0) {
      const settled = this.settleOnSideA(
        injectedAmps,
        plateAmpsA,
        theveninVolts,
        theveninOhms,
        forcedVolts,
        ohms,
        high,
        -ohms * atForced.extraCathodeAmps,
      );
      if (settled.drivenB.gridAmps === 0) return settled;
    }
    const cathodeVolts = this.settleCathode(forcedVolts, high, -ohms * atForced.extraCathodeAmps, (volts) =>
      this.cathodeResidual(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts, ohms, volts),
    );
    return this.networkAtCathode(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, cathodeVolts);
  }

  /**
   * The shared cathode with a triode on side B, its branch chosen by cheap tests at the forced
   * cathode (the lowest the cathode can sit) instead of the whole network there: B's grid draws
   * exactly when its unclamped grid is above that cathode, A's grid when its open-circuit offset is
   * positive, A's screen when its power-law base at the open screen voltage is. Returns null
   * (solve in full) without both grid laws and A's screen law, when both sides draw, or when a
   * settled network fails its check.
   */
  private sharedCathodeNetwork(
    injectedAmps: number,
    plateAmpsA: number,
    theveninVolts: number,
    theveninOhms: number,
    forcedVolts: number,
    ohms: number,
  ): ForcedNetwork | null {
    const a = this.a;
    const perveanceA = a.tube.gridPerveanceAmpsPerVolt1p5;
    const perveanceB = this.b.tube.gridPerveanceAmpsPerVolt1p5;
    const screenLaw = a.tube.screenPowerLaw;
    if (perveanceA === undefined || !(perveanceB !== undefined && perveanceB > 0)) return null;
    if (a.screen !== null && screenLaw === undefined) return null;
    const gridOpenA = theveninVolts - forcedVolts;
    const gridDrawsA = gridOpenA > 0 && perveanceA > 0;
    // A's grid-to-cathode voltage counts in the screen law only below the cathode, where it equals the open voltage.
    const screenOpenA = a.screen === null ? 0 : (a.screen.kind === "fixed" ? a.screen.volts : a.screen.supplyVolts) - forcedVolts;
    const screenDrawsA = screenLaw !== undefined && screenOpenA / screenLaw.mu + Math.min(gridOpenA, 0) > 0;
    const gridDrawsB = this.unclampedGridB(plateAmpsA) > forcedVolts;
    if (gridDrawsB) {
      if (gridDrawsA || screenDrawsA) return null;
      const settled = this.settleOnGridB(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts, ohms);
      return settled.gridAmpsA === 0 && settled.screenAmpsA === 0 ? settled : null;
    }
    if (!gridDrawsA && !screenDrawsA) return this.networkAtCathode(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts);
    if (a.screen === null) {
      const settled = this.settleOnGridA(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts, ohms);
      if (settled.extraCathodeAmps === settled.gridAmpsA) return settled;
    }
    // An upper bound on A's grid and screen currents at the forced cathode bounds the cathode from
    // above without solving A there: the grid's open voltage over its source resistance, the
    // screen's over its resistor (or its current at a fixed voltage with the grid at most at the cathode).
    const gridBoundAmps = gridDrawsA ? gridOpenA / theveninOhms : 0;
    const screen = a.screen;
    const screenBoundAmps =
      screen === null || !screenDrawsA
        ? 0
        : screen.kind === "resistor"
          ? screenOpenA / screen.ohms
          : this.screenAmps(a, Math.min(gridOpenA, 0), screenOpenA);
    const settled = this.settleOnSideA(
      injectedAmps,
      plateAmpsA,
      theveninVolts,
      theveninOhms,
      forcedVolts,
      ohms,
      forcedVolts + ohms * (gridBoundAmps + screenBoundAmps),
      undefined,
    );
    return settled.drivenB.gridAmps === 0 ? settled : null;
  }

  /** Only A's grid draws (a triode A): the cathode is forced + Rk·Ig_A, Rk adding to the clamp's series resistance. */
  private settleOnGridA(
    injectedAmps: number,
    plateAmpsA: number,
    theveninVolts: number,
    theveninOhms: number,
    forcedVolts: number,
    ohms: number,
  ): ForcedNetwork {
    const uA = this.gridOffset(this.a, theveninVolts - forcedVolts, theveninOhms + ohms);
    return this.networkAtCathode(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts + ohms * this.gridAmps(this.a, uA));
  }

  /**
   * Side A draws nothing at the lowest cathode, and its grid and screen currents only fall as the
   * cathode rises, so B's grid alone sets the shared cathode (A's screen included).
   */
  private settleOnGridB(
    injectedAmps: number,
    plateAmpsA: number,
    theveninVolts: number,
    theveninOhms: number,
    forcedVolts: number,
    ohms: number,
  ): ForcedNetwork {
    const { c1, cLinear } = this.plateNodeConstants(plateAmpsA);
    const uB = this.gridOffset(this.b, cLinear / c1 - forcedVolts, ohms + 1 / c1);
    return this.networkAtCathode(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, forcedVolts + ohms * this.gridAmps(this.b, uB));
  }

  /**
   * Only side A's own grid and screen draw extra: settles the cathode on A's laws alone (cheap);
   * the caller checks that B's grid stayed below its cathode. `atForced` is h at the forced
   * cathode when already known. Side A at each trial cathode is kept, so the settled one is not solved again.
   */
  private settleOnSideA(
    injectedAmps: number,
    plateAmpsA: number,
    theveninVolts: number,
    theveninOhms: number,
    forcedVolts: number,
    ohms: number,
    high: number,
    atForced: number | undefined,
  ): ForcedNetwork {
    const tried: SideAAtCathode[] = [];
    const settledVolts = this.settleCathode(forcedVolts, high, atForced, (volts) => {
      const sideA = this.sideAAtCathode(theveninVolts, theveninOhms, volts);
      tried.push(sideA);
      return volts - forcedVolts - ohms * (sideA.gridAmps + sideA.screenAmps);
    });
    return this.networkAtCathode(
      injectedAmps,
      plateAmpsA,
      theveninVolts,
      theveninOhms,
      settledVolts,
      tried.find((sideA) => sideA.cathode === settledVolts),
    );
  }

  /**
   * Root of h(K) = K − forced − Rk·extra(K) on [forced, high]. h rises with slope ≥ 1 (grid and
   * screen currents only fall as the cathode rises), so from any trial K the root lies between
   * K and K − h(K). The trial follows the last solve along the slope it ended on: with the
   * same source (one chain solve), K − Rk·extra(K) is one function and only `forced` moves.
   */
  private settleCathode(
    forcedVolts: number,
    high: number,
    knownAtForced: number | undefined,
    residual: (volts: number) => number,
  ): number {
    const lastForced = this.settledForcedVolts;
    const predicted =
      lastForced === undefined ? forcedVolts : this.settledCathodeVolts + (forcedVolts - lastForced) / this.settleSlope;
    const trial = Math.min(high, Math.max(forcedVolts, predicted));
    this.settleTrials = 0;
    let atForced = knownAtForced;
    if (trial === forcedVolts) atForced ??= this.settleResidual(residual, forcedVolts);
    const atTrial = trial === forcedVolts ? (atForced as number) : this.settleResidual(residual, trial);
    let cathodeVolts = trial;
    if (Math.abs(atTrial) > 0.1 * VOLTS_TOLERANCE) {
      const other = Math.min(high, Math.max(forcedVolts, trial - atTrial));
      if (other === forcedVolts) atForced ??= this.settleResidual(residual, forcedVolts);
      const atOther = other === forcedVolts ? (atForced as number) : this.settleResidual(residual, other);
      let [low, up, atLow, atUp] = trial < other ? [trial, other, atTrial, atOther] : [other, trial, atOther, atTrial];
      if (!(atLow <= 0 && atUp >= 0)) {
        // Rounding broke the slope bound: fall back to the full bracket.
        atForced ??= this.settleResidual(residual, forcedVolts);
        [low, up, atLow, atUp] = [forcedVolts, high, atForced, this.settleResidual(residual, high)];
      }
      // The slope bound also makes a residual below the trial's acceptance level a cathode within tolerance.
      cathodeVolts = brentRoot(
        (volts) => this.settleResidual(residual, volts),
        low,
        up,
        atLow,
        atUp,
        VOLTS_TOLERANCE,
        INNER_ITERATION_CAP,
        "cathode node",
        0.1 * VOLTS_TOLERANCE,
      );
    }
    if (this.settleTrials >= 2 && this.latestSettleVolts !== this.previousSettleVolts) {
      const slope =
        (this.latestSettleResidual - this.previousSettleResidual) / (this.latestSettleVolts - this.previousSettleVolts);
      if (Number.isFinite(slope)) this.settleSlope = Math.max(1, slope);
    }
    this.settledForcedVolts = forcedVolts;
    this.settledCathodeVolts = cathodeVolts;
    return cathodeVolts;
  }

  /** h at one trial cathode, keeping the last two trials for the slope the next settle starts along. */
  private settleResidual(residual: (volts: number) => number, volts: number): number {
    const value = residual(volts);
    this.previousSettleVolts = this.latestSettleVolts;
    this.previousSettleResidual = this.latestSettleResidual;
    this.latestSettleVolts = volts;
    this.latestSettleResidual = value;
    this.settleTrials++;
    return value;
  }

  /** h(K) = K − forced − Rk·(grid and screen currents through the resistor at K). */
  private cathodeResidual(
    injectedAmps: number,
    plateAmpsA: number,
    theveninVolts: number,
    theveninOhms: number,
    forcedVolts: number,
    ohms: number,
    cathodeVolts: number,
  ): number {
    const network = this.networkAtCathode(injectedAmps, plateAmpsA, theveninVolts, theveninOhms, cathodeVolts);
    return cathodeVolts - forcedVolts - ohms * network.extraCathodeAmps;
  }

  private plateAmpsAOf(network: ForcedNetwork): number {
    return this.plateAmps(this.a, network.plateA - network.cathodeA, network.uA, network.xA);
  }

  /** Side A's grid divider seen from B's plate with B's plate current forced, as a Thevenin source. */
  private gridSourceA(injectedAmps: number): { openPlateB: number; theveninVolts: number; theveninOhms: number } {
    const b = this.b;
    const rail = this.negativeRailVolts;
    const openPlateB = this.bPlusVolts - injectedAmps * b.plateLoadOhms;
    const dividerTotal = b.plateLoadOhms + b.couplingOhms + b.gridReturnOhms;
    return {
      openPlateB,
      theveninVolts: rail + ((openPlateB - rail) * b.gridReturnOhms) / dividerTotal,
      theveninOhms: ((b.plateLoadOhms + b.couplingOhms) * b.gridReturnOhms) / dividerTotal,
    };
  }

  /** Beyond this current A's plate would sit at or below 0 V, where it conducts nothing. */
  private highestPlateAmpsA(): number {
    const a = this.a;
    return (
      Math.max(0, this.bPlusVolts / a.plateLoadOhms + this.negativeRailVolts / (a.couplingOhms + a.gridReturnOhms)) * (1 + 1e-9) +
      1e-12
    );
  }

  /**
   * Every node and both model plate currents with both plate currents forced. `solved` is the
   * network and side A's model plate current already found for exactly these two currents.
   */
  pointAt(
    injectedAmps: number,
    plateAmpsA: number,
    solved?: SolvedTrialA,
  ): ChainPoint & { residualAmpsA: number } {
    const { a, b } = this;
    const { openPlateB, theveninVolts, theveninOhms } = this.gridSourceA(injectedAmps);
    const network = solved?.network ?? this.networkAt(injectedAmps, plateAmpsA, theveninVolts, theveninOhms);
    const { drivenB } = network;
    const gridA = network.uA + network.cathodeA;
    const plateB = (openPlateB * b.couplingOhms + gridA * b.plateLoadOhms) / (b.couplingOhms + b.plateLoadOhms);
    const modelPlateAmpsA = solved?.modelPlateAmpsA ?? this.plateAmpsAOf(network);
    const modelPlateAmpsB = this.plateAmps(b, plateB - drivenB.cathode, drivenB.u, drivenB.x);
    return {
      injectedAmps,
      residualAmps: modelPlateAmpsB - injectedAmps,
      residualAmpsA: modelPlateAmpsA - plateAmpsA,
      a: {
        plate: network.plateA,
        grid: gridA,
        cathode: network.cathodeA,
        screen: a.screen === null ? Number.NaN : network.xA + network.cathodeA,
        plateAmps: modelPlateAmpsA,
        gridAmps: network.gridAmpsA,
        screenAmps: network.screenAmpsA,
      },
      b: {
        plate: plateB,
        grid: drivenB.grid,
        cathode: drivenB.cathode,
        screen: b.screen === null ? Number.NaN : drivenB.x + drivenB.cathode,
        plateAmps: modelPlateAmpsB,
        gridAmps: drivenB.gridAmps,
        screenAmps: drivenB.screenAmps,
      },
    };
  }

  /** Position of `injectedAmps` in the ascending chainedCurrents (the first entry not below it). */
  private chainedIndex(injectedAmps: number): number {
    const currents = this.chainedCurrents;
    let low = 0;
    let high = currents.length;
    while (low < high) {
      const middle = (low + high) >>> 1;
      if (currents[middle] < injectedAmps) low = middle + 1;
      else high = middle;
    }
    return low;
  }

  /**
   * Where the search for side A's current starts: on the line through the two chained points
   * nearest the new injected current (the sweep's last two samples, a root search's bracket, the
   * root beside a return-ratio step), or at the nearest one's current when the other is more
   * than four times as far away. 0 before anything is chained.
   */
  private startingPlateCurrentA(injectedAmps: number): number {
    const currents = this.chainedCurrents;
    const index = this.chainedIndex(injectedAmps);
    let nearest = -1;
    let second = -1;
    for (let candidate = Math.max(0, index - 2); candidate < Math.min(currents.length, index + 2); candidate++) {
      const distance = Math.abs(currents[candidate] - injectedAmps);
      if (nearest < 0 || distance < Math.abs(currents[nearest] - injectedAmps)) {
        second = nearest;
        nearest = candidate;
      } else if (second < 0 || distance < Math.abs(currents[second] - injectedAmps)) {
        second = candidate;
      }
    }
    if (nearest < 0) return 0;
    const nearCurrent = currents[nearest];
    const nearAmpsA = (this.chained.get(nearCurrent) as { plateAmpsA: number }).plateAmpsA;
    if (second < 0) return nearAmpsA;
    const secondCurrent = currents[second];
    const spacing = nearCurrent - secondCurrent;
    // A line through points far apart on this scale (a kink may lie between them) is worse than the nearest point.
    if (Math.abs(injectedAmps - secondCurrent) > 4 * Math.abs(injectedAmps - nearCurrent)) return nearAmpsA;
    const secondAmpsA = (this.chained.get(secondCurrent) as { plateAmpsA: number }).plateAmpsA;
    return nearAmpsA + ((nearAmpsA - secondAmpsA) * (injectedAmps - nearCurrent)) / spacing;
  }

  /**
   * q(i) = i − Ip_A at the network for both plate currents forced. The last two trials are
   * kept: the root search returns one of them as a rule, whose network then need not be solved again.
   */
  private excessA(injectedAmps: number, current: number, theveninVolts: number, theveninOhms: number): number {
    const network = this.networkAt(injectedAmps, current, theveninVolts, theveninOhms);
    const modelPlateAmpsA = this.plateAmpsAOf(network);
    this.previousTrialA = this.latestTrialA;
    this.latestTrialA = { current, network, modelPlateAmpsA };
    return current - modelPlateAmpsA;
  }

  /** The kept trial of side A's current at exactly `current`, if one of the last two was there. */
  private keptTrialA(current: number): SolvedTrialA | undefined {
    if (this.latestTrialA?.current === current) return this.latestTrialA;
    if (this.previousTrialA?.current === current) return this.previousTrialA;
    return undefined;
  }

  /**
   * Every node voltage and current when side B's plate current is forced to `injectedAmps`.
   * A current already chained in this model returns the same point again (the sweep, its
   * refinements, the root search and the root check meet the same currents).
   */
  chain(injectedAmps: number): ChainPoint {
    const known = this.chained.get(injectedAmps);
    if (known !== undefined) return known.point;
    const { theveninVolts, theveninOhms } = this.gridSourceA(injectedAmps);
    const highest = this.highestPlateAmpsA();
    this.latestTrialA = undefined;
    this.previousTrialA = undefined;
    // q(i) = i − Ip_A(nodes for i) rises with slope ≥ 1 (Ip_A only falls as i rises), so the
    // root lies between any trial point i0 and i0 − q(i0): one evaluation brackets it.
    const start = Math.min(highest, Math.max(0, this.startingPlateCurrentA(injectedAmps)));
    const atStart = this.excessA(injectedAmps, start, theveninVolts, theveninOhms);
    const tolerance = CURRENT_TOLERANCE_FRACTION * highest;
    let plateAmpsA = start;
    if (Math.abs(atStart) > tolerance) {
      let low = Math.min(highest, Math.max(0, start - atStart));
      let high = start;
      let atLow = this.excessA(injectedAmps, low, theveninVolts, theveninOhms);
      let atHigh = atStart;
      if (low > high) {
        [low, high, atLow, atHigh] = [high, low, atHigh, atLow];
      }
      if (!(atLow <= 0 && atHigh >= 0)) {
        // The slope bound failed (rounding, or an inner loop that is not monotone): use the whole
        // range; the equilibria found are verified afterwards.
        low = 0;
        high = highest;
        atLow = this.excessA(injectedAmps, 0, theveninVolts, theveninOhms);
        atHigh = this.excessA(injectedAmps, highest, theveninVolts, theveninOhms);
      }
      plateAmpsA = brentRoot(
        (current) => this.excessA(injectedAmps, current, theveninVolts, theveninOhms),
        low,
        high,
        atLow,
        atHigh,
        tolerance,
        INNER_ITERATION_CAP,
        "side A plate current",
        // q rises with slope ≥ 1: a residual within the tolerance is a current within it.
        tolerance,
      );
    }
    const point = this.pointAt(injectedAmps, plateAmpsA, this.keptTrialA(plateAmpsA));
    this.chained.set(injectedAmps, { point, plateAmpsA });
    this.chainedCurrents.splice(this.chainedIndex(injectedAmps), 0, injectedAmps);
    return point;
  }

  // ── equilibria ───────────────────────────────────────────────────────────

  /** Upper end of the swept current: no equilibrium can carry more through B. */
  private sweptRange(): number {
    const railAbove = Math.max(0, this.negativeRailVolts);
    let range = (this.bPlusVolts + railAbove) / this.b.plateLoadOhms + railAbove / this.b.couplingOhms;
    for (let doubling = 0; doubling <= MAX_RANGE_DOUBLINGS; doubling++) {
      if (this.chain(range).residualAmps < 0) return range;
      range *= 2;
    }
    throw new SolverError("could not find a plate current above every equilibrium");
  }

  /** The injected currents at which r(t) = 0, ascending; plus the swept range. */
  findEquilibria(sweepPoints: number): { roots: number[]; range: number } {
    const range = this.sweptRange();
    const tolerance = CURRENT_ROOT_TOLERANCE_FRACTION * range;
    let cells = sweepPoints;
    for (;;) {
      this.settledForcedVolts = undefined;
      this.settleSlope = 1;
      const currents: number[] = [];
      const residuals: number[] = [];
      for (let index = 0; index <= cells; index++) {
        const t = (range * index) / cells;
        currents.push(t);
        residuals.push(this.chain(t).residualAmps);
      }
      const roots = this.rootsFromSamples((t) => this.chain(t).residualAmps, currents, residuals, tolerance);
      if (roots.length >= 3 || cells >= REFINED_SWEEP_POINTS) return { roots, range };
      cells = Math.min(cells * 4, REFINED_SWEEP_POINTS);
    }
  }

  private rootsFromSamples(
    residual: (t: number) => number,
    currents: number[],
    residuals: number[],
    tolerance: number,
  ): number[] {
    const roots: number[] = [];
    const last = currents.length - 1;
    for (let index = 0; index <= last; index++) {
      const here = residuals[index];
      if (here === 0) {
        roots.push(currents[index]);
        continue;
      }
      if (index < last) {
        const next = residuals[index + 1];
        if (next !== 0 && here > 0 !== next > 0) {
          roots.push(
            brentRoot(residual, currents[index], currents[index + 1], here, next, tolerance, CURRENT_ROOT_ITERATION_CAP, "equilibrium"),
          );
        }
      }
    }
    // A pair of roots inside two cells shows up as a sampled extremum on the wrong side of zero.
    for (let index = 1; index < last; index++) {
      const before = residuals[index - 1];
      const here = residuals[index];
      const after = residuals[index + 1];
      const sameSign = (before > 0 && here > 0 && after > 0) || (before < 0 && here < 0 && after < 0);
      if (!sameSign) continue;
      const isLowMaximum = here < 0 && here >= before && here >= after;
      const isHighMinimum = here > 0 && here <= before && here <= after;
      if (!isLowMaximum && !isHighMinimum) continue;
      const sign = isLowMaximum ? 1 : -1;
      const lo = currents[index - 1];
      const hi = currents[index + 1];
      const extremum = goldenSectionMaximum((t) => sign * residual(t), lo, hi, tolerance, EXTREMUM_ITERATION_CAP);
      if (extremum.value > 0) {
        const atExtremum = sign * extremum.value;
        roots.push(brentRoot(residual, lo, extremum.x, before, atExtremum, tolerance, CURRENT_ROOT_ITERATION_CAP, "equilibrium"));
        roots.push(brentRoot(residual, extremum.x, hi, atExtremum, after, tolerance, CURRENT_ROOT_ITERATION_CAP, "equilibrium"));
      }
    }
    roots.sort((first, second) => first - second);
    return roots.filter((root, index) => index === 0 || root - roots[index - 1] > 10 * tolerance);
  }

  /** 1 + r'(t): the return ratio at B's controlled current. */
  returnRatio(injectedAmps: number, range: number): number {
    const step = RETURN_RATIO_STEP_FRACTION * range;
    const lower = Math.max(0, injectedAmps - step);
    const upper = injectedAmps + step;
    const slope = (this.chain(upper).residualAmps - this.chain(lower).residualAmps) / (upper - lower);
    return 1 + slope;
  }

  /** The circuit's side A / side B models. */
  get sideA(): SideModel {
    return this.swapped ? this.b : this.a;
  }

  get sideB(): SideModel {
    return this.swapped ? this.a : this.b;
  }

  /** Converts between solver and circuit orientation (the same swap both ways). */
  orient(point: ChainPoint): ChainPoint {
    return this.swapped ? { ...point, a: point.b, b: point.a } : point;
  }

  /**
   * Every equilibrium with its stability. The one-dimensional search is used when the broken
   * circuit is monotone; its roots are then verified (a jump in r(t) would pass for a root),
   * and the plane search takes over when that fails or when it is needed from the start.
   */
  solveEquilibria(sweepPoints: number): Equilibrium[] {
    if (!this.needsPlaneSearch) {
      const { roots, range } = this.findEquilibria(sweepPoints);
      const tolerance = ROOT_CHECK_AMPS + ROOT_CHECK_FRACTION * range;
      const points = roots.map((root) => this.chain(root));
      if (points.every((point) => Math.abs(point.residualAmps) <= tolerance)) {
        return points.map((point) => {
          const returnRatio = this.returnRatio(point.injectedAmps, range);
          return { point: this.orient(point), returnRatio, stable: returnRatio < 1 };
        });
      }
    }
    return this.planeEquilibria();
  }

  /**
   * Both plate currents forced: (t, i) ↦ (Ip_B − t, Ip_A − i) is single-valued. Sign changes
   * of both residuals on a grid (marching squares) seed a damped two-dimensional Newton.
   * Stability from the Jacobian J of that map: stable when det J > 0 and trace J < 0; the
   * return ratio is 1 + det J / J_ii (the one-dimensional figure with i eliminated).
   */
  private planeEquilibria(): Equilibrium[] {
    const rangeB = this.sweptRange();
    const rangeA = this.highestPlateAmpsA();
    let roots = this.planeRoots(rangeB, rangeA, PLANE_CELLS);
    // The contour of Ip_A = i runs from t = 0, where Ip_B − t ≥ 0, to the top of the range, where
    // it is < 0, so it crosses an odd number of times: an even count means two roots shared a cell.
    if (roots.length % 2 === 0) roots = this.planeRoots(rangeB, rangeA, PLANE_CELLS * PLANE_REFINEMENT);
    return roots.map(({ t, i }) => {
      const stepB = PLANE_JACOBIAN_FRACTION * rangeB;
      const stepA = PLANE_JACOBIAN_FRACTION * rangeA;
      const plusB = this.pointAt(t + stepB, i);
      const minusB = this.pointAt(Math.max(0, t - stepB), i);
      const plusA = this.pointAt(t, i + stepA);
      const minusA = this.pointAt(t, Math.max(0, i - stepA));
      const widthB = t + stepB - Math.max(0, t - stepB);
      const widthA = i + stepA - Math.max(0, i - stepA);
      const j11 = (plusB.residualAmps - minusB.residualAmps) / widthB;
      const j12 = (plusA.residualAmps - minusA.residualAmps) / widthA;
      const j21 = (plusB.residualAmpsA - minusB.residualAmpsA) / widthB;
      const j22 = (plusA.residualAmpsA - minusA.residualAmpsA) / widthA;
      const determinant = j11 * j22 - j12 * j21;
      const returnRatio = j22 === 0 ? Number.POSITIVE_INFINITY : 1 + determinant / j22;
      return { point: this.orient(this.pointAt(t, i)), returnRatio, stable: determinant > 0 && j11 + j22 < 0 };
    });
  }

  /** Distinct roots of both residuals found from a cells × cells grid over the box. */
  private planeRoots(rangeB: number, rangeA: number, cells: number): { t: number; i: number }[] {
    const found = this.planeSeeds(0, rangeB, 0, rangeA, cells).flatMap((seed) => {
      const refined = this.refineInPlane(seed, rangeB, rangeA);
      if (refined) return [refined];
      // A seed that will not converge: look closer around it before giving up.
      const stepB = rangeB / cells;
      const stepA = rangeA / cells;
      const closer = this.planeSeeds(
        Math.max(0, seed.t - stepB),
        Math.min(rangeB, seed.t + stepB),
        Math.max(0, seed.i - stepA),
        Math.min(rangeA, seed.i + stepA),
        PLANE_CLOSER_CELLS,
      )
        .map((candidate) => this.refineInPlane(candidate, rangeB, rangeA))
        .filter((candidate): candidate is { t: number; i: number } => candidate !== null);
      if (closer.length === 0) {
        throw new SolverError(`no convergence to the equilibrium near ${(seed.t * 1000).toFixed(4)} mA / ${(seed.i * 1000).toFixed(4)} mA`);
      }
      return closer;
    });
    const distinct: { t: number; i: number }[] = [];
    for (const candidate of found.sort((first, second) => first.t - second.t)) {
      const duplicate = distinct.some(
        (kept) => Math.abs(kept.t - candidate.t) <= PLANE_DUPLICATE_FRACTION * rangeB && Math.abs(kept.i - candidate.i) <= PLANE_DUPLICATE_FRACTION * rangeA,
      );
      if (!duplicate) distinct.push(candidate);
    }
    return distinct;
  }

  /** Seeds where the zero contour of Ip_A − i crosses a sign change of Ip_B − t, cell by cell. */
  private planeSeeds(lowB: number, highB: number, lowA: number, highA: number, cells: number): { t: number; i: number }[] {
    const residualsB: number[][] = [];
    const residualsA: number[][] = [];
    for (let row = 0; row <= cells; row++) {
      const t = lowB + ((highB - lowB) * row) / cells;
      const rowB: number[] = [];
      const rowA: number[] = [];
      for (let column = 0; column <= cells; column++) {
        const point = this.pointAt(t, lowA + ((highA - lowA) * column) / cells);
        rowB.push(point.residualAmps);
        rowA.push(point.residualAmpsA);
      }
      residualsB.push(rowB);
      residualsA.push(rowA);
    }
    const seeds: { t: number; i: number }[] = [];
    const corners = [
      [0, 0],
      [1, 0],
      [1, 1],
      [0, 1],
    ];
    for (let row = 0; row < cells; row++) {
      for (let column = 0; column < cells; column++) {
        const crossings: { t: number; i: number; residualB: number }[] = [];
        for (let edge = 0; edge < 4; edge++) {
          const [rowStep, columnStep] = corners[edge];
          const [nextRowStep, nextColumnStep] = corners[(edge + 1) % 4];
          const here = residualsA[row + rowStep][column + columnStep];
          const there = residualsA[row + nextRowStep][column + nextColumnStep];
          if (here > 0 === there > 0) continue;
          const fraction = here / (here - there);
          const atHere = residualsB[row + rowStep][column + columnStep];
          const atThere = residualsB[row + nextRowStep][column + nextColumnStep];
          const rowPosition = row + rowStep + (nextRowStep - rowStep) * fraction;
          const columnPosition = column + columnStep + (nextColumnStep - columnStep) * fraction;
          crossings.push({
            t: lowB + ((highB - lowB) * rowPosition) / cells,
            i: lowA + ((highA - lowA) * columnPosition) / cells,
            residualB: atHere + (atThere - atHere) * fraction,
          });
        }
        // Two crossings make one contour segment; four (a saddle) are paired both ways.
        const pairs =
          crossings.length === 2
            ? [[0, 1]]
            : crossings.length === 4
              ? [
                  [0, 1],
                  [2, 3],
                  [1, 2],
                  [3, 0],
                ]
              : [];
        for (const [first, second] of pairs) {
          const start = crossings[first];
          const end = crossings[second];
          if (start.residualB > 0 === end.residualB > 0) continue;
          const fraction = start.residualB / (start.residualB - end.residualB);
          seeds.push({ t: start.t + (end.t - start.t) * fraction, i: start.i + (end.i - start.i) * fraction });
        }
      }
    }
    return seeds;
  }

  /** Damped Newton on both residuals inside the box; null when it does not converge. */
  private refineInPlane(seed: { t: number; i: number }, rangeB: number, rangeA: number): { t: number; i: number } | null {
    const toleranceB = ROOT_CHECK_AMPS * 1e-3 + CURRENT_ROOT_TOLERANCE_FRACTION * rangeB;
    const toleranceA = ROOT_CHECK_AMPS * 1e-3 + CURRENT_ROOT_TOLERANCE_FRACTION * rangeA;
    let { t, i } = seed;
    let here = this.pointAt(t, i);
    for (let iteration = 0; iteration < PLANE_NEWTON_CAP; iteration++) {
      if (Math.abs(here.residualAmps) <= toleranceB && Math.abs(here.residualAmpsA) <= toleranceA) return { t, i };
      const stepB = PLANE_JACOBIAN_FRACTION * rangeB;
      const stepA = PLANE_JACOBIAN_FRACTION * rangeA;
      const alongB = this.pointAt(t + stepB, i);
      const alongA = this.pointAt(t, i + stepA);
      const j11 = (alongB.residualAmps - here.residualAmps) / stepB;
      const j12 = (alongA.residualAmps - here.residualAmps) / stepA;
      const j21 = (alongB.residualAmpsA - here.residualAmpsA) / stepB;
      const j22 = (alongA.residualAmpsA - here.residualAmpsA) / stepA;
      const determinant = j11 * j22 - j12 * j21;
      if (!(Math.abs(determinant) > 0) || !Number.isFinite(determinant)) return null;
      const deltaB = (-here.residualAmps * j22 + here.residualAmpsA * j12) / determinant;
      const deltaA = (-here.residualAmpsA * j11 + here.residualAmps * j21) / determinant;
      const current = Math.hypot(here.residualAmps / rangeB, here.residualAmpsA / rangeA);
      let accepted = false;
      for (let damping = 1; damping >= 1 / 1024; damping /= 2) {
        const nextB = Math.min(rangeB, Math.max(0, t + damping * deltaB));
        const nextA = Math.min(rangeA, Math.max(0, i + damping * deltaA));
        const candidate = this.pointAt(nextB, nextA);
        if (Math.hypot(candidate.residualAmps / rangeB, candidate.residualAmpsA / rangeA) < current) {
          t = nextB;
          i = nextA;
          here = candidate;
          accepted = true;
          break;
        }
      }
      if (!accepted) return null;
    }
    return null;
  }

  // ── small-signal and margin figures at a solved state ────────────────────

  /**
   * ∂(driven grid)/∂(driving grid) for one stage at a solved state: the plate load, the
   * divider and the driven grid's current are included; a side's own cathode resistor
   * degenerates its stage; a common cathode is held (in a pair it carries the sum
   * current, which the differential swing barely changes).
   */
  stageGain(fromInCircuit: "A" | "B", pointInCircuit: ChainPoint): number {
    const from = this.swapped ? (fromInCircuit === "A" ? "B" : "A") : fromInCircuit;
    const point = this.orient(pointInCircuit);
    const driving = from === "A" ? this.a : this.b;
    const driven = from === "A" ? this.b : this.a;
    const drivingNodes = from === "A" ? point.a : point.b;
    const drivenNodes = from === "A" ? point.b : point.a;
    const cathode = this.cathode;
    const ownCathodeOhms =
      cathode.kind === "separate" ? (from === "A" ? cathode.sideAOhms : cathode.sideBOhms) : 0;
    const step = STAGE_GAIN_STEP_VOLTS;
    const up = this.stageOutput(driving, driven, drivingNodes, drivenNodes.cathode, ownCathodeOhms, drivingNodes.grid + step);
    const down = this.stageOutput(driving, driven, drivingNodes, drivenNodes.cathode, ownCathodeOhms, drivingNodes.grid - step);
    return (up - down) / (2 * step);
  }

  /** The driven grid for one driving grid voltage, the driving side's own cathode resistor settled. */
  private stageOutput(
    driving: SideModel,
    driven: SideModel,
    drivingNodes: SideNodes,
    drivenCathodeVolts: number,
    ownCathodeOhms: number,
    gridVolts: number,
  ): number {
    const plateGuess = drivingNodes.plate;
    if (ownCathodeOhms === 0) {
      return this.stageAt(driving, driven, plateGuess, drivenCathodeVolts, gridVolts, drivingNodes.cathode).solved.driven.grid;
    }
    const cathodeVolts = monotoneRoot(
      (volts) =>
        volts - ownCathodeOhms * this.stageAt(driving, driven, plateGuess, drivenCathodeVolts, gridVolts, volts).cathodeAmps,
      0,
      this.highestSupplyVolts + 1,
      true,
      drivingNodes.cathode,
      CATHODE_GUESS_STEP_VOLTS,
      VOLTS_TOLERANCE,
      INNER_ITERATION_CAP,
      "stage cathode",
    );
    return this.stageAt(driving, driven, plateGuess, drivenCathodeVolts, gridVolts, cathodeVolts).solved.driven.grid;
  }

  /** The driving stage with its grid and cathode given: plate node, driven grid, and its cathode current. */
  private stageAt(
    driving: SideModel,
    driven: SideModel,
    plateGuess: number,
    drivenCathodeVolts: number,
    gridVolts: number,
    cathodeVolts: number,
  ): { solved: { plate: number; driven: DrivenGrid }; cathodeAmps: number } {
    const u = gridVolts - cathodeVolts;
    const x = this.screenOffsetFixedCathode(driving, u, cathodeVolts);
    const solved = this.solvePlate(
      driving,
      cathodeVolts,
      u,
      x,
      (volts, ohms) => this.drivenGridFixed(driven, volts, ohms, drivenCathodeVolts),
      plateGuess,
    );
    const cathodeAmps =
      this.plateAmps(driving, solved.plate - cathodeVolts, u, x) + this.gridAmps(driving, u) + this.screenAmps(driving, u, x);
    return { solved, cathodeAmps };
  }

  /**
   * Grid-to-cathode voltage at which `side` draws `thresholdAmps` at its present plate
   * and screen voltages. Null when no grid voltage reaches it (plate at or below cathode).
   */
  cutoffGridVolts(side: SideModel, nodes: SideNodes, thresholdAmps: number): number | null {
    const threshold = Math.max(thresholdAmps, MIN_CUTOFF_AMPS);
    const plateVolts = nodes.plate - nodes.cathode;
    const screenVolts = side.screen === null ? 0 : nodes.screen - nodes.cathode;
    const actual = nodes.grid - nodes.cathode;
    const atActual = this.plateAmps(side, plateVolts, actual, screenVolts) - threshold;
    if (atActual === 0) return actual;
    const direction = atActual < 0 ? 1 : -1;
    let stride = 1;
    let near = actual;
    let atNear = atActual;
    for (let expansion = 0; expansion < MAX_BRACKET_EXPANSIONS; expansion++) {
      const far = near + direction * stride;
      const atFar = this.plateAmps(side, plateVolts, far, screenVolts) - threshold;
      if (atFar === 0) return far;
      if (atFar > 0 !== atNear > 0) {
        const [low, high, atLow, atHigh] = direction > 0 ? [near, far, atNear, atFar] : [far, near, atFar, atNear];
        return brentRoot(
          (gridVolts) => this.plateAmps(side, plateVolts, gridVolts, screenVolts) - threshold,
          low,
          high,
          atLow,
          atHigh,
          VOLTS_TOLERANCE,
          INNER_ITERATION_CAP,
          "cut-off grid",
        );
      }
      near = far;
      atNear = atFar;
      stride *= 2;
    }
    return null;
  }
}
