/** Heater, B+ and negative-rail budgets of a build from its lines' shares. */
import type { BuildBudgets, BuildLinePlan, BuildSupplies, DirectSupplyBudget, HeaterSupplyBudget, LineCheck } from "./types.ts";

/**
 * A budget is over when use exceeds what is available by more than this fraction: sums of
 * rounded datasheet currents (0.15 A × 40 = 6.000000000000001) must not tip a budget over.
 */
export const BUDGET_ROUNDING_TOLERANCE = 1e-9;

function isOver(used: number, available: number): boolean {
  return used > available * (1 + BUDGET_ROUNDING_TOLERANCE) + BUDGET_ROUNDING_TOLERANCE;
}

/**
 * Sums the lines' shares against the supplies. Heater: per supply, tubes that carry stages ×
 * their draw on that supply (spares unpowered); watts = supply volts × amps drawn. B+: stages ×
 * each stage's B+ current (rectifier lines: tubes × the load given). Negative rail: bistable
 * stages × their grid-return current. Plate dissipation: stages × each stage's plate watts.
 *
 * @example two 12AU7 on a 6.3 V 1 A supply, centre-tapped halves in parallel at 0.3 A each
 *   // → heaterSupplies[0]: ampsUsed 0.6, wattsUsed 3.78, over false
 */
export function buildBudgets(lines: LineCheck[], plans: BuildLinePlan[], supplies: BuildSupplies): BuildBudgets {
  const heaterSupplies: HeaterSupplyBudget[] = supplies.heater.map((supply, index) => ({
    index,
    name: supply.name,
    volts: supply.volts,
    ampsAvailable: supply.amps,
    ampsUsed: 0,
    wattsAvailable: supply.volts * supply.amps,
    wattsUsed: 0,
    over: false,
    contributions: [],
  }));
  const bPlus: DirectSupplyBudget = { volts: supplies.bPlus.volts, milliampsAvailable: supplies.bPlus.milliamps, milliampsUsed: 0, over: false, contributions: [] };
  const negativeRail: DirectSupplyBudget | null = supplies.negativeRail
    ? { volts: supplies.negativeRail.volts, milliampsAvailable: supplies.negativeRail.milliamps, milliampsUsed: 0, over: false, contributions: [] }
    : null;
  let plateDissipationWatts = 0;
  const planByKey = new Map(plans.map((plan) => [plan.key, plan]));

  for (const line of lines) {
    const plan = planByKey.get(line.key);
    const supply = plan ? heaterSupplies[plan.heaterSupplyIndex] : undefined;
    for (const share of line.shares) {
      if (supply && share.heater && share.poweredTubes > 0) {
        const amps = share.poweredTubes * share.heater.amps;
        supply.ampsUsed += amps;
        supply.wattsUsed += supply.volts * amps;
        supply.contributions.push({ lineLabel: line.label, designation: share.designation, tubes: share.poweredTubes, ampsEach: share.heater.amps, mode: share.heater.mode });
      }
      if (share.stages > 0 && share.load.bPlusMilliamps > 0) {
        bPlus.milliampsUsed += share.stages * share.load.bPlusMilliamps;
        bPlus.contributions.push({ lineLabel: line.label, designation: share.designation, stages: share.stages, milliampsEach: share.load.bPlusMilliamps, basis: share.load.basis });
      }
      if (negativeRail && share.stages > 0 && share.load.negativeRailMilliamps > 0) {
        negativeRail.milliampsUsed += share.stages * share.load.negativeRailMilliamps;
        negativeRail.contributions.push({ lineLabel: line.label, designation: share.designation, stages: share.stages, milliampsEach: share.load.negativeRailMilliamps, basis: share.load.basis });
      }
      plateDissipationWatts += share.stages * share.load.plateWatts;
    }
  }
  for (const supply of heaterSupplies) supply.over = isOver(supply.ampsUsed, supply.ampsAvailable);
  bPlus.over = isOver(bPlus.milliampsUsed, bPlus.milliampsAvailable);
  if (negativeRail) negativeRail.over = isOver(negativeRail.milliampsUsed, negativeRail.milliampsAvailable);
  const wattsUsed = heaterSupplies.reduce((sum, supply) => sum + supply.wattsUsed, 0);
  const wattsAvailable = heaterSupplies.reduce((sum, supply) => sum + supply.wattsAvailable, 0);
  return {
    heaterSupplies,
    heaterWatts: { used: wattsUsed, available: wattsAvailable, over: isOver(wattsUsed, wattsAvailable) },
    bPlus,
    negativeRail,
    plateDissipationWatts,
  };
}
