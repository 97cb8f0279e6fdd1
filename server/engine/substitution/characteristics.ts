/**
 * Small-signal characteristics of the substitute against the socket type, and what the
 * difference does to a common-cathode stage's voltage gain.
 */
import type { OperatingPoint, SectionSpec, TubeTypeSpec } from "../tube-types/index.ts";
import type { CharacteristicComparison, CharacteristicTolerances, SectionCharacteristics, SectionMappingEntry, SmallSignalValues } from "./types.ts";
import { formatNumber, formatPercent } from "./format.ts";

/**
 * Spread accepted before a characteristic difference is called out. New tubes of one type
 * commonly differ from the published value by this much. Common practice, no source.
 */
export const DEFAULT_TOLERANCES: CharacteristicTolerances = { transconductancePercent: 20, muPercent: 20, plateResistancePercent: 20 };

/**
 * Plate load assumed when the circuit gives none: RL = 2·rp of the socket type, a usual
 * resistance-coupled choice between gain and swing. Common practice, no source.
 */
export const ASSUMED_PLATE_LOAD_PER_PLATE_RESISTANCE = 2;

/** Distance charged when neither type states two of gm, µ, rp: three tolerances, i.e. "unknown, treat as far". */
export const MISSING_DATA_DISTANCE = 3;

/**
 * A remote-cutoff section for a sharp-cutoff one (or the reverse) adds this to the distance,
 * as much as a characteristic twice its tolerance away, on top of whatever else is known: the
 * stage still works, but not as designed (common practice, no source).
 */
export const CUTOFF_MISMATCH_DISTANCE = 2;

const CUTOFF_CONSEQUENCE = {
  remote: "remote-cutoff in place of sharp-cutoff: gain falls gradually with bias instead of at a knee; more distortion on large signals in a fixed-bias stage",
  sharp: "sharp-cutoff in place of remote-cutoff: a gain-controlled (AGC) stage cuts off abruptly on strong signals and cross-modulates",
} as const;

export interface CircuitPoint {
  plateVolts: number;
  plateMilliamps: number;
  plateLoadOhms?: number;
}

/**
 * Common-cathode voltage gain magnitude A = µ·RL / (RL + rp): the triode's small-signal
 * equivalent circuit (a source µ·vg behind rp) driving RL, cathode bypassed. For a pentode the
 * same expression equals gm·(RL ∥ rp).
 *
 * Example: `commonCathodeGain(17, 7700, 15400)` → 11.333…
 */
export function commonCathodeGain(mu: number, plateResistanceOhms: number, plateLoadOhms: number): number {
  return (mu * plateLoadOhms) / (plateLoadOhms + plateResistanceOhms);
}

/**
 * gm, µ and rp at the section's published operating point nearest the circuit's (distance
 * |ΔVa|/Va + |ΔIa|/Ia), the missing one of three filled in from Barkhausen's µ = gm·rp.
 * Returns all null when the section has no typical point.
 *
 * Example: 12AU7 section at 250 V, 10.5 mA → { gm: 2200 µS, µ: 17, rp: 7700 Ω }.
 */
export function smallSignalNear(section: SectionSpec | undefined, point: CircuitPoint): SmallSignalValues {
  const empty = { transconductanceMicroSiemens: null, mu: null, plateResistanceOhms: null };
  if (section === undefined || section.typical.length === 0) return empty;
  let nearest: OperatingPoint = section.typical[0];
  let nearestDistance = Number.POSITIVE_INFINITY;
  for (const typical of section.typical) {
    const distance =
      Math.abs(typical.plateVolts - point.plateVolts) / Math.max(Math.abs(point.plateVolts), 1) +
      Math.abs(typical.plateMilliamps - point.plateMilliamps) / Math.max(Math.abs(point.plateMilliamps), 0.1);
    if (distance < nearestDistance) {
      nearest = typical;
      nearestDistance = distance;
    }
  }
  let gm = nearest.transconductanceMicroSiemens ?? null;
  let mu = nearest.mu ?? null;
  let rp = nearest.plateResistanceOhms ?? null;
  if (mu === null && gm !== null && rp !== null) mu = (gm / 1e6) * rp;
  if (rp === null && gm !== null && mu !== null && gm > 0) rp = mu / (gm / 1e6);
  if (gm === null && mu !== null && rp !== null && rp > 0) gm = (mu / rp) * 1e6;
  return { transconductanceMicroSiemens: gm, mu, plateResistanceOhms: rp };
}

function deltaPercent(candidate: number | null, socket: number | null): number | null {
  if (candidate === null || socket === null || socket === 0) return null;
  return ((candidate - socket) / socket) * 100;
}

/**
 * Compares each used socket section with the substitute section mapped onto it, at the
 * circuit's operating point. The top-level deltas are those of the section whose stage gain
 * changes most.
 *
 * With `describe` false the note and warnings stay empty (for searching many mappings).
 *
 * Example: 12AT7 for 12AU7 at 250 V / 10.5 mA, no plate load → RL = 15.4 kΩ assumed, gain
 * 11.33 → 35.13, gainChangePercent ≈ +210.
 */
export function compareCharacteristics(
  socketType: TubeTypeSpec,
  candidate: TubeTypeSpec,
  sectionMapping: readonly SectionMappingEntry[],
  circuitPoints: ReadonlyMap<number, CircuitPoint>,
  tolerances: CharacteristicTolerances,
  describe = true,
): CharacteristicComparison {
  const sections: SectionCharacteristics[] = [];
  const scaledSquares: number[] = [];
  // Identical sections give identical warnings; one line names all of them.
  const outsideToleranceSections = new Map<string, number[]>();
  let cutoffMismatch = false;

  for (const { socketSection, candidateSection } of sectionMapping) {
    const wantedCutoff = socketType.sections.find((section) => section.index === socketSection)?.cutoff;
    const offeredCutoff = candidate.sections.find((section) => section.index === candidateSection)?.cutoff;
    if (wantedCutoff !== undefined && offeredCutoff !== undefined && wantedCutoff !== offeredCutoff) {
      cutoffMismatch = true;
      if (describe) {
        const text = CUTOFF_CONSEQUENCE[offeredCutoff];
        outsideToleranceSections.set(text, [...(outsideToleranceSections.get(text) ?? []), socketSection]);
      }
    }
    const point = circuitPoints.get(socketSection);
    if (point === undefined) continue;
    const socketValues = smallSignalNear(socketType.sections.find((section) => section.index === socketSection), point);
    const candidateValues = smallSignalNear(candidate.sections.find((section) => section.index === candidateSection), point);
    const gmDeltaPercent = deltaPercent(candidateValues.transconductanceMicroSiemens, socketValues.transconductanceMicroSiemens);
    const muDeltaPercent = deltaPercent(candidateValues.mu, socketValues.mu);
    const rpDeltaPercent = deltaPercent(candidateValues.plateResistanceOhms, socketValues.plateResistanceOhms);

    const plateLoadAssumed = point.plateLoadOhms === undefined;
    const plateLoadOhms = point.plateLoadOhms ?? (socketValues.plateResistanceOhms !== null ? ASSUMED_PLATE_LOAD_PER_PLATE_RESISTANCE * socketValues.plateResistanceOhms : null);
    const gainOf = (values: SmallSignalValues) =>
      values.mu !== null && values.plateResistanceOhms !== null && plateLoadOhms !== null ? commonCathodeGain(values.mu, values.plateResistanceOhms, plateLoadOhms) : null;
    const socketGain = gainOf(socketValues);
    const candidateGain = gainOf(candidateValues);
    const gainChangePercent = deltaPercent(candidateGain, socketGain);

    const scaled: Array<[number | null, number, string]> = [
      [gmDeltaPercent, tolerances.transconductancePercent, "gm"],
      [muDeltaPercent, tolerances.muPercent, "µ"],
      [rpDeltaPercent, tolerances.plateResistancePercent, "rp"],
    ];
    for (const [delta, tolerance, name] of scaled) {
      if (delta === null) continue;
      scaledSquares.push((delta / tolerance) ** 2);
      if (describe && Math.abs(delta) > tolerance) {
        const text = `${name} differs by ${formatPercent(delta)} (tolerance ±${formatNumber(tolerance)} %)`;
        outsideToleranceSections.set(text, [...(outsideToleranceSections.get(text) ?? []), socketSection]);
      }
    }
    sections.push({
      socketSection,
      candidateSection,
      socketValues,
      candidateValues,
      gmDeltaPercent,
      muDeltaPercent,
      rpDeltaPercent,
      plateLoadOhms,
      plateLoadAssumed,
      socketGain,
      candidateGain,
      gainChangePercent,
    });
  }

  const outsideTolerance = [...outsideToleranceSections].map(
    ([text, indexes]) => `${indexes.length === 1 ? "section" : "sections"} ${indexes.join(", ")}: ${text}`,
  );
  const measuredDistance = scaledSquares.length > 0 ? Math.sqrt(scaledSquares.reduce((sum, value) => sum + value, 0) / scaledSquares.length) : MISSING_DATA_DISTANCE;
  const distance = measuredDistance + (cutoffMismatch ? CUTOFF_MISMATCH_DISTANCE : 0);
  const worst = sections.reduce<SectionCharacteristics | null>((incumbent, section) => {
    if (incumbent === null) return section;
    const size = (entry: SectionCharacteristics) => (entry.gainChangePercent === null ? -1 : Math.abs(entry.gainChangePercent));
    return size(section) > size(incumbent) ? section : incumbent;
  }, null);

  return {
    gmDeltaPercent: worst?.gmDeltaPercent ?? null,
    muDeltaPercent: worst?.muDeltaPercent ?? null,
    rpDeltaPercent: worst?.rpDeltaPercent ?? null,
    gainChangePercent: worst?.gainChangePercent ?? null,
    note: describe ? describeWorst(socketType, candidate, worst) : "",
    sections,
    distance,
    outsideTolerance,
  };
}

function describeWorst(socketType: TubeTypeSpec, candidate: TubeTypeSpec, worst: SectionCharacteristics | null): string {
  if (worst === null) return "no operating values for the used sections, so no characteristic comparison";
  const parts: string[] = [];
  const delta = (name: string, value: number | null) => (value === null ? `${name} unknown` : `${name} ${formatPercent(value)}`);
  parts.push(`section ${worst.socketSection}: ${delta("gm", worst.gmDeltaPercent)}, ${delta("µ", worst.muDeltaPercent)}, ${delta("rp", worst.rpDeltaPercent)} against ${socketType.designation}`);
  if (worst.socketGain !== null && worst.candidateGain !== null && worst.plateLoadOhms !== null && worst.gainChangePercent !== null) {
    const loadText = worst.plateLoadAssumed
      ? `RL = ${formatNumber(worst.plateLoadOhms, 0)} Ω assumed (2·rp of ${socketType.designation}; no plate load given)`
      : `RL = ${formatNumber(worst.plateLoadOhms, 0)} Ω`;
    parts.push(
      `common-cathode gain A = µ·RL/(RL + rp) (small-signal equivalent circuit, cathode bypassed), ${loadText}: ` +
        `${formatNumber(worst.socketGain, 2)} with ${socketType.designation}, ${formatNumber(worst.candidateGain, 2)} with ${candidate.designation} (${formatPercent(worst.gainChangePercent)})`,
    );
  } else {
    parts.push("gain not compared: µ and rp (or two of gm, µ, rp) are not stated for both types");
  }
  return parts.join("; ");
}
