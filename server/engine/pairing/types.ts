/** Shapes of the pairing engine; re-exported from index.ts. */

/** One tube section and its readings, in the fixed order the rule uses (e.g. [gm µS, Ia mA]). */
export interface PairingCandidate {
  id: string;
  /** Sections with the same tubeId share one envelope. */
  tubeId: string;
  /** 1-based section number inside the envelope. */
  section: number;
  values: number[];
}

/** Per value, the largest allowed |a − b| / mean(a, b); [0.03, 0.03] = each value within 3 %. */
export interface AcceptanceRule {
  maxRelativeDifference: number[];
}

/** How a value is named in explanations: { name: "gm", unit: "µS" }. */
export interface ValueLabel {
  name: string;
  unit?: string;
}

export interface PairingOptions {
  /** A tube's own sections may form a pair. */
  allowSameEnvelope: boolean;
  /** Sections of different tubes may form a pair. */
  allowAcrossEnvelopes: boolean;
  /** Keep only this many pairs: the best-balanced ones of the optimal pairing. */
  maxPairs?: number;
  /** Per value weight in the imbalance; default 1 for each value. */
  weights?: number[];
  /** Names and units for explanations; default "value 1", "value 2", … without unit. */
  valueLabels?: ValueLabel[];
}

export interface SectionPair {
  a: PairingCandidate;
  b: PairingCandidate;
  /** Σ weight_i × relative difference_i (a fraction, not percent). */
  imbalance: number;
  /** Relative difference per value (fractions), in rule order. */
  perValueDifference: number[];
  sameEnvelope: boolean;
  explanation: string;
}

export type LeftoverReasonCode =
  | "invalid-values"
  | "pairing-not-allowed"
  | "no-partner-within-rule"
  | "partner-only-in-same-envelope"
  | "partner-only-in-other-envelopes"
  | "partners-taken"
  | "beyond-max-pairs"
  | "not-paired-by-sort"
  | "no-set-within-rule";

export interface PairingLeftover {
  candidate: PairingCandidate;
  reasonCode: LeftoverReasonCode;
  reason: string;
}

export type PairingMethod = "exact-matching" | "same-envelope-only" | "sort-and-pair" | "none";

export interface PairingStats {
  method: PairingMethod;
  candidates: number;
  /** Candidates whose readings are usable (right count, positive, finite). */
  validCandidates: number;
  /** Admissible pairs the envelope policy allows (for sort-and-pair: neighbour pairs that passed). */
  admissibleEdges: number;
  /** Connected groups of candidates linked by admissible pairs (for sort-and-pair: runs of passing neighbours). */
  components: number;
  largestComponent: number;
  /** Pairs in the optimal (or sort-and-pair) pairing before maxPairs is applied. */
  pairsFound: number;
  /** Pairs returned. */
  pairs: number;
  /** Σ imbalance of the returned pairs. */
  totalImbalance: number;
  /** Most solve rounds a component needed before its optimum was proven (0 when no solve ran). */
  solveRounds: number;
  /** Edges the matching solver saw in its last round (0 when no solve ran). */
  solverEdges: number;
}

export interface PairingResult {
  /** Best-balanced first. */
  pairs: SectionPair[];
  leftovers: PairingLeftover[];
  stats: PairingStats;
}

export interface SectionGroup {
  members: PairingCandidate[];
  /** Per value, the largest relative difference between any two members (fractions). */
  perValueSpread: number[];
  /** Σ weight_i × perValueSpread_i. */
  imbalance: number;
  envelopes: number;
  explanation: string;
}

export interface GroupingOptions {
  weights?: number[];
  valueLabels?: ValueLabel[];
}

export interface GroupingResult {
  groups: SectionGroup[];
  leftovers: PairingLeftover[];
  stats: { candidates: number; validCandidates: number; groups: number; setSize: number; totalImbalance: number };
}
