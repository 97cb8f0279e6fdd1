/**
 * Which way a heater runs on a given supply, and how a substitute's heater compares with the
 * socket type's on that supply.
 */
import { hasNoHeater, type PinAssignment, type TubeTypeSpec } from "../tube-types/index.ts";
import type { HeaterFit, HeaterSupply } from "./types.ts";
import { comparePinLabels, formatNumber } from "./format.ts";

/**
 * Two heater ratings are "the same" when they agree within this fraction: published ratings are
 * rounded (6.3 V against 12.6 / 2), so exact equality would miss true matches. Common practice,
 * no source.
 */
export const HEATER_RATING_MATCH_FRACTION = 0.03;

/**
 * Controlled warm-up times within this many seconds count as matched in a series string.
 * Common practice, no source.
 */
export const WARM_UP_MATCH_SECONDS = 1;

export type HeaterLeg = "A" | "B";

export type HeaterMode =
  | {
      ok: true;
      mode: "full" | "half" | "none";
      volts: number;
      amps: number;
      /** Pins on each side of the supply. "full": one end each; "half": both ends on A, centre tap on B. */
      legA: string[];
      legB: string[];
    }
  | { ok: false; reason: string };

function isHeaterEnd(pin: PinAssignment): boolean {
  return pin.element === "h" || pin.element === "f";
}

function isHeaterTap(pin: PinAssignment): boolean {
  return pin.element === "hct" || pin.element === "fct";
}

function describeHeater(spec: TubeTypeSpec): string {
  const heater = spec.heater;
  const full = `${formatNumber(heater.volts)} V ${formatNumber(heater.amps)} A`;
  if (!heater.centreTap) return full;
  return `${full} or ${formatNumber(heater.centreTap.half.volts)} V ${formatNumber(heater.centreTap.half.amps)} A (centre-tapped)`;
}

function describeSupply(supply: HeaterSupply): string {
  return supply.kind === "parallel" ? `a ${formatNumber(supply.volts)} V parallel supply` : `a ${formatNumber(supply.amps)} A series string`;
}

function ratingMatches(rated: number, wanted: number): boolean {
  return Math.abs(rated - wanted) <= HEATER_RATING_MATCH_FRACTION * Math.abs(wanted);
}

/**
 * How `spec`'s heater runs on `supply`: across its ends ("full"), with its halves in parallel and
 * the centre tap to the other side ("half"), or not at all. Cold-cathode types (0 V, 0 A) run in
 * parallel sockets with no heater ("none") but would open a series string.
 *
 * Returns `{ ok: false, reason }` when the heater cannot run on the supply.
 *
 * Example: 12AU7 (12.6 V 0.15 A, centre-tapped 6.3 V 0.3 A) on a 6.3 V parallel supply →
 * `{ ok: true, mode: "half", volts: 6.3, amps: 0.3, legA: ["4", "5"], legB: ["9"] }`.
 */
export function heaterModeOnSupply(spec: TubeTypeSpec, supply: HeaterSupply): HeaterMode {
  const heater = spec.heater;
  const ends = spec.pins.filter(isHeaterEnd).map((pin) => pin.pin).sort(comparePinLabels);
  const taps = spec.pins.filter(isHeaterTap).map((pin) => pin.pin).sort(comparePinLabels);

  if (hasNoHeater(spec)) {
    if (supply.kind === "series") return { ok: false, reason: `${spec.designation} has no heater and would open ${describeSupply(supply)}` };
    return { ok: true, mode: "none", volts: 0, amps: 0, legA: [], legB: [] };
  }
  const wanted = supply.kind === "parallel" ? supply.volts : supply.amps;
  const rated = (volts: number, amps: number) => (supply.kind === "parallel" ? volts : amps);

  if (ratingMatches(rated(heater.volts, heater.amps), wanted)) {
    return { ok: true, mode: "full", volts: heater.volts, amps: heater.amps, legA: ends.slice(0, 1), legB: ends.slice(1) };
  }
  const half = heater.centreTap?.half;
  if (half !== undefined && ratingMatches(rated(half.volts, half.amps), wanted)) {
    if (taps.length === 0) return { ok: false, reason: `${spec.designation}'s heater centre tap has no pin in its pin map` };
    return { ok: true, mode: "half", volts: half.volts, amps: half.amps, legA: ends, legB: taps };
  }
  return { ok: false, reason: `heater ${describeHeater(spec)} cannot run on ${describeSupply(supply)}` };
}

/**
 * Directly heated filaments are also the cathode, so they cannot stand in for a heater and
 * separate cathode (or the reverse) without redesigning the stage. Returns the reason, or null.
 *
 * Example: a 6.3 V filament type against a 12AU7 → "a directly heated filament cannot replace a heater and separate cathode".
 */
export function heaterKindProblem(socketType: TubeTypeSpec, candidate: TubeTypeSpec): string | null {
  const socketDirect = socketType.heater.directlyHeated === true;
  const candidateDirect = candidate.heater.directlyHeated === true;
  if (socketDirect === candidateDirect) return null;
  return candidateDirect
    ? "a directly heated filament cannot replace a heater and separate cathode"
    : "a heater with separate cathode cannot replace a directly heated filament without redesigning the stage";
}

/**
 * Compares the substitute's heater with the socket type's on the socket's supply.
 *
 * - "same": same volts and current on this supply, heater leads where they were.
 * - "compatible": runs on the supply as wired, but draws a different current (parallel supply:
 *   the winding carries the difference) or has a different controlled warm-up (series string).
 * - "needs-change": runs only after the heater leads move at the socket, or (series string) drops
 *   a different voltage so the string's dropper must change.
 *
 * Example: 12BH7 (12.6 V 0.3 A) for 12AU7 (12.6 V 0.15 A) on 12.6 V parallel →
 * `{ fit: "compatible", heaterCurrentDeltaAmps: 0.15, … }`.
 */
export function compareHeaters(
  socketType: TubeTypeSpec,
  candidate: TubeTypeSpec,
  socketMode: Extract<HeaterMode, { ok: true }>,
  candidateMode: Extract<HeaterMode, { ok: true }>,
  supply: HeaterSupply,
  heaterLeadsMove: boolean,
): HeaterFit {
  const deltaAmps = roundAmps(candidateMode.amps - socketMode.amps);
  const modeText = candidateMode.mode === "half" ? " (halves in parallel, centre tap to the other side)" : candidateMode.mode === "none" ? " (no heater)" : "";
  const runs = `${candidate.designation} runs at ${formatNumber(candidateMode.volts)} V ${formatNumber(candidateMode.amps)} A${modeText}`;
  const base = { candidateMode: candidateMode.mode, candidateHeaterVolts: candidateMode.volts, candidateHeaterAmps: candidateMode.amps };
  const movedText = heaterLeadsMove ? "; the heater leads must move at the socket (see pins)" : "";

  if (supply.kind === "parallel") {
    const sameCurrent = ratingMatches(candidateMode.amps, socketMode.amps);
    const currentText = sameCurrent
      ? `, the same current as ${socketType.designation}`
      : `, drawing ${formatNumber(Math.abs(deltaAmps))} A ${deltaAmps > 0 ? "more" : "less"} than ${socketType.designation} (${formatNumber(socketMode.amps)} A) from the ${formatNumber(supply.volts)} V winding`;
    const fit = heaterLeadsMove ? "needs-change" : sameCurrent ? "same" : "compatible";
    return { ...base, fit, details: `${runs}${currentText}${movedText}`, heaterCurrentDeltaAmps: sameCurrent ? 0 : deltaAmps };
  }

  // Series string: the current is the string's, so the heater's voltage drop is what may change.
  const notes: string[] = [];
  const voltsDelta = candidateMode.volts - socketMode.volts;
  const voltsDiffer = !ratingMatches(candidateMode.volts, socketMode.volts);
  if (voltsDiffer) {
    const dropperChangeOhms = -voltsDelta / supply.amps;
    notes.push(
      `it drops ${formatNumber(candidateMode.volts)} V where ${socketType.designation} dropped ${formatNumber(socketMode.volts)} V; ` +
        `on a fixed string supply the dropper must ${dropperChangeOhms < 0 ? "lose" : "gain"} ${formatNumber(Math.abs(dropperChangeOhms), 1)} Ω (ΔR = −ΔV / I) to hold ${formatNumber(supply.amps)} A`,
    );
  }
  const stringWarmUp = supply.stringWarmUpSeconds ?? socketType.heater.warmUpSeconds;
  let warmUpMismatch = false;
  if (stringWarmUp !== undefined) {
    const candidateWarmUp = candidate.heater.warmUpSeconds;
    if (candidateWarmUp === undefined) {
      warmUpMismatch = true;
      notes.push(`warning: no controlled warm-up, the string's is ${formatNumber(stringWarmUp)} s; a heater that warms at its own pace takes more or less than its share of the string voltage while warming`);
    } else if (Math.abs(candidateWarmUp - stringWarmUp) > WARM_UP_MATCH_SECONDS) {
      warmUpMismatch = true;
      notes.push(`warning: warm-up ${formatNumber(candidateWarmUp)} s against the string's ${formatNumber(stringWarmUp)} s; the slower heaters see over-voltage while the string warms`);
    }
  }
  const fit = heaterLeadsMove || voltsDiffer ? "needs-change" : warmUpMismatch ? "compatible" : "same";
  const seriesStringNote = notes.length > 0 ? notes.join("; ") : undefined;
  return {
    ...base,
    fit,
    details: `${runs} in the ${formatNumber(supply.amps)} A string${movedText}`,
    heaterCurrentDeltaAmps: deltaAmps,
    ...(seriesStringNote !== undefined ? { seriesStringNote } : {}),
  };
}

function roundAmps(amps: number): number {
  return Math.round(amps * 1e6) / 1e6;
}
