/**
 * Shapes of the substitute ranker's questions and answers. Re-exported by index.ts, the only
 * public entry of this engine.
 */
import type { TubeTypeSpec } from "../tube-types/index.ts";

// ── The question ─────────────────────────────────────────────────────────────────────────────

export type HeaterSupply =
  | { kind: "parallel"; volts: number }
  | { kind: "series"; amps: number; stringWarmUpSeconds?: number };

/** What the circuit really applies to one section of the socket's tube. */
export interface CircuitOperatingValues {
  /** Section of the socket type (1-based, as in its pin map). */
  section: number;
  plateVolts: number;
  plateMilliamps: number;
  screenVolts?: number;
  /** Screen current; when absent the cathode-current check uses plate current alone and says so. */
  screenMilliamps?: number;
  heaterCathodeVolts?: number;
  /** Plate load of the stage; when absent the gain comparison assumes RL = 2·rp of the socket type. */
  plateLoadOhms?: number;
}

export interface CharacteristicTolerances {
  transconductancePercent: number;
  muPercent: number;
  plateResistancePercent: number;
}

export interface SocketDescription {
  /** The type the socket was designed and wired for. */
  socketType: TubeTypeSpec;
  heaterSupply: HeaterSupply;
  /** The circuit's real values per section; default: the socket type's first typical point per used section. */
  operating?: CircuitOperatingValues[];
  /** The owner will move wires at the socket. */
  allowRewire: boolean;
  /** A base adapter (or a pin-crossing adapter on the same base) is acceptable. */
  allowAdapter: boolean;
  /**
   * Socket pins that carry a wire. Default: every electrode pin of the socket type. Heater pins
   * always follow the heater supply (which heater pins the socket type uses on it) and need not
   * be listed. A listed pin that is NC on the socket type is a tie point (a terminal anchoring
   * parts) and must land on an unconnected pin of the substitute.
   */
  usedPins?: string[];
  tolerances?: CharacteristicTolerances;
  /** Fraction of each maximum rating the circuit may use, in (0, 1]. Default `DEFAULT_DERATING_FACTOR`. */
  deratingFactor?: number;
}

export interface StockCount {
  designation: string;
  good: number;
}

// ── The answer ───────────────────────────────────────────────────────────────────────────────

/** The socket lead now on `fromPin` is unsoldered and soldered to `toPin`. */
export interface PinMove {
  /** The socket type's element at `fromPin` (what the lead served in the original wiring). */
  element: string;
  section?: number;
  fromPin: string;
  toPin: string;
  description: string;
}

/** A new jumper from `fromPin` (which carries the right lead after the moves) to `toPin`. */
export interface PinJumper {
  element: string;
  section?: number;
  fromPin: string;
  toPin: string;
  description: string;
}

/** A socket lead that must come off `pin` because the substitute has something else there. */
export interface PinRemoval {
  element: string;
  section?: number;
  pin: string;
  description: string;
}

/** One connection inside an adapter: socket pins of one function → substitute pins of that function. */
export interface AdapterConnection {
  element: string;
  section?: number;
  socketPins: string[];
  candidatePins: string[];
}

export interface SectionMappingEntry {
  socketSection: number;
  candidateSection: number;
}

export type PinFitKind = "direct" | "rewire" | "adapter";

export interface PinFit {
  fit: PinFitKind;
  /** Rewire only: leads to move, to be done after `removals`. */
  moves: PinMove[];
  /** Rewire only: jumpers to add after the moves. */
  jumpers: PinJumper[];
  /** Rewire only: leads to take off first. */
  removals: PinRemoval[];
  /** Adapter only: what the adapter connects. */
  adapterMap: AdapterConnection[];
  sectionMapping: SectionMappingEntry[];
  /** moves + jumpers + removals: the soldering work of a rewire. */
  operationCount: number;
  note: string;
}

export type HeaterFitKind = "same" | "compatible" | "needs-change";

export interface HeaterFit {
  fit: HeaterFitKind;
  details: string;
  /** Substitute heater current minus the socket type's, on this supply. 0 on a series string that accepts it. */
  heaterCurrentDeltaAmps: number;
  seriesStringNote?: string;
  /** "full": across the heater ends; "half": halves in parallel, centre tap to one side. */
  candidateMode: "full" | "half" | "none";
  candidateHeaterVolts: number;
  candidateHeaterAmps: number;
}

export interface RatingCheck {
  /** Name of the rating, as in `MaxRatings`: plateVolts, plateWatts, screenVolts, cathodeMilliamps, heaterCathodeVolts. */
  rating: string;
  /** Socket section whose circuit value is checked (absent for whole-tube ratings). */
  section?: number;
  circuitValue: number;
  maxValue: number;
  deratedMax: number;
  /** (deratedMax − circuitValue) / deratedMax × 100; negative when exceeded. */
  headroomPercent: number;
  ok: boolean;
}

export interface SmallSignalValues {
  transconductanceMicroSiemens: number | null;
  mu: number | null;
  plateResistanceOhms: number | null;
}

export interface SectionCharacteristics {
  socketSection: number;
  candidateSection: number;
  socketValues: SmallSignalValues;
  candidateValues: SmallSignalValues;
  gmDeltaPercent: number | null;
  muDeltaPercent: number | null;
  rpDeltaPercent: number | null;
  plateLoadOhms: number | null;
  plateLoadAssumed: boolean;
  socketGain: number | null;
  candidateGain: number | null;
  gainChangePercent: number | null;
}

export interface CharacteristicComparison {
  /** Values of the used section whose gain changes most (the worst case). null when the data lack them. */
  gmDeltaPercent: number | null;
  muDeltaPercent: number | null;
  rpDeltaPercent: number | null;
  gainChangePercent: number | null;
  note: string;
  sections: SectionCharacteristics[];
  /** RMS of (delta / tolerance) over the available deltas; 0 = identical. */
  distance: number;
  outsideTolerance: string[];
}

export type SubstituteRelation = "same-type" | "variant" | "substitute";

export interface Candidate {
  designation: string;
  relation: SubstituteRelation;
  /** Higher is better; see `scoreCandidate` for how the digits are packed. */
  score: number;
  pins: PinFit;
  heater: HeaterFit;
  ratings: RatingCheck[];
  characteristics: CharacteristicComparison;
  inStockGood: number;
  explanation: string[];
}

export interface Excluded {
  designation: string;
  reasons: string[];
}

export interface SubstituteRanking {
  candidates: Candidate[];
  excluded: Excluded[];
}

// ── The reverse question ─────────────────────────────────────────────────────────────────────

export interface SocketsForTypeOptions {
  /** One supply for every socket; default: each socket type's own natural supply (parallel at its full heater volts). */
  heaterSupply?: HeaterSupply;
  allowRewire: boolean;
  allowAdapter: boolean;
  tolerances?: CharacteristicTolerances;
  deratingFactor?: number;
  stock?: StockCount[];
}

export interface SocketFit {
  socketDesignation: string;
  heaterSupply: HeaterSupply;
  candidate: Candidate;
}

export interface SocketMiss {
  socketDesignation: string;
  reasons: string[];
}

export interface SocketsForTypeResult {
  fits: SocketFit[];
  misses: SocketMiss[];
}
