import type { TubeElement } from "../models/index.ts";
import { analyzeBistableImpl } from "./analysis.ts";
import { preferredValuesInRange, type PreferredSeries } from "./preferred-values.ts";
import { brentRoot } from "./root-finding.ts";
import type { BistableAnalysis, BistableCircuit, CathodeCircuit, ScreenSupply } from "./types.ts";
import { directedWorstCaseImpl, type WorstFigures } from "./yield.ts";

export interface SearchTube {
  tube: TubeElement;
  currentScale?: number;
  screen?: ScreenSupply;
}

export interface ResistorSearchTubes {
  sideA: SearchTube;
  /** Defaults to the same as side A. */
  sideB?: SearchTube;
}

export interface ResistorSearchSupplies {
  bPlusVolts: number;
  negativeRailVolts: number;
  cathode?: CathodeCircuit;
}

export interface ResistorSearchTargets {
  highLevelVolts: number;
  lowLevelVolts: number;
  /** Nominal levels must land within ± this; default 10 V. */
  toleranceVolts?: number;
  /** Nominal cut-off margin required; default 0 V. */
  minCutoffMarginVolts?: number;
}

export interface ResistorSearchOptions {
  topN?: number;
  plateLoadRangeOhms?: { min: number; max: number };
  dividerRangeOhms?: { min: number; max: number };
  resistorTolerancePercent?: number;
  supplyDriftPercent?: number;
  tubeSpreadPercent?: number;
  wornScale?: number;
  /** Plate loads, coupling resistors and grid returns kept at each stage of the search; default 4. */
  candidatesPerStage?: number;
}

export interface ResistorSuggestion {
  plateLoadOhms: number;
  couplingOhms: number;
  gridReturnOhms: number;
  analysis: BistableAnalysis;
  /** Largest distance of a nominal level from its target. */
  levelErrorVolts: number;
  worstCase: WorstFigures & { evaluated: number };
}

export type ResistorSearchResult =
  | { ok: true; suggestions: ResistorSuggestion[]; analysesRun: number }
  | { ok: false; reason: string; analysesRun: number };

const DEFAULTS = {
  topN: 5,
  plateLoad: { min: 4_700, max: 220_000 },
  divider: { min: 22_000, max: 2_200_000 },
  resistorTolerancePercent: 5,
  supplyDriftPercent: 5,
  tubeSpreadPercent: 15,
  candidatesPerStage: 4,
  toleranceVolts: 10,
};
const ESTIMATE_TOLERANCE_AMPS = 1e-9;
const ESTIMATE_TOLERANCE_VOLTS = 1e-4;
const ESTIMATE_ITERATION_CAP = 200;
/** How far above its cathode the on grid's open-circuit drive should reach for a firm clamp. */
const CLAMP_DRIVE_VOLTS = 2;
const CUTOFF_FRACTION = 0.01;

function screenVoltsFor(search: SearchTube): number {
  const screen = search.screen;
  if (!screen || !search.tube.hasScreen) return 0;
  return screen.kind === "fixed" ? screen.volts : screen.supplyVolts;
}

function cathodeOhmsFor(cathode: CathodeCircuit | undefined, which: "A" | "B"): number {
  if (!cathode || cathode.kind === "grounded") return 0;
  if (cathode.kind === "common") return cathode.ohms;
  return which === "A" ? cathode.sideAOhms : cathode.sideBOhms;
}

/** On side with its grid at its cathode: I = Ip(B+ − (RL + Rk)·I, 0). */
function estimateOn(search: SearchTube, bPlusVolts: number, plateLoadOhms: number, cathodeOhms: number) {
  const scale = search.currentScale ?? 1;
  const screenVolts = screenVoltsFor(search);
  const highest = bPlusVolts / (plateLoadOhms + cathodeOhms);
  const residual = (amps: number) =>
    amps - scale * search.tube.plateAmps(bPlusVolts - (plateLoadOhms + cathodeOhms) * amps, 0, screenVolts - cathodeOhms * amps);
  const atZero = residual(0);
  const amps = atZero >= 0 ? 0 : brentRoot(residual, 0, highest, atZero, residual(highest), ESTIMATE_TOLERANCE_AMPS, ESTIMATE_ITERATION_CAP, "on estimate");
  return { amps, plateVolts: bPlusVolts - plateLoadOhms * amps, cathodeVolts: cathodeOhms * amps };
}

/** Grid-to-cathode voltage at which the off tube draws 1 % of the on current, at its estimated plate voltage. */
function estimateCutoffGrid(search: SearchTube, plateToCathodeVolts: number, onAmps: number): number {
  const scale = search.currentScale ?? 1;
  const screenVolts = screenVoltsFor(search);
  const threshold = Math.max(CUTOFF_FRACTION * onAmps, 1e-9);
  const residual = (grid: number) => scale * search.tube.plateAmps(plateToCathodeVolts, grid, screenVolts) - threshold;
  let low = -1;
  for (let expansion = 0; residual(low) > 0 && expansion < 40; expansion++) low *= 2;
  const atLow = residual(low);
  const atZero = residual(0);
  if (atLow > 0 || atZero < 0) return low;
  return brentRoot(residual, low, 0, atLow, atZero, ESTIMATE_TOLERANCE_VOLTS, ESTIMATE_ITERATION_CAP, "cut-off estimate");
}

function closest<T>(items: T[], distance: (item: T) => number, count: number): T[] {
  return [...items].sort((first, second) => distance(first) - distance(second)).slice(0, count);
}

/** Up to `count` entries spread evenly across a sorted list (ends and middle included). */
function spreadAcross<T>(items: T[], count: number): T[] {
  if (items.length <= count) return items;
  const picked: T[] = [];
  for (let index = 0; index < count; index++) picked.push(items[Math.round((index * (items.length - 1)) / (count - 1))]);
  return [...new Set(picked)];
}

/** Implements suggestResistors (documented in index.ts). Throws RangeError on inconsistent targets. */
export function suggestResistorsImpl(
  tubes: ResistorSearchTubes,
  supplies: ResistorSearchSupplies,
  targets: ResistorSearchTargets,
  series: PreferredSeries,
  options: ResistorSearchOptions = {},
): ResistorSearchResult {
  const sideA = tubes.sideA;
  const sideB = tubes.sideB ?? tubes.sideA;
  if (!(targets.highLevelVolts > targets.lowLevelVolts)) throw new RangeError("the high level must be above the low level");
  if (!(targets.highLevelVolts < supplies.bPlusVolts)) throw new RangeError("the high level must be below B+");
  const topN = options.topN ?? DEFAULTS.topN;
  const perStage = Math.max(1, options.candidatesPerStage ?? DEFAULTS.candidatesPerStage);
  const toleranceVolts = targets.toleranceVolts ?? DEFAULTS.toleranceVolts;
  const minMargin = targets.minCutoffMarginVolts ?? 0;
  const plateRange = options.plateLoadRangeOhms ?? DEFAULTS.plateLoad;
  const dividerRange = options.dividerRangeOhms ?? DEFAULTS.divider;
  const rail = supplies.negativeRailVolts;
  const bPlus = supplies.bPlusVolts;
  const cathodeA = cathodeOhmsFor(supplies.cathode, "A");
  const cathodeB = cathodeOhmsFor(supplies.cathode, "B");

  // Stage 1: plate loads whose on-side plate lands near the low target.
  const plateLoads = closest(
    preferredValuesInRange(series, plateRange.min, plateRange.max),
    (load) => {
      const onA = estimateOn(sideA, bPlus, load, cathodeA).plateVolts;
      const onB = estimateOn(sideB, bPlus, load, cathodeB).plateVolts;
      return Math.max(Math.abs(onA - targets.lowLevelVolts), Math.abs(onB - targets.lowLevelVolts));
    },
    perStage,
  );
  const dividerValues = preferredValuesInRange(series, dividerRange.min, dividerRange.max);
  const candidates: { plateLoadOhms: number; couplingOhms: number; gridReturnOhms: number }[] = [];
  for (const plateLoadOhms of plateLoads) {
    const onA = estimateOn(sideA, bPlus, plateLoadOhms, cathodeA);
    const onB = estimateOn(sideB, bPlus, plateLoadOhms, cathodeB);
    const onCathode = Math.max(onA.cathodeVolts, onB.cathodeVolts);
    // Stage 2: with the on grid clamped near its cathode, the off plate is a divider of B+ through RL and R1.
    const offPlate = (coupling: number) => onCathode + ((bPlus - onCathode) * coupling) / (coupling + plateLoadOhms);
    for (const couplingOhms of closest(dividerValues, (coupling) => Math.abs(offPlate(coupling) - targets.highLevelVolts), perStage)) {
      const high = offPlate(couplingOhms);
      const low = Math.max(onA.plateVolts, onB.plateVolts);
      // Stage 3: the divider ratio ρ = R2/(R1+R2) must drive the on grid above its cathode and
      // hold the off grid below cut-off with the margin asked for.
      const ratioMin = (onCathode + CLAMP_DRIVE_VOLTS - rail) / (high - rail);
      const cutoffA = estimateCutoffGrid(sideA, high, onB.amps);
      const cutoffB = estimateCutoffGrid(sideB, high, onA.amps);
      const ratioMax = (Math.min(cutoffA, cutoffB) - minMargin - rail) / (low - rail);
      const ratioOf = (gridReturn: number) => gridReturn / (couplingOhms + gridReturn);
      const feasible = dividerValues.filter((gridReturn) => ratioOf(gridReturn) >= ratioMin && ratioOf(gridReturn) <= ratioMax);
      const chosen =
        feasible.length > 0
          ? spreadAcross(feasible, perStage)
          : closest(dividerValues, (gridReturn) => Math.abs(ratioOf(gridReturn) - (ratioMin + ratioMax) / 2), 2);
      for (const gridReturnOhms of chosen) candidates.push({ plateLoadOhms, couplingOhms, gridReturnOhms });
    }
  }

  const circuitFor = (values: (typeof candidates)[number]): BistableCircuit => ({
    bPlusVolts: bPlus,
    negativeRailVolts: rail,
    cathode: supplies.cathode,
    sideA: { ...sideA, ...values },
    sideB: { ...sideB, ...values },
  });
  let analysesRun = 0;
  const nominal = candidates
    .map((values) => {
      const analysis = analyzeBistableImpl(circuitFor(values));
      analysesRun += 1;
      const levels = analysis.levels;
      const levelErrorVolts = levels
        ? Math.max(Math.abs(levels.highLevelVolts - targets.highLevelVolts), Math.abs(levels.lowLevelVolts - targets.lowLevelVolts))
        : Number.POSITIVE_INFINITY;
      return { values, analysis, levelErrorVolts };
    })
    .filter(
      (entry) =>
        entry.analysis.bistable &&
        entry.levelErrorVolts <= toleranceVolts &&
        (entry.analysis.levels?.cutoffMarginVolts ?? Number.NEGATIVE_INFINITY) >= minMargin,
    )
    .sort((first, second) => (second.analysis.levels?.cutoffMarginVolts ?? 0) - (first.analysis.levels?.cutoffMarginVolts ?? 0));
  if (nominal.length === 0) {
    return {
      ok: false,
      reason: `no ${series} combination in the searched ranges reaches ${targets.highLevelVolts} V / ${targets.lowLevelVolts} V within ±${toleranceVolts} V as a bistable with ${minMargin} V cut-off margin`,
      analysesRun,
    };
  }
  const worstCaseOptions = {
    resistorTolerancePercent: options.resistorTolerancePercent ?? DEFAULTS.resistorTolerancePercent,
    supplyDriftPercent: options.supplyDriftPercent ?? DEFAULTS.supplyDriftPercent,
    tubeSpreadPercent: options.tubeSpreadPercent ?? DEFAULTS.tubeSpreadPercent,
    wornScale: options.wornScale,
  };
  const suggestions = nominal.slice(0, 2 * topN).map((entry) => {
    const worstCase = directedWorstCaseImpl(circuitFor(entry.values), worstCaseOptions);
    analysesRun += worstCase.evaluated;
    return { ...entry.values, analysis: entry.analysis, levelErrorVolts: entry.levelErrorVolts, worstCase };
  });
  const worstMargin = (suggestion: ResistorSuggestion) =>
    suggestion.worstCase.notBistableCount > 0 ? Number.NEGATIVE_INFINITY : (suggestion.worstCase.cutoffMarginVolts ?? Number.NEGATIVE_INFINITY);
  suggestions.sort((first, second) => {
    const [marginFirst, marginSecond] = [worstMargin(first), worstMargin(second)];
    if (marginFirst !== marginSecond) return marginFirst > marginSecond ? -1 : 1;
    return first.levelErrorVolts - second.levelErrorVolts;
  });
  return { ok: true, suggestions: suggestions.slice(0, topN), analysesRun };
}
