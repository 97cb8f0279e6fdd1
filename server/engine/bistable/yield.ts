import { analyzeBistableImpl } from "./analysis.ts";
import { seededUniform } from "./prng.ts";
import type { AnalyzeBistableOptions, BistableAnalysis, BistableCircuit, BistableSide } from "./types.ts";

export interface YieldThresholds {
  minSwingVolts: number;
  minCutoffMarginVolts: number;
  maxLowLevelVolts?: number;
  minHighLevelVolts?: number;
}

export interface YieldOptions {
  /** Every resistor within ± this percent of its value. */
  resistorTolerancePercent: number;
  /** B+, the negative rail and screen supplies within ± this percent. */
  supplyDriftPercent: number;
  /** Each tube's current scale within ± this percent of new. */
  tubeSpreadPercent: number;
  /** A tube worn down to this current scale (e.g. 0.7) is still accepted; extends the low end. */
  wornScale?: number;
  trials: number;
  seed: number;
  thresholds: YieldThresholds;
  /** Corners are a full factorial up to this many factors (default 10), beyond that a reduced set. */
  maxCornerFactors?: number;
  analysis?: AnalyzeBistableOptions;
}

export interface WorstFigures {
  /** Smallest swing, cut-off margin and high level, largest low level, over the bistable cases; null when none was. */
  swingVolts: number | null;
  cutoffMarginVolts: number | null;
  lowLevelVolts: number | null;
  highLevelVolts: number | null;
  notBistableCount: number;
}

export interface CaseVerdict {
  pass: boolean;
  failures: string[];
}

export interface YieldResult {
  factors: string[];
  nominal: CaseVerdict & { analysis: BistableAnalysis };
  corners: {
    method: "full-factorial" | "reduced";
    evaluated: number;
    passed: number;
    passFraction: number;
    worst: WorstFigures;
    /** Up to ten failing corners, each as the list of factors at their high (+) or low (−) end. */
    failing: { corner: string; failures: string[] }[];
  };
  monteCarlo: {
    trials: number;
    seed: number;
    passed: number;
    passFraction: number;
    worst: WorstFigures;
  };
}

const DEFAULT_MAX_CORNER_FACTORS = 10;
const FAILING_CORNERS_KEPT = 10;

interface Factor {
  name: string;
  /** Applies the factor at position p ∈ [−1, 1] (−1 low end, +1 high end). */
  apply(circuit: BistableCircuit, position: number): BistableCircuit;
  /** Monte Carlo draw when it differs from a uniform position in [−1, 1]. */
  sample?(circuit: BistableCircuit, uniform: () => number): BistableCircuit;
}

function withSide(circuit: BistableCircuit, which: "A" | "B", change: (side: BistableSide) => BistableSide): BistableCircuit {
  return which === "A" ? { ...circuit, sideA: change(circuit.sideA) } : { ...circuit, sideB: change(circuit.sideB) };
}

function buildFactors(circuit: BistableCircuit, options: YieldOptions): Factor[] {
  const resistor = options.resistorTolerancePercent / 100;
  const drift = options.supplyDriftPercent / 100;
  const spread = options.tubeSpreadPercent / 100;
  const factors: Factor[] = [];
  for (const which of ["A", "B"] as const) {
    for (const field of ["plateLoadOhms", "couplingOhms", "gridReturnOhms"] as const) {
      factors.push({
        name: `side ${which} ${field}`,
        apply: (base, position) => withSide(base, which, (side) => ({ ...side, [field]: side[field] * (1 + resistor * position) })),
      });
    }
    const side = which === "A" ? circuit.sideA : circuit.sideB;
    if (side.tube.hasScreen && side.screen?.kind === "resistor") {
      factors.push({
        name: `side ${which} screen resistor`,
        apply: (base, position) =>
          withSide(base, which, (current) =>
            current.screen?.kind === "resistor"
              ? { ...current, screen: { ...current.screen, ohms: current.screen.ohms * (1 + resistor * position) } }
              : current,
          ),
      });
    }
    if (side.tube.hasScreen && side.screen) {
      factors.push({
        name: `side ${which} screen supply`,
        apply: (base, position) =>
          withSide(base, which, (current) => {
            const screen = current.screen;
            if (!screen) return current;
            return screen.kind === "fixed"
              ? { ...current, screen: { ...screen, volts: screen.volts * (1 + drift * position) } }
              : { ...current, screen: { ...screen, supplyVolts: screen.supplyVolts * (1 + drift * position) } };
          }),
      });
    }
    // The low end reaches the wear threshold when one is given: a tube that still passes the tester.
    const lowScale = Math.min(1 - spread, options.wornScale ?? 1 - spread);
    const highScale = 1 + spread;
    factors.push({
      name: `side ${which} tube`,
      apply: (base, position) =>
        withSide(base, which, (current) => ({
          ...current,
          currentScale:
            (current.currentScale ?? 1) * (position >= 0 ? 1 + (highScale - 1) * position : 1 + (1 - lowScale) * position),
        })),
      // New-tube spread, times (with a wear threshold) a wear factor uniform between the threshold and new.
      sample: (base, uniform) => {
        const spreadFactor = 1 + spread * (2 * uniform() - 1);
        const wornScale = options.wornScale;
        const wear = wornScale === undefined ? 1 : wornScale + (1 - wornScale) * uniform();
        return withSide(base, which, (current) => ({ ...current, currentScale: (current.currentScale ?? 1) * spreadFactor * wear }));
      },
    });
  }
  const cathode = circuit.cathode;
  if (cathode?.kind === "common" && cathode.ohms > 0) {
    factors.push({
      name: "common cathode resistor",
      apply: (base, position) =>
        base.cathode?.kind === "common" ? { ...base, cathode: { ...base.cathode, ohms: base.cathode.ohms * (1 + resistor * position) } } : base,
    });
  }
  if (cathode?.kind === "separate") {
    for (const field of ["sideAOhms", "sideBOhms"] as const) {
      if (cathode[field] > 0) {
        factors.push({
          name: `${field === "sideAOhms" ? "side A" : "side B"} cathode resistor`,
          apply: (base, position) =>
            base.cathode?.kind === "separate"
              ? { ...base, cathode: { ...base.cathode, [field]: base.cathode[field] * (1 + resistor * position) } }
              : base,
        });
      }
    }
  }
  factors.push({
    name: "B+",
    apply: (base, position) => ({ ...base, bPlusVolts: base.bPlusVolts * (1 + drift * position) }),
  });
  if (circuit.negativeRailVolts !== 0) {
    factors.push({
      name: "negative rail",
      apply: (base, position) => ({ ...base, negativeRailVolts: base.negativeRailVolts * (1 + drift * position) }),
    });
  }
  return factors;
}

/**
 * Pass/fail of one analysed case against the thresholds, with the failures in words.
 * Example: verdictFor(analysis, { minSwingVolts: 100, minCutoffMarginVolts: 5 }) → { pass: true, failures: [] }
 */
export function verdictFor(analysis: BistableAnalysis, thresholds: YieldThresholds): CaseVerdict {
  if (!analysis.bistable || !analysis.levels) {
    return { pass: false, failures: analysis.reasons.length > 0 ? analysis.reasons : ["not bistable"] };
  }
  const { levels } = analysis;
  const failures: string[] = [];
  if (levels.swingVolts < thresholds.minSwingVolts) {
    failures.push(`swing ${levels.swingVolts.toFixed(1)} V below ${thresholds.minSwingVolts} V`);
  }
  if (levels.cutoffMarginVolts < thresholds.minCutoffMarginVolts) {
    failures.push(`cut-off margin ${levels.cutoffMarginVolts.toFixed(2)} V below ${thresholds.minCutoffMarginVolts} V`);
  }
  if (thresholds.maxLowLevelVolts !== undefined && levels.lowLevelVolts > thresholds.maxLowLevelVolts) {
    failures.push(`low level ${levels.lowLevelVolts.toFixed(1)} V above ${thresholds.maxLowLevelVolts} V`);
  }
  if (thresholds.minHighLevelVolts !== undefined && levels.highLevelVolts < thresholds.minHighLevelVolts) {
    failures.push(`high level ${levels.highLevelVolts.toFixed(1)} V below ${thresholds.minHighLevelVolts} V`);
  }
  return { pass: failures.length === 0, failures };
}

class WorstTracker {
  private figures: WorstFigures = {
    swingVolts: null,
    cutoffMarginVolts: null,
    lowLevelVolts: null,
    highLevelVolts: null,
    notBistableCount: 0,
  };

  add(analysis: BistableAnalysis): void {
    const levels = analysis.levels;
    if (!analysis.bistable || !levels) {
      this.figures.notBistableCount += 1;
      return;
    }
    const keepLower = (current: number | null, value: number) => (current === null ? value : Math.min(current, value));
    const keepHigher = (current: number | null, value: number) => (current === null ? value : Math.max(current, value));
    this.figures.swingVolts = keepLower(this.figures.swingVolts, levels.swingVolts);
    this.figures.cutoffMarginVolts = keepLower(this.figures.cutoffMarginVolts, levels.cutoffMarginVolts);
    this.figures.highLevelVolts = keepLower(this.figures.highLevelVolts, levels.highLevelVolts);
    this.figures.lowLevelVolts = keepHigher(this.figures.lowLevelVolts, levels.lowLevelVolts);
  }

  result(): WorstFigures {
    return { ...this.figures };
  }
}

function cornerPositions(factorCount: number, maxFactors: number, seed: number): { method: "full-factorial" | "reduced"; corners: number[][] } {
  if (factorCount <= maxFactors) {
    const corners: number[][] = [];
    for (let mask = 0; mask < 2 ** factorCount; mask++) {
      corners.push(Array.from({ length: factorCount }, (_, bit) => ((mask >> bit) & 1 ? 1 : -1)));
    }
    return { method: "full-factorial", corners };
  }
  // Too many factors for 2^k: each factor alone at both ends, all high, all low, and
  // a seeded sample of 2^maxFactors random corners.
  const corners: number[][] = [];
  for (let index = 0; index < factorCount; index++) {
    for (const end of [-1, 1]) corners.push(Array.from({ length: factorCount }, (_, other) => (other === index ? end : 0)));
  }
  corners.push(new Array(factorCount).fill(1), new Array(factorCount).fill(-1));
  const uniform = seededUniform(seed ^ 0x5bd1e995);
  for (let sample = 0; sample < 2 ** maxFactors; sample++) {
    corners.push(Array.from({ length: factorCount }, () => (uniform() < 0.5 ? -1 : 1)));
  }
  return { method: "reduced", corners };
}

function describeCorner(factors: Factor[], positions: number[]): string {
  return factors
    .map((factor, index) => (positions[index] > 0 ? `${factor.name} +` : positions[index] < 0 ? `${factor.name} −` : ""))
    .filter((part) => part !== "")
    .join(", ");
}

/** Implements analyzeYield (documented in index.ts). Throws RangeError on out-of-range options. */
export function analyzeYieldImpl(circuit: BistableCircuit, options: YieldOptions): YieldResult {
  for (const [name, value] of [
    ["resistorTolerancePercent", options.resistorTolerancePercent],
    ["supplyDriftPercent", options.supplyDriftPercent],
    ["tubeSpreadPercent", options.tubeSpreadPercent],
  ] as const) {
    if (!(value >= 0 && value < 100)) throw new RangeError(`${name} must be between 0 and 100`);
  }
  if (options.wornScale !== undefined && !(options.wornScale > 0 && options.wornScale <= 1)) {
    throw new RangeError("wornScale must be in (0, 1]");
  }
  if (!Number.isInteger(options.trials) || options.trials < 0) throw new RangeError("trials must be a whole number ≥ 0");
  const factors = buildFactors(circuit, options);
  const analyze = (candidate: BistableCircuit) => analyzeBistableImpl(candidate, options.analysis);
  const apply = (positions: number[]) =>
    factors.reduce((current, factor, index) => (positions[index] === 0 ? current : factor.apply(current, positions[index])), circuit);

  const nominalAnalysis = analyze(circuit);
  const nominal = { ...verdictFor(nominalAnalysis, options.thresholds), analysis: nominalAnalysis };

  const { method, corners } = cornerPositions(factors.length, options.maxCornerFactors ?? DEFAULT_MAX_CORNER_FACTORS, options.seed);
  const cornerWorst = new WorstTracker();
  let cornersPassed = 0;
  const failing: { corner: string; failures: string[] }[] = [];
  for (const positions of corners) {
    const analysis = analyze(apply(positions));
    cornerWorst.add(analysis);
    const verdict = verdictFor(analysis, options.thresholds);
    if (verdict.pass) cornersPassed += 1;
    else if (failing.length < FAILING_CORNERS_KEPT) failing.push({ corner: describeCorner(factors, positions), failures: verdict.failures });
  }

  const uniform = seededUniform(options.seed);
  const monteWorst = new WorstTracker();
  let trialsPassed = 0;
  for (let trial = 0; trial < options.trials; trial++) {
    // Resistors and supplies uniform within tolerance (common practice, no source for the shape).
    let candidate = circuit;
    for (const factor of factors) {
      candidate = factor.sample ? factor.sample(candidate, uniform) : factor.apply(candidate, 2 * uniform() - 1);
    }
    const analysis = analyze(candidate);
    monteWorst.add(analysis);
    if (verdictFor(analysis, options.thresholds).pass) trialsPassed += 1;
  }

  return {
    factors: factors.map((factor) => factor.name),
    nominal,
    corners: {
      method,
      evaluated: corners.length,
      passed: cornersPassed,
      passFraction: corners.length === 0 ? 0 : cornersPassed / corners.length,
      worst: cornerWorst.result(),
      failing,
    },
    monteCarlo: {
      trials: options.trials,
      seed: options.seed,
      passed: trialsPassed,
      passFraction: options.trials === 0 ? 0 : trialsPassed / options.trials,
      worst: monteWorst.result(),
    },
  };
}

/**
 * Sensitivity-directed worst case: every factor alone at both ends, then, for each
 * stable state (A on, B on) and each figure (cut-off margin, swing), every factor
 * together at the end that hurt that figure in that state. Far cheaper than 2^k corners
 * and finds the usual worst vertex when each figure moves monotonically with each factor.
 */
export function directedWorstCaseImpl(
  circuit: BistableCircuit,
  options: Pick<YieldOptions, "resistorTolerancePercent" | "supplyDriftPercent" | "tubeSpreadPercent" | "wornScale" | "analysis">,
): WorstFigures & { evaluated: number } {
  const factors = buildFactors(circuit, { ...options, trials: 0, seed: 0, thresholds: { minSwingVolts: 0, minCutoffMarginVolts: 0 } });
  const tracker = new WorstTracker();
  let evaluated = 0;
  const analyze = (positions: number[]) => {
    const candidate = factors.reduce(
      (current, factor, index) => (positions[index] === 0 ? current : factor.apply(current, positions[index])),
      circuit,
    );
    const analysis = analyzeBistableImpl(candidate, options.analysis);
    evaluated += 1;
    tracker.add(analysis);
    return analysis;
  };
  const figure = (analysis: BistableAnalysis, onSide: "A" | "B", pick: "cutoffMarginVolts" | "swingVolts") => {
    const state = analysis.bistable ? analysis.states.find((candidate) => candidate.onSide === onSide) : undefined;
    return state?.[pick] ?? Number.NEGATIVE_INFINITY;
  };
  analyze(factors.map(() => 0));
  const targets = [
    ["A", "cutoffMarginVolts"],
    ["B", "cutoffMarginVolts"],
    ["A", "swingVolts"],
    ["B", "swingVolts"],
  ] as const;
  const directions = targets.map(() => [] as number[]);
  for (let index = 0; index < factors.length; index++) {
    const low = analyze(factors.map((_, other) => (other === index ? -1 : 0)));
    const high = analyze(factors.map((_, other) => (other === index ? 1 : 0)));
    targets.forEach(([onSide, pick], target) => {
      directions[target].push(figure(low, onSide, pick) <= figure(high, onSide, pick) ? -1 : 1);
    });
  }
  const tried = new Set<string>();
  for (const direction of directions) {
    const key = direction.join(",");
    if (tried.has(key)) continue;
    tried.add(key);
    analyze(direction);
  }
  return { ...tracker.result(), evaluated };
}
