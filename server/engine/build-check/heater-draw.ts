/** How much heater current one tube draws on a parallel heater supply. */
import { HEATER_RATING_MATCH_FRACTION } from "../substitution/index.ts";
import type { HeaterSpec } from "../tube-types/index.ts";
import type { HeaterDraw } from "./types.ts";

export type HeaterDrawResult = ({ ok: true } & HeaterDraw) | { ok: false; reason: string };

function matches(ratedVolts: number, supplyVolts: number): boolean {
  return Math.abs(supplyVolts - ratedVolts) <= HEATER_RATING_MATCH_FRACTION * ratedVolts;
}

/**
 * The heater current of one tube on a parallel supply of `supplyVolts`: its full rating when the
 * supply matches the heater volts, the centre-tapped halves in parallel when it matches the
 * half volts, nothing for a type without a heater (cold-cathode regulators). A supply matches a
 * rating within HEATER_RATING_MATCH_FRACTION (the substitute ranker's rule).
 *
 * Returns { ok: false, reason } when the tube cannot run on that supply.
 *
 * @example heaterDrawOnSupply({ volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } }, 6.3)
 *   // → { ok: true, mode: "half", volts: 6.3, amps: 0.3 }
 */
export function heaterDrawOnSupply(heater: HeaterSpec, supplyVolts: number): HeaterDrawResult {
  if (!(heater.volts > 0) || !(heater.amps > 0)) return { ok: true, mode: "none", volts: 0, amps: 0 };
  if (matches(heater.volts, supplyVolts)) return { ok: true, mode: "full", volts: heater.volts, amps: heater.amps };
  const half = heater.centreTap?.half;
  if (half && matches(half.volts, supplyVolts)) return { ok: true, mode: "half", volts: half.volts, amps: half.amps };
  const ratings = half ? `${heater.volts} V (or ${half.volts} V with the halves in parallel)` : `${heater.volts} V`;
  return { ok: false, reason: `heater runs at ${ratings}, not on a ${supplyVolts} V supply` };
}
