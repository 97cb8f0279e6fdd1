/** Maximum ratings of a substitute against what the circuit really applies. */
import type { MaxRatings } from "../tube-types/index.ts";
import type { CircuitOperatingValues, RatingCheck } from "./types.ts";
import { formatNumber } from "./format.ts";

export interface RatingsResult {
  checks: RatingCheck[];
  /** One line per exceeded rating, for the "why not" list. */
  failures: string[];
  /** Ratings the circuit uses that the substitute's data do not state. */
  unchecked: string[];
}

const RATING_UNITS: Record<string, string> = {
  plateVolts: "V",
  plateWatts: "W",
  screenVolts: "V",
  cathodeMilliamps: "mA",
  heaterCathodeVolts: "V",
  outputMilliamps: "mA",
};

const RATING_NAMES: Record<string, string> = {
  plateVolts: "plate voltage",
  plateWatts: "plate dissipation",
  screenVolts: "screen voltage",
  cathodeMilliamps: "cathode current",
  heaterCathodeVolts: "heater–cathode voltage",
  outputMilliamps: "regulator current",
};

/**
 * Checks each used section's circuit values against the maximum ratings of the substitute
 * section that serves it (`ratingsForSection(socket section)`: a section's own ratings over the
 * envelope's) times `deratingFactor`: plate volts, plate dissipation Pa = Va·Ia, screen volts,
 * cathode current Ik = Ia + Ig2 (screen current when given), heater–cathode volts; on a
 * regulator section (`isRegulatorSection`) only the current it passes against outputMilliamps.
 * headroomPercent = (deratedMax − circuit) / deratedMax × 100.
 *
 * Never throws; a rating missing from the data is listed in `unchecked`.
 *
 * Example: 250 V, 10.5 mA against () => ({ plateVolts: 300, plateWatts: 2.5 }), factor 1 →
 * plateVolts ok (16.7 % headroom), plateWatts 2.625 W > 2.5 W (−5 %, failure).
 */
export function checkRatings(
  candidateDesignation: string,
  ratingsForSection: (socketSection: number) => MaxRatings,
  operating: readonly CircuitOperatingValues[],
  deratingFactor: number,
  isRegulatorSection: (socketSection: number) => boolean = () => false,
): RatingsResult {
  const checks: RatingCheck[] = [];
  const failures: string[] = [];
  const unchecked = new Set<string>();

  const check = (rating: keyof MaxRatings, circuitValue: number | undefined, section: number, circuitNote = "") => {
    if (circuitValue === undefined) return;
    const maxValue = ratingsForSection(section)[rating];
    if (maxValue === undefined) {
      unchecked.add(RATING_NAMES[rating] ?? rating);
      return;
    }
    const deratedMax = maxValue * deratingFactor;
    const headroomPercent = deratedMax > 0 ? ((deratedMax - circuitValue) / deratedMax) * 100 : circuitValue > 0 ? -100 : 0;
    const ok = circuitValue <= deratedMax;
    checks.push({ rating, section, circuitValue, maxValue, deratedMax, headroomPercent, ok });
    if (!ok) {
      const unit = RATING_UNITS[rating] ?? "";
      const deratedText = deratingFactor < 1 ? ` (${formatNumber(deratingFactor * 100, 1)} % of ${formatNumber(maxValue)} ${unit})` : "";
      failures.push(
        `${RATING_NAMES[rating] ?? rating} of section ${section}: the circuit applies ${formatNumber(circuitValue)} ${unit}${circuitNote}, ` +
          `above ${candidateDesignation}'s ${formatNumber(deratedMax)} ${unit}${deratedText}`,
      );
    }
  };

  for (const values of operating) {
    const section = values.section;
    // A glow regulator is rated by the current it may pass; plate volts and watts do not apply.
    if (isRegulatorSection(section)) {
      check("outputMilliamps", values.plateMilliamps, section);
      continue;
    }
    check("plateVolts", values.plateVolts, section);
    check("plateWatts", (values.plateVolts * values.plateMilliamps) / 1000, section, ` (${formatNumber(values.plateVolts)} V × ${formatNumber(values.plateMilliamps)} mA)`);
    check("screenVolts", values.screenVolts, section);
    check("cathodeMilliamps", values.plateMilliamps + (values.screenMilliamps ?? 0), section, values.screenVolts !== undefined && values.screenMilliamps === undefined ? " (plate current only; screen current not given)" : "");
    check("heaterCathodeVolts", values.heaterCathodeVolts, section);
  }
  return { checks, failures, unchecked: [...unchecked] };
}
