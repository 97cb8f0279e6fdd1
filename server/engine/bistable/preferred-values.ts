/**
 * IEC 60063 preferred-number series, as two-significant-digit mantissas of one
 * decade (10 … 99). E12 has 12 values per decade, E24 has 24.
 */
export const E12_MANTISSAS: readonly number[] = [10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82];

export const E24_MANTISSAS: readonly number[] = [
  10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
];

export type PreferredSeries = "E12" | "E24";

/**
 * Every preferred value of the series between minOhms and maxOhms inclusive, ascending.
 * Returns [] for an empty or inverted range. Throws RangeError for a non-positive minimum.
 * Example: preferredValuesInRange("E12", 10_000, 33_000) → [10000, 12000, 15000, 18000, 22000, 27000, 33000]
 */
export function preferredValuesInRange(series: PreferredSeries, minOhms: number, maxOhms: number): number[] {
  if (!(minOhms > 0) || !Number.isFinite(minOhms) || !Number.isFinite(maxOhms)) {
    throw new RangeError("the range must be positive finite ohms");
  }
  const mantissas = series === "E12" ? E12_MANTISSAS : E24_MANTISSAS;
  const values: number[] = [];
  // Mantissas are 10…99, so a decade exponent d gives mantissa × 10^(d−1) ohms.
  const firstDecade = Math.floor(Math.log10(minOhms)) - 1;
  const lastDecade = Math.floor(Math.log10(maxOhms)) + 1;
  for (let decade = firstDecade; decade <= lastDecade; decade++) {
    for (const mantissa of mantissas) {
      const ohms = decade >= 1 ? mantissa * 10 ** (decade - 1) : mantissa / 10 ** (1 - decade);
      // Tolerate float noise in the bounds (e.g. 4.7 stored as 4.699999…).
      if (ohms >= minOhms * (1 - 1e-12) && ohms <= maxOhms * (1 + 1e-12)) values.push(ohms);
    }
  }
  return values;
}
