/** Glow regulators: a substitute must hold the same voltage, fire on the same supply and carry the circuit's current. */
import type { GlowDischarge, TubeTypeSpec } from "../tube-types/index.ts";
import type { CircuitOperatingValues, SectionMappingEntry } from "./types.ts";
import { formatNumber, formatPercent } from "./format.ts";

/**
 * How far a substitute's operating voltage may sit from the socket type's before the regulated
 * rail counts as a different rail: 5 %, about the spread between samples of one glow type
 * (common practice, no source).
 */
export const GLOW_VOLTS_TOLERANCE = 0.05;

export interface GlowFit {
  /** Reasons that exclude the candidate. */
  failures: string[];
  /** Explanations for a candidate that fits: the regulated voltage, striking, current range. */
  notes: string[];
}

function glowOf(spec: TubeTypeSpec, section: number): GlowDischarge | undefined {
  return spec.sections.find((entry) => entry.index === section)?.glow;
}

/**
 * Compares the glow discharge of every regulator section the socket uses with the substitute
 * section that would serve it. A substitute fails when its operating voltage differs from the
 * socket type's by more than `GLOW_VOLTS_TOLERANCE` (the rail would move), when the circuit's
 * current (the section's plate milliamps, when given) lies outside its regulating range, or —
 * with no current given — when its range does not cover the socket type's. A higher striking
 * voltage is a note: the supply was sized for the socket type's.
 *
 * Returns empty lists when the socket uses no regulator section; a side without glow data
 * yields a note that the voltage could not be compared.
 *
 * Example: OA2 socket (150 V, strikes at 185 V) against OB2 (108 V) → failure "regulates at
 * 108 V, 28 % below the OA2's 150 V: the regulated rail would drop".
 */
export function compareGlow(
  socketType: TubeTypeSpec,
  candidate: TubeTypeSpec,
  mapping: readonly SectionMappingEntry[],
  operating: readonly CircuitOperatingValues[],
): GlowFit {
  const failures: string[] = [];
  const notes: string[] = [];
  for (const { socketSection, candidateSection } of mapping) {
    const kind = socketType.sections.find((entry) => entry.index === socketSection)?.kind;
    if (kind !== "regulator") continue;
    const wanted = glowOf(socketType, socketSection);
    const offered = glowOf(candidate, candidateSection);
    if (wanted === undefined || offered === undefined) {
      notes.push(`regulated voltage not compared: ${wanted === undefined ? socketType.designation : candidate.designation} has no glow data`);
      continue;
    }
    const change = (offered.operatingVolts - wanted.operatingVolts) / wanted.operatingVolts;
    if (Math.abs(change) > GLOW_VOLTS_TOLERANCE) {
      failures.push(
        `regulates at ${formatNumber(offered.operatingVolts)} V, ${formatPercent(change * 100)} from ${socketType.designation}'s ${formatNumber(wanted.operatingVolts)} V: ` +
          `the regulated rail would ${change > 0 ? "rise" : "drop"}`,
      );
      continue;
    }
    const current = operating.find((entry) => entry.section === socketSection)?.plateMilliamps;
    if (current !== undefined && (current < offered.minMilliamps || current > offered.maxMilliamps)) {
      failures.push(
        `the circuit passes ${formatNumber(current)} mA; ${candidate.designation} regulates only between ${formatNumber(offered.minMilliamps)} and ${formatNumber(offered.maxMilliamps)} mA`,
      );
      continue;
    }
    // A shunt regulator's current swings with the load over the range the circuit was designed
    // for; without a measured current the substitute must cover the socket type's whole range.
    if (current === undefined && (offered.minMilliamps > wanted.minMilliamps || offered.maxMilliamps < wanted.maxMilliamps)) {
      failures.push(
        `${candidate.designation} regulates over ${formatNumber(offered.minMilliamps)}–${formatNumber(offered.maxMilliamps)} mA, narrower than the ` +
          `${formatNumber(wanted.minMilliamps)}–${formatNumber(wanted.maxMilliamps)} mA ${socketType.designation}'s circuit may use; give the circuit's current to check it against the real one`,
      );
      continue;
    }
    notes.push(
      `regulates at ${formatNumber(offered.operatingVolts)} V (${formatPercent(change * 100)} from ${formatNumber(wanted.operatingVolts)} V) over ` +
        `${formatNumber(offered.minMilliamps)}–${formatNumber(offered.maxMilliamps)} mA${current === undefined ? "" : `; the circuit passes ${formatNumber(current)} mA`}`,
    );
    if (offered.strikingVolts > wanted.strikingVolts) {
      notes.push(
        `warning: needs ${formatNumber(offered.strikingVolts)} V to strike where ${socketType.designation} needs ${formatNumber(wanted.strikingVolts)} V; check that the unregulated supply reaches it at low mains`,
      );
    }
  }
  return { failures, notes };
}
