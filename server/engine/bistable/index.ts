/**
 * DC states of a cross-coupled (Eccles–Jordan) pair of tubes: all equilibria, which are
 * stable, output levels, swing, cut-off margin of the off side, grid current of the on
 * side, loop gain; worst case and yield over tolerances; preferred-value resistor search.
 *
 * Each side: plate load RL to B+; a divider from its plate to the other side's grid
 * (coupling R1) and from that grid to the negative rail (grid return R2); optional
 * screen supply; cathodes grounded, on one common resistor, or on one resistor each.
 * Speed-up capacitors are open at DC and ignored.
 */
import { analyzeBistableImpl } from "./analysis.ts";
import {
  suggestResistorsImpl,
  type ResistorSearchOptions,
  type ResistorSearchResult,
  type ResistorSearchSupplies,
  type ResistorSearchTargets,
  type ResistorSearchTubes,
} from "./resistor-search.ts";
import type { PreferredSeries } from "./preferred-values.ts";
import type { AnalyzeBistableOptions, BistableAnalysis, BistableCircuit } from "./types.ts";
import {
  analyzeYieldImpl,
  directedWorstCaseImpl,
  type WorstFigures,
  type YieldOptions,
  type YieldResult,
} from "./yield.ts";

export type {
  AnalyzeBistableOptions,
  BistableAnalysis,
  BistableCircuit,
  BistableLevels,
  BistableSide,
  BistableState,
  CathodeCircuit,
  ScreenSupply,
  SideOperatingPoint,
} from "./types.ts";
export type { CaseVerdict, WorstFigures, YieldOptions, YieldResult, YieldThresholds } from "./yield.ts";
export { verdictFor } from "./yield.ts";
export type {
  ResistorSearchOptions,
  ResistorSearchResult,
  ResistorSearchSupplies,
  ResistorSearchTargets,
  ResistorSearchTubes,
  ResistorSuggestion,
  SearchTube,
} from "./resistor-search.ts";
export { E12_MANTISSAS, E24_MANTISSAS, preferredValuesInRange, type PreferredSeries } from "./preferred-values.ts";

/**
 * Finds every DC equilibrium of the pair and reports each state (node voltages,
 * plate/screen/grid currents, dissipation against the rating, which side is on, levels,
 * swing, cut-off margin of the off side, the on grid's current, return ratio) plus the
 * loop gain at the unstable state: the product of the two signed stage gains
 * (each stage inverts, so the product of a latching pair is positive and above 1).
 *
 * Method: the loop is broken at one tube's plate current t; every other node follows from
 * nested monotone one-dimensional solves; the equilibria are the roots of
 * r(t) = Ip(nodes for t) − t, found by a sweep over every current the tube could carry plus
 * Brent refinement, with extremum checks and sweep refinement so that close pairs of
 * roots are not missed, and each root verified. A state is stable when 1 + r'(t) (the
 * return ratio) is below 1. When no single break leaves the rest monotone (two screens on a
 * shared cathode) or a root fails verification, both plate currents are forced and the
 * plane of the two is searched (marching squares seeding a damped Newton; stability from
 * the Jacobian's determinant and trace).
 *
 * `bistable` is true only with a stable state for each side being on, the off side cut
 * off in both (plate current below 1 % of the on current by default) and loop gain above 1;
 * otherwise `reasons` says which condition fails. A numerical failure returns
 * bistable false with `solverFailure` set. Throws RangeError on impossible inputs
 * (non-positive resistors or B+, a pentode without a screen supply).
 *
 * Example: two 12AU7 sections, RL 27 kΩ, R1 = R2 = 220 kΩ, B+ 250 V, rail −150 V →
 * bistable, levels ≈ 222.8 V / 45.8 V, cut-off margin ≈ 32.7 V, loop gain ≈ 37.
 */
export function analyzeBistable(circuit: BistableCircuit, options?: AnalyzeBistableOptions): BistableAnalysis {
  return analyzeBistableImpl(circuit, options);
}

/**
 * Worst case and yield: the nominal case, ± corners of every factor (resistors,
 * supplies, each tube's current scale; full factorial up to maxCornerFactors, else a
 * reduced set), and a seeded Monte Carlo with resistors and supplies uniform within
 * tolerance and tubes spread uniformly (times a wear factor down to wornScale when given).
 * Each case passes when bistable with swing, cut-off margin and levels inside the
 * thresholds. Same seed, same result. Throws RangeError on out-of-range percentages.
 * Example: analyzeYield(circuit, { resistorTolerancePercent: 5, supplyDriftPercent: 5,
 *   tubeSpreadPercent: 20, trials: 1000, seed: 7, thresholds: { minSwingVolts: 100, minCutoffMarginVolts: 5 } })
 *   → { monteCarlo: { passFraction: 1, … }, corners: { evaluated: 1024, … } } for the example pair above.
 */
export function analyzeYield(circuit: BistableCircuit, options: YieldOptions): YieldResult {
  return analyzeYieldImpl(circuit, options);
}

/**
 * Sensitivity-directed worst case (at most 2k + 5 analyses for k factors): each factor
 * alone at both ends, then, per stable state and per figure (cut-off margin, swing), all
 * factors at the ends that hurt it. Returns the worst figures seen and how many analyses ran.
 * Example: directedWorstCase(circuit, { resistorTolerancePercent: 5, supplyDriftPercent: 5, tubeSpreadPercent: 20 }).evaluated → 25
 */
export function directedWorstCase(
  circuit: BistableCircuit,
  options: Pick<YieldOptions, "resistorTolerancePercent" | "supplyDriftPercent" | "tubeSpreadPercent" | "wornScale" | "analysis">,
): WorstFigures & { evaluated: number } {
  return directedWorstCaseImpl(circuit, options);
}

/**
 * Searches E12/E24 values for a symmetric design (the same RL, R1, R2 on both sides) that
 * reaches the target high and low levels: plate loads ranked by the on side's estimated
 * plate voltage, coupling resistors by the off side's estimated plate voltage, grid returns
 * from the divider ratios that both clamp the on grid and cut the off side off; the
 * survivors are analysed, and those meeting the targets ranked by their directed worst-case
 * cut-off margin. Returns the top N with their analyses, or { ok: false, reason } when
 * nothing in the ranges meets the targets. Throws RangeError on inconsistent targets.
 * Example: suggestResistors({ sideA: { tube: 12AU7 } }, { bPlusVolts: 250, negativeRailVolts: -150 },
 *   { highLevelVolts: 220, lowLevelVolts: 50 }, "E12")
 *   → { ok: true, suggestions: [{ plateLoadOhms: 39000, couplingOhms: 330000, gridReturnOhms: 270000, … }, …] }
 */
export function suggestResistors(
  tubes: ResistorSearchTubes,
  supplies: ResistorSearchSupplies,
  targets: ResistorSearchTargets,
  series: PreferredSeries,
  options?: ResistorSearchOptions,
): ResistorSearchResult {
  return suggestResistorsImpl(tubes, supplies, targets, series, options);
}
export { transferCurves } from "./transfer-curves.ts";
