/** The reverse question: which sockets could a type on the shelf fill? */
import type { TubeTypeSpec } from "../tube-types/index.ts";
import type { HeaterSupply, SocketFit, SocketMiss, SocketsForTypeOptions, SocketsForTypeResult } from "./types.ts";
import { heaterModeOnSupply } from "./heater-fit.ts";
import { rankSubstitutes } from "./rank-substitutes.ts";

/**
 * A socket type's natural heater supply: parallel at its full heater volts.
 *
 * Example: 12AU7 → `{ kind: "parallel", volts: 12.6 }`.
 */
export function naturalHeaterSupply(spec: TubeTypeSpec): HeaterSupply {
  return { kind: "parallel", volts: spec.heater.volts };
}

/**
 * Runs the ranker once per library type, with that type as the socket (its typical operating
 * values, and `options.heaterSupply` or its natural supply) and `heldType` as the only
 * candidate. Fits are sorted by score, best first; misses list every reason, or say that the
 * socket's own type cannot run on the given supply.
 *
 * Throws RangeError only for invalid options (derating factor, tolerances).
 *
 * Example: held 12AU7, library [12AX7, 12BH7, 6SN7GT], options { heaterSupply: 12.6 V parallel,
 * no rewire, no adapter } → fits 12AX7 (direct); misses 12BH7 (plate dissipation 2.875 W above
 * 12AU7's 2.75 W) and 6SN7GT (the 6SN7GT socket's own type cannot run on this supply).
 */
export function socketsForType(heldType: TubeTypeSpec, library: readonly TubeTypeSpec[], options: SocketsForTypeOptions): SocketsForTypeResult {
  const fits: SocketFit[] = [];
  const misses: SocketMiss[] = [];
  for (const socketType of library) {
    const heaterSupply = options.heaterSupply ?? naturalHeaterSupply(socketType);
    const socketHeater = heaterModeOnSupply(socketType, heaterSupply);
    if (!socketHeater.ok) {
      misses.push({ socketDesignation: socketType.designation, reasons: [`the ${socketType.designation} socket's own type cannot run on this supply: ${socketHeater.reason}`] });
      continue;
    }
    const ranking = rankSubstitutes(
      {
        socketType,
        heaterSupply,
        allowRewire: options.allowRewire,
        allowAdapter: options.allowAdapter,
        ...(options.tolerances !== undefined ? { tolerances: options.tolerances } : {}),
        ...(options.deratingFactor !== undefined ? { deratingFactor: options.deratingFactor } : {}),
      },
      [heldType],
      options.stock ?? [],
    );
    const candidate = ranking.candidates[0];
    if (candidate !== undefined) fits.push({ socketDesignation: socketType.designation, heaterSupply, candidate });
    else misses.push({ socketDesignation: socketType.designation, reasons: ranking.excluded[0]?.reasons ?? ["no verdict"] });
  }
  fits.sort((left, right) => right.candidate.score - left.candidate.score || (left.socketDesignation < right.socketDesignation ? -1 : 1));
  misses.sort((left, right) => (left.socketDesignation < right.socketDesignation ? -1 : left.socketDesignation > right.socketDesignation ? 1 : 0));
  return { fits, misses };
}
