/**
 * Build check: a design (supplies and lines of bistable stages, single stages, rectifiers or
 * regulators) against the stock — good tubes free, balanced pairs, accepted substitutes and the
 * ranker's other options, shortfall and spares, heater / B+ / negative-rail budgets, plate
 * dissipation, allocated tubes that no longer read good with a proposed replacement, a verdict
 * and a buy list. Also the plan a reservation would allocate.
 *
 * Pure: no IO, no clock, no randomness. The only public entry of this engine.
 */
import { checkBuildImpl } from "./check-build.ts";
import type { BuildCheckInput, BuildCheckResult } from "./types.ts";

export type {
  AllocatedTube,
  AllocationSlot,
  BistableResistors,
  BuildBudgets,
  BuildCheckInput,
  BuildCheckResult,
  BuildLinePlan,
  BuildSupplies,
  BuildVerdict,
  BuyItem,
  DirectSupplyBudget,
  DirectSupplyPlan,
  FlaggedTube,
  HeaterDraw,
  HeaterSupplyBudget,
  HeaterSupplyPlan,
  LineCheck,
  LineKind,
  LineShare,
  PlannedTube,
  Replacement,
  SectionBalanceReading,
  SingleStageValues,
  SlotRole,
  SparesRule,
  StageLoad,
  StageLoadBasis,
  StockTube,
  SubstituteOption,
} from "./types.ts";
export { heaterDrawOnSupply, type HeaterDrawResult } from "./heater-draw.ts";
export { amplifyingSections, bistableStageLoad, rectifierLoad, singleStageLoad } from "./stage-load.ts";
export { spareCountFor, tubesForStages } from "./line-coverage.ts";
export { buildBudgets, BUDGET_ROUNDING_TOLERANCE } from "./budgets.ts";
export { flagReason, relativeDifferenceOf } from "./replacements.ts";
export { EXACT_PAIRING_MAX_SECTIONS } from "./stock-pool.ts";
export { DEFAULT_MAX_SUBSTITUTE_OPTIONS } from "./substitute-options.ts";

/** Spares when a line says nothing: a tenth of its count. */
export const DEFAULT_SPARES_PERCENT = 10;
export const DEFAULT_SPARES_SOURCE = "common practice, no source";
/** Largest gm difference within a bistable pair when a build says nothing. */
export const DEFAULT_BALANCE_PERCENT = 5;
export const DEFAULT_BALANCE_SOURCE = "rule of thumb chosen for this product, no source";

/**
 * Checks a build against the stock. Lines are served in order, each from its own allocations,
 * then the free stock of its own type, then its accepted substitutes; flagged allocated tubes
 * get their replacements before any line takes new tubes.
 *
 * Returns the verdict ("ready" | "ready-with-substitutes" | "short") with its reasons, per line
 * coverage (good tubes, pairs found, shortfall, spares, substitute options, shares per type with
 * heater draw and stage currents), budgets, flagged tubes, the buy list and the reservation
 * plan. Throws RangeError on a malformed input (balance rule outside (0, 100) %, a count that is
 * not a positive whole number, a bistable line without resistors, a single-stage line without
 * operating values, two lines with one key). Problems of the design itself (an unknown type, a
 * heater that cannot run on its supply) are reported in the result, never thrown.
 *
 * @example 4 bistable stages of 12AU7 (RL 27 kΩ, R1 = R2 = 220 kΩ) on 6.3 V 2 A, B+ 250 V 100 mA,
 *   rail −150 V 10 mA, over a stock of 5 good 12AU7 whose sections balance within 5 %
 *   → verdict "ready"; heater 4 × 0.3 A = 1.2 A; B+ ≈ 4 × 8.57 mA; 1 spare (10 %, rounded up).
 */
export function checkBuild(input: BuildCheckInput): BuildCheckResult {
  return checkBuildImpl(input);
}
