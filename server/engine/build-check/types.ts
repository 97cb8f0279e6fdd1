/** Shapes of the build check's question and answer; re-exported by index.ts. */
import type { TubeTypeSpec } from "../tube-types/index.ts";

// ── The question ─────────────────────────────────────────────────────────────────────────────

export type LineKind = "bistable" | "single" | "rectifier";

export interface HeaterSupplyPlan {
  name: string;
  volts: number;
  amps: number;
}

/** A DC supply: its voltage and the current it can deliver. */
export interface DirectSupplyPlan {
  volts: number;
  milliamps: number;
}

export interface BuildSupplies {
  heater: HeaterSupplyPlan[];
  bPlus: DirectSupplyPlan;
  /** Null when the grid returns go to ground (0 V). */
  negativeRail: DirectSupplyPlan | null;
}

/** The same resistor values on both sides of every stage of a bistable line. */
export interface BistableResistors {
  plateLoadOhms: number;
  /** Plate of one side to the grid of the other. */
  couplingOhms: number;
  /** Grid to the negative rail (or to ground without one). */
  gridReturnOhms: number;
  /** One resistor shared by both cathodes; null for grounded cathodes. */
  cathodeOhms: number | null;
}

/** What each section of a single-stage line runs at. */
export interface SingleStageValues {
  plateVolts: number;
  plateMilliamps: number;
  screenMilliamps: number | null;
}

export interface SparesRule {
  percent: number;
  /** Where the percentage comes from ("common practice, no source" for the default). */
  source: string;
}

export interface BuildLinePlan {
  /** Stable identity of the line (its database id as text); allocations name it. */
  key: string;
  /** How the report names it: "Line 2". */
  label: string;
  kind: LineKind;
  /** Canonical designation of the type the line is designed for. */
  designation: string;
  /** Stages (bistable: pairs of sections; single: one section each) or tubes (rectifier lines). */
  count: number;
  /** 0-based index into supplies.heater. */
  heaterSupplyIndex: number;
  spares: SparesRule;
  allowSubstitutes: boolean;
  /** Substitute designations the owner accepted, in order of preference; used only when allowSubstitutes. */
  acceptedSubstitutes: string[];
  resistors?: BistableResistors;
  operating?: SingleStageValues;
  /** Rectifier/regulator lines: current each draws from B+ (a regulator's shunt current); null or absent = none. */
  loadMilliamps?: number | null;
}

/**
 * One section's newest reading, reduced to the value pairs are balanced on. Values are only
 * compared within one basis (same kind of value at the same test conditions).
 */
export interface SectionBalanceReading {
  section: number;
  /** Transconductance in µS, or the emission value when the newest reading has no gm; null when neither. */
  balanceValue: number | null;
  /** E.g. "gm µS at 250 V / -8.5 V"; readings of different bases are never compared. */
  balanceBasis: string;
}

export interface StockTube {
  id: number;
  label: string;
  designation: string;
  location: string;
  /** Verdict of the newest session: good, worn, failed, untested, not-comparable. */
  verdict: string;
  /** stock, reserved, installed, retired. */
  state: string;
  /** Lowest percent of reference over the sections in the newest reading, when comparable. */
  percentOfReference: number | null;
  sections: SectionBalanceReading[];
}

export type SlotRole = "stage" | "spare";

/** One section's place in a line: stage 3 side A, spare 1 side B, tube 4 (side ""). */
export interface AllocationSlot {
  role: SlotRole;
  number: number;
  /** "A"/"B" for bistable pairs, "" for single stages and whole tubes. */
  side: "A" | "B" | "";
  /** Section of the tube that fills the slot; 0 = the whole tube (rectifier lines). */
  section: number;
}

/** A tube already allocated to this build. */
export interface AllocatedTube extends StockTube {
  allocationId: number;
  lineKey: string;
  status: "reserved" | "installed";
  slots: AllocationSlot[];
}

export interface BuildCheckInput {
  supplies: BuildSupplies;
  /** Largest |a − b| / mean(a, b) of the balance values within a bistable pair, percent. */
  balanceRule: { maxDifferencePercent: number; source: string };
  lines: BuildLinePlan[];
  /** Every known type: specs for the lines and the substitute ranker's library. */
  library: TubeTypeSpec[];
  /** Tubes the build may take: verdict good, state stock, allocated to no build. */
  freeStock: StockTube[];
  /** This build's allocated tubes (any verdict). */
  allocations: AllocatedTube[];
  /** Substitute options listed per short line; default 6. */
  maxSubstituteOptions?: number;
  /**
   * False skips the substitute options (a reservation needs only the plan); the free stock may
   * then hold just the types the lines and their accepted substitutes use. Default true.
   */
  substituteOptions?: boolean;
}

// ── The answer ───────────────────────────────────────────────────────────────────────────────

/** How a stage's currents were found. */
export type StageLoadBasis = "koren-solve" | "typical-point" | "plate-load-bound" | "given-values" | "none";

/** Per stage (bistable: the pair; single: one section; rectifier line: one tube). */
export interface StageLoad {
  basis: StageLoadBasis;
  bPlusMilliamps: number;
  negativeRailMilliamps: number;
  plateWatts: number;
  /** One sentence saying where the figures come from. */
  note: string;
  /** Bistable lines solved with a model: whether the values latch; null when not solved. */
  bistable: boolean | null;
  /** Solver reasons and warnings (not bistable, over dissipation, model outside its range). */
  warnings: string[];
  /** The on side's plate volts and current (bistable), for the substitute ranker; null when unknown. */
  onSide: { plateVolts: number; plateMilliamps: number } | null;
}

/** The part of a line served by one type. */
export interface LineShare {
  designation: string;
  substitute: boolean;
  /** True for the stages still to be bought (shortfall), counted as the line's own type. */
  toBuy: boolean;
  stages: number;
  spares: number;
  /** Tubes that carry the stages (and so draw heater current); spares are not powered. */
  poweredTubes: number;
  heater: HeaterDraw | null;
  load: StageLoad;
}

export interface HeaterDraw {
  /** "full": across the heater ends; "half": a centre-tapped heater's halves in parallel; "none": no heater. */
  mode: "full" | "half" | "none";
  volts: number;
  amps: number;
}

export interface PlannedTube {
  tubeId: number;
  label: string;
  designation: string;
  location: string;
  lineKey: string;
  slots: AllocationSlot[];
}

export interface SubstituteOption {
  designation: string;
  relation: string;
  accepted: boolean;
  /** Good tubes of this type free at this line's turn. */
  goodAvailable: number;
  /** Stages (or tubes) they could fill now: balanced pairs for bistable lines. */
  stagesCoverable: number;
  /** Covers the line's remaining shortfall (stages and spares) on its own. */
  wouldClose: boolean;
  /** Bistable lines: the solver's word on these resistor values with this type, or why it was not asked. */
  solverCheck: string;
  pinFit: string;
  heaterFit: string;
  explanation: string[];
}

export interface LineCheck {
  key: string;
  label: string;
  kind: LineKind;
  designation: string;
  count: number;
  spareCount: number;
  spares: SparesRule;
  /** Good tubes of the line's own type open to it: free at its turn plus those already allocated to it. */
  goodAvailable: number;
  /** Bistable lines: balanced pairs of the line's type in the free stock at its turn; null otherwise. */
  pairsFound: number | null;
  coveredStages: number;
  coveredSpares: number;
  shortfallStages: number;
  shortfallSpares: number;
  /** Stages already allocated (reserved or installed) to this line. */
  allocatedStages: number;
  /** Allocated stages whose flagged tube has no replacement in stock (part of shortfallStages). */
  stagesAwaitingReplacement: number;
  usesSubstitutes: boolean;
  shares: LineShare[];
  planned: PlannedTube[];
  substitutes: SubstituteOption[];
  /** Why no options are listed, or how many more were left out. */
  substitutesNote: string;
  problems: string[];
  notes: string[];
}

export interface HeaterSupplyBudget {
  index: number;
  name: string;
  volts: number;
  ampsAvailable: number;
  ampsUsed: number;
  wattsAvailable: number;
  wattsUsed: number;
  over: boolean;
  contributions: Array<{ lineLabel: string; designation: string; tubes: number; ampsEach: number; mode: HeaterDraw["mode"] }>;
}

export interface DirectSupplyBudget {
  volts: number;
  milliampsAvailable: number;
  milliampsUsed: number;
  over: boolean;
  contributions: Array<{ lineLabel: string; designation: string; stages: number; milliampsEach: number; basis: StageLoadBasis }>;
}

export interface BuildBudgets {
  heaterSupplies: HeaterSupplyBudget[];
  heaterWatts: { used: number; available: number; over: boolean };
  bPlus: DirectSupplyBudget;
  negativeRail: DirectSupplyBudget | null;
  /** Σ plate dissipation of every powered stage, watts. */
  plateDissipationWatts: number;
}

export interface Replacement {
  tubeId: number;
  label: string;
  location: string;
  /** E.g. "gm 2140 µS against partner 2180 µS (1.9 %, within the 5 % rule)". */
  note: string;
  withinRule: boolean;
  /** The slots the replacement takes: the flagged tube's, with the sections that match best. */
  slots: AllocationSlot[];
}

export interface FlaggedTube {
  allocationId: number;
  tubeId: number;
  label: string;
  designation: string;
  lineKey: string;
  lineLabel: string;
  verdict: string;
  state: string;
  slots: AllocationSlot[];
  reason: string;
  replacement: Replacement | null;
}

export interface BuyItem {
  designation: string;
  quantity: number;
  why: string;
}

export type BuildVerdict = "ready" | "ready-with-substitutes" | "short";

export interface BuildCheckResult {
  verdict: BuildVerdict;
  /** Everything that decided the verdict, in plain words. */
  verdictReasons: string[];
  lines: LineCheck[];
  budgets: BuildBudgets;
  flagged: FlaggedTube[];
  buyList: BuyItem[];
  /** Tubes a reservation would allocate now (missing stages and spares), in line order. */
  reservationPlan: PlannedTube[];
  balanceRule: { maxDifferencePercent: number; source: string };
  /** The method's standing assumptions, for the report. */
  assumptions: string[];
}
