/**
 * Splits a reading typed at a bench ("2.2 mA/V", "-8.5 V", "4k7") into its number and
 * its unit text. Internal to the units engine; the public entry is ./index.ts.
 */

export type SplitReading =
  | { ok: true; value: number; numberText: string; unitText: string; infix: InfixNotation | null }
  | { ok: false; reason: string };

/** Resistor-marking notation where the prefix letter stands in for the decimal point ("4k7", "2R2"). */
export interface InfixNotation {
  letter: string;
  /** Text after the fraction digits, e.g. "Ω" in "4k7Ω". */
  trailingUnitText: string;
}

const MICRO_SIGNS = /[\u00B5\u03BC]/g; // micro sign and Greek small mu look alike; both are typed
const OHM_SIGNS = /[\u2126\u03A9]/g; // ohm sign and Greek capital omega look alike
const MINUS_SIGNS = /[\u2212\u2012\u2013]/g; // copy-paste from documents brings typographic minus signs
const ODD_SPACES = /[\u00A0\u2007\u2009\u202F\t]/g; // no-break and thin spaces are used as digit group separators

/** The number at the start: optional sign, digits and points (checked below), optional exponent. */
const LEADING_NUMBER = /^([+-]?)\s*([0-9.]+)(?:[eE]([+-]?[0-9]+))?\s*(.*)$/s;
const INFIX = /^([RkKM])([0-9]+)(.*)$/s;

/** Canonical spellings: µ becomes "u" and Ω becomes "Ω" (U+03A9) so tables need one entry each. */
export function normaliseReadingText(text: string): string {
  return text.replace(MICRO_SIGNS, "u").replace(OHM_SIGNS, "\u03A9").replace(MINUS_SIGNS, "-").replace(ODD_SPACES, " ").trim();
}

/**
 * Splits `text` into a finite number and the unit text after it. Rejects, with a reason
 * that starts with `fieldName`, anything whose number could be read two ways.
 */
export function splitReading(text: unknown, fieldName: string): SplitReading {
  if (typeof text !== "string") return { ok: false, reason: `${fieldName}: no value given` };
  const cleaned = normaliseReadingText(text);
  if (cleaned === "") return { ok: false, reason: `${fieldName}: empty — enter a value` };
  if (cleaned.includes(",")) {
    return {
      ok: false,
      reason: `${fieldName}: '${cleaned}' is ambiguous — use a point for decimals and no thousands separator`,
    };
  }
  const match = LEADING_NUMBER.exec(cleaned);
  if (!match) return { ok: false, reason: `${fieldName}: '${cleaned}' is not a number` };
  const [, sign, digitsAndPoints, exponent, rest] = match;
  const pointCount = digitsAndPoints.split(".").length - 1;
  if (pointCount > 1) {
    return { ok: false, reason: `${fieldName}: '${cleaned}' has more than one decimal point` };
  }
  if (!/[0-9]/.test(digitsAndPoints)) return { ok: false, reason: `${fieldName}: '${cleaned}' is not a number` };
  const unitText = rest.trim();
  if (/^[0-9]/.test(unitText)) {
    return {
      ok: false,
      reason: `${fieldName}: '${cleaned}' is ambiguous — digits separated by a space; write the number without spaces`,
    };
  }
  const numberText = `${sign}${digitsAndPoints}${exponent === undefined ? "" : `e${exponent}`}`;
  let infix: InfixNotation | null = null;
  let value = Number(numberText);
  const infixMatch = exponent === undefined && pointCount === 0 ? INFIX.exec(unitText) : null;
  if (infixMatch) {
    const [, letter, fractionDigits, trailing] = infixMatch;
    infix = { letter, trailingUnitText: trailing.trim() };
    value = Number(`${sign}${digitsAndPoints}.${fractionDigits}`);
  }
  if (Number.isNaN(value)) return { ok: false, reason: `${fieldName}: '${cleaned}' is not a number` };
  if (!Number.isFinite(value)) return { ok: false, reason: `${fieldName}: '${cleaned}' is too large` };
  // -0 would print as "-0" later; a reading of minus nothing is nothing.
  if (value === 0) value = 0;
  return { ok: true, value, numberText, unitText, infix };
}

/** value × 10^exponent, dividing for negative exponents so 2200 × 10^-3 gives exactly the nearest double to 2.2. */
export function scaleByPowerOfTen(value: number, exponent: number): number {
  if (exponent === 0) return value;
  return exponent > 0 ? value * 10 ** exponent : value / 10 ** -exponent;
}

/**
 * `value` rounded to `significantDigits` significant digits, never rounding away integer
 * digits (2215 stays "2215" at 3 digits), trailing zeros dropped.
 */
export function formatSignificant(value: number, significantDigits: number): string {
  if (value === 0) return "0";
  const magnitude = Math.floor(Math.log10(Math.abs(value)));
  const decimals = Math.min(20, Math.max(0, significantDigits - 1 - magnitude));
  let text = value.toFixed(decimals);
  if (text.includes(".")) text = text.replace(/0+$/, "").replace(/\.$/, "");
  if (/^-0(\.0*)?$/.test(text)) text = "0";
  return text;
}
