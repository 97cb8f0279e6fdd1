/** The ranking order packed into one number. */
import type { HeaterFitKind, PinFitKind, SubstituteRelation } from "./types.ts";

export interface ScoreParts {
  relation: SubstituteRelation;
  pinFit: PinFitKind;
  operationCount: number;
  heaterFit: HeaterFitKind;
  characteristicDistance: number;
  /** Least headroom over the checked ratings, percent; null when no rating could be checked. */
  leastHeadroomPercent: number | null;
  inStockGood: number;
}

const RELATION_POINTS: Record<SubstituteRelation, number> = { "same-type": 2, variant: 1, substitute: 0 };
const HEATER_POINTS: Record<HeaterFitKind, number> = { same: 9, compatible: 6, "needs-change": 3 };

function pinPoints(fit: PinFitKind, operationCount: number): number {
  if (fit === "direct") return 99;
  if (fit === "rewire") return Math.max(30, 60 - 3 * operationCount);
  return 20;
}

/**
 * Score, higher is better. Each criterion owns a band of decimal digits, so the number sorts
 * exactly like the criteria taken in order (a better earlier criterion always wins):
 *
 *   relation × 10⁹     same type 2, variant 1, other 0
 * + pin fit × 10⁷      direct 99, rewire 60 − 3 per operation (at least 30), adapter 20
 * + heater × 10⁶       same 9, compatible 6, needs change 3
 * + closeness × 10³    round(999 · e^(−distance)), distance = RMS of (delta / tolerance) of gm, µ, rp,
 *                     plus CUTOFF_MISMATCH_DISTANCE when sharp and remote cutoff meet
 * + headroom × 10      least rating headroom in percent, clamped to 0…99 (0 when unchecked)
 * + stock              good tubes in stock, capped at 9
 *
 * Example: a same-type direct fit, same heater, identical characteristics, 16.7 % headroom,
 * 3 in stock → 2·10⁹ + 99·10⁷ + 9·10⁶ + 999·10³ + 16·10 + 3 = 2 999 999 163.
 */
export function scoreCandidate(parts: ScoreParts): number {
  const closeness = Math.round(999 * Math.exp(-Math.max(0, parts.characteristicDistance)));
  const headroom = parts.leastHeadroomPercent === null ? 0 : Math.min(99, Math.max(0, Math.floor(parts.leastHeadroomPercent)));
  const stock = Math.min(9, Math.max(0, Math.floor(parts.inStockGood)));
  return (
    RELATION_POINTS[parts.relation] * 1e9 +
    pinPoints(parts.pinFit, parts.operationCount) * 1e7 +
    HEATER_POINTS[parts.heaterFit] * 1e6 +
    closeness * 1e3 +
    headroom * 10 +
    stock
  );
}
