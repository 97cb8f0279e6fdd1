import type { TubeElement } from "../models/index.ts";

/** Screen supply of a pentode side: a fixed screen voltage (to ground) or a resistor from a supply. */
export type ScreenSupply = { kind: "fixed"; volts: number } | { kind: "resistor"; supplyVolts: number; ohms: number };

/**
 * One side of the pair. The divider belongs to the side whose plate drives it:
 * `couplingOhms` runs from this side's plate to the other side's grid, and
 * `gridReturnOhms` from the other side's grid to the negative rail.
 */
export interface BistableSide {
  tube: TubeElement;
  /** Extra multiplier on plate and screen current (tube spread or wear); default 1. */
  currentScale?: number;
  plateLoadOhms: number;
  couplingOhms: number;
  gridReturnOhms: number;
  /** Required when the tube has a screen. */
  screen?: ScreenSupply;
  /** Across the coupling resistor; open at DC, accepted and ignored here. */
  speedUpCapacitorFarads?: number;
  /** Overrides the tube's own rating. */
  maxPlateWatts?: number;
}

export type CathodeCircuit =
  | { kind: "grounded" }
  | { kind: "common"; ohms: number }
  | { kind: "separate"; sideAOhms: number; sideBOhms: number };

export interface BistableCircuit {
  bPlusVolts: number;
  /** The rail the grid-return resistors go to, usually negative. */
  negativeRailVolts: number;
  sideA: BistableSide;
  sideB: BistableSide;
  /** Default: grounded cathodes. */
  cathode?: CathodeCircuit;
}

export interface SideOperatingPoint {
  /** All node voltages are to ground. */
  plateVolts: number;
  gridVolts: number;
  cathodeVolts: number;
  screenVolts: number | null;
  plateMilliamps: number;
  screenMilliamps: number;
  gridMilliamps: number;
  cathodeMilliamps: number;
  /** Plate current × plate-to-cathode voltage. */
  plateWatts: number;
  maxPlateWatts: number | null;
  overDissipation: boolean;
  /** The tube model is evaluated outside the range its parameters were fitted over. */
  outsideValidity: boolean;
}

export interface BistableState {
  stable: boolean;
  /** The side carrying more plate current in a stable state; null for the unstable state. */
  onSide: "A" | "B" | null;
  sideA: SideOperatingPoint;
  sideB: SideOperatingPoint;
  /** Off side's plate voltage (stable states only). */
  highLevelVolts: number | null;
  /** On side's plate voltage (stable states only). */
  lowLevelVolts: number | null;
  swingVolts: number | null;
  /** Grid-to-cathode voltage at which the off side's plate current falls to the cut-off current. */
  cutoffGridVolts: number | null;
  /** Cut-off grid voltage minus the off side's actual grid-to-cathode voltage; positive = safely cut off. */
  cutoffMarginVolts: number | null;
  onGridMilliamps: number | null;
  /**
   * Bode return ratio of the loop broken at one tube's plate current (side B's, or side A's
   * when only side B has a screen and the cathode is shared): inject that current, read back
   * what the tube then draws, d(read)/d(injected). Below 1 the state is stable, above 1 not.
   */
  returnRatio: number;
}

export interface BistableLevels {
  /** Lowest off-side plate voltage over the stable states. */
  highLevelVolts: number;
  /** Highest on-side plate voltage over the stable states. */
  lowLevelVolts: number;
  swingVolts: number;
  cutoffMarginVolts: number;
  onGridMilliamps: number;
}

export interface BistableAnalysis {
  bistable: boolean;
  /** Why it is not a usable bistable, in plain words; empty when it is. */
  reasons: string[];
  /** Dissipation over rating, model used outside its range while conducting. */
  warnings: string[];
  /** Stable states first (A on, then B on), then unstable ones. */
  states: BistableState[];
  /** Worst levels over the stable states; null unless two stable states exist. */
  levels: BistableLevels | null;
  /** Product of the two stage gains at the unstable state (or at the only state); null if none. */
  loopGain: number | null;
  stageGains: { aToB: number; bToA: number } | null;
  cutoffDefinition: string;
  /** Set when a numerical solve failed; the analysis is then incomplete. */
  solverFailure?: string;
}

export interface AnalyzeBistableOptions {
  /** Cells in the first sweep of side B's plate current; default 32. */
  sweepPoints?: number;
  /** The off side counts as cut off when its plate current is below this fraction of the on side's; default 0.01. */
  cutoffFractionOfOnCurrent?: number;
}
