/**
 * Units engine: parse readings typed at a bench, convert between units, and format
 * values for display. Pure; no IO.
 *
 * Facts of SI used throughout (no other source needed):
 *   1 mho = 1 S = 1 A/V, so 1 µmho = 1 µS and 1 mA/V = 1 mS = 1000 µS.
 *   Prefixes: p 10^-12, n 10^-9, µ 10^-6, m 10^-3, k 10^3, M 10^6, G 10^9.
 *
 * Choices for input that could be read two ways (each rejected with a reason naming the field):
 *   - A comma anywhere ("2,2" or "2,200") — decimal comma or thousands separator.
 *   - More than one decimal point ("2.2.0"), digits split by spaces ("2 200").
 *   - A bare transconductance number with no unit and no default unit: µS and mA/V differ by 1000.
 *   - Lowercase "m" on a resistance ("1m", "1 mΩ", "1mohm"): SI reads milliohm, which no tube
 *     circuit field in this product holds; it is almost always a megohm typed in lower case.
 *     Write "1M", "1 MΩ" or "1 meg".
 *   - Capital "M" before a transconductance or current unit ("MS", "MA/V", "MA"): SI reads mega,
 *     never a real reading; almost always milli typed in upper case.
 * Accepted trade spellings: "K" for kilo (kelvin is no prefix), "meg" for mega ohms, resistor
 * marking with the multiplier as decimal point ("4k7" = 4.7 kΩ, "2R2" = 2.2 Ω, ohms only),
 * lowercase base units ("ma", "kv"), µ typed as "u", Ω typed as "ohm", "ohms" or "R".
 */

import { formatSignificant, scaleByPowerOfTen, splitReading } from "./reading-text.ts";

export type ParseResult = { ok: true; value: number } | { ok: false; reason: string };

// ---------------------------------------------------------------------------
// Transconductance
// ---------------------------------------------------------------------------

/** Units a transconductance is entered or shown in. "umho" and "uS" are the same size (SI). */
export type TransconductanceUnit = "uS" | "umho" | "mA/V";

/** How many µS one of each unit is: 1 µmho = 1 µS, 1 mA/V = 1000 µS (facts of SI). */
export const MICROSIEMENS_PER_UNIT: Readonly<Record<TransconductanceUnit, number>> = {
  uS: 1,
  umho: 1,
  "mA/V": 1000,
};

/**
 * Upper bound on a transconductance reading, µS. The highest-gm receiving tubes (frame-grid
 * pentodes) sit around 50 mA/V (from memory); twice that leaves headroom while still catching
 * the common slip of a mA/V figure entered as µS or the reverse, which is a factor of 1000.
 */
export const MAX_TRANSCONDUCTANCE_MICROSIEMENS = 100_000;

/** Exponent relative to µS for each accepted spelling (lowercased, µ already turned into "u"). */
const TRANSCONDUCTANCE_SPELLINGS: Readonly<Record<string, number>> = {
  us: 0,
  umho: 0,
  umhos: 0,
  micromho: 0,
  micromhos: 0,
  microsiemens: 0,
  "ua/v": 0,
  ms: 3,
  mmho: 3,
  mmhos: 3,
  millimho: 3,
  millimhos: 3,
  millisiemens: 3,
  "ma/v": 3,
  s: 6,
  mho: 6,
  mhos: 6,
  siemens: 6,
  "a/v": 6,
};
const MILLI_TRANSCONDUCTANCE_SHORT = new Set(["ms", "mmho", "mmhos", "ma/v"]);

export type TransconductanceParseResult = { ok: true; microSiemens: number } | { ok: false; reason: string };

/**
 * Parses a transconductance typed at a bench into µS.
 *
 * Accepts µS, µmho, mS, mmho, mA/V, S, mho, A/V (µ may be typed "u"). A number with no unit
 * takes `defaultUnit`; with no `defaultUnit` it is rejected, because µS and mA/V differ by 1000.
 * Rejects a comma, several decimal points, an unknown unit, empty text, a negative value and
 * anything above {@link MAX_TRANSCONDUCTANCE_MICROSIEMENS} (or `options.maxMicroSiemens`).
 * Zero is accepted: a dead section reads zero. Never throws.
 *
 * @example parseTransconductance("2.2 mA/V", "Transconductance") // { ok: true, microSiemens: 2200 }
 * @example parseTransconductance("2,2", "Transconductance")
 *   // { ok: false, reason: "Transconductance: '2,2' is ambiguous — use a point for decimals and no thousands separator" }
 */
export function parseTransconductance(
  text: string,
  fieldName: string,
  defaultUnit?: TransconductanceUnit,
  options: { maxMicroSiemens?: number } = {},
): TransconductanceParseResult {
  const split = splitReading(text, fieldName);
  if (!split.ok) return split;
  const typed = text.trim();
  if (split.infix) return { ok: false, reason: `${fieldName}: '${typed}' has an unknown unit` };
  let exponent: number;
  const unitKey = split.unitText.replace(/\s+/g, "");
  if (unitKey === "") {
    if (defaultUnit === undefined) {
      return { ok: false, reason: `${fieldName}: '${typed}' has no unit — add µS, µmho or mA/V` };
    }
    exponent = Math.round(Math.log10(MICROSIEMENS_PER_UNIT[defaultUnit]));
  } else {
    const lower = unitKey.toLowerCase();
    if (unitKey.startsWith("M") && MILLI_TRANSCONDUCTANCE_SHORT.has(lower)) {
      return { ok: false, reason: `${fieldName}: '${unitKey}' reads as mega — write mS or mA/V for milli` };
    }
    const found = Object.hasOwn(TRANSCONDUCTANCE_SPELLINGS, lower) ? TRANSCONDUCTANCE_SPELLINGS[lower] : undefined;
    if (found === undefined) {
      return { ok: false, reason: `${fieldName}: unknown unit '${unitKey}' — use µS, µmho or mA/V` };
    }
    exponent = found;
  }
  if (split.value < 0) return { ok: false, reason: `${fieldName}: '${typed}' is negative` };
  const microSiemens = scaleByPowerOfTen(split.value, exponent);
  const limit = options.maxMicroSiemens ?? MAX_TRANSCONDUCTANCE_MICROSIEMENS;
  if (microSiemens > limit) {
    return {
      ok: false,
      reason: `${fieldName}: '${typed}' is above ${formatTransconductance(limit, "uS")} — check the unit (µS or mA/V)`,
    };
  }
  return { ok: true, microSiemens };
}

/**
 * Converts a transconductance in `unit` to µS.
 * @example toMicroSiemens(11.3, "mA/V") // 11300
 */
export function toMicroSiemens(value: number, unit: TransconductanceUnit): number {
  return scaleByPowerOfTen(value, Math.round(Math.log10(MICROSIEMENS_PER_UNIT[unit])));
}

/**
 * Converts µS to `unit`.
 * @example fromMicroSiemens(2200, "mA/V") // 2.2
 */
export function fromMicroSiemens(microSiemens: number, unit: TransconductanceUnit): number {
  return scaleByPowerOfTen(microSiemens, -Math.round(Math.log10(MICROSIEMENS_PER_UNIT[unit])));
}

const TRANSCONDUCTANCE_SYMBOL: Readonly<Record<TransconductanceUnit, string>> = {
  uS: "µS",
  umho: "µmho",
  "mA/V": "mA/V",
};

/**
 * Formats µS in the given unit with `significantDigits` significant digits (integer digits
 * are never rounded away; trailing zeros dropped). Returns "—" for null, undefined or a
 * non-finite number.
 *
 * @example formatTransconductance(2200, "mA/V") // "2.2 mA/V"
 * @example formatTransconductance(2215.4, "umho") // "2215 µmho"
 */
export function formatTransconductance(
  microSiemens: number | null | undefined,
  unit: TransconductanceUnit = "uS",
  significantDigits = 4,
): string {
  if (microSiemens === null || microSiemens === undefined || !Number.isFinite(microSiemens)) return "—";
  return `${formatSignificant(fromMicroSiemens(microSiemens, unit), significantDigits)} ${TRANSCONDUCTANCE_SYMBOL[unit]}`;
}

// ---------------------------------------------------------------------------
// Voltages, currents, resistances, powers
// ---------------------------------------------------------------------------

/** The unit a parsed or formatted quantity is expressed in; the name says the unit. */
export type QuantityDimension = "volts" | "milliamps" | "microamps" | "ohms" | "watts" | "amps";

type QuantityFamily = "voltage" | "current" | "resistance" | "power";

interface FamilySpec {
  noun: string;
  symbol: string;
  /** Lowercased spellings of the base unit. */
  baseNames: readonly string[];
  /** Prefix exponents a reading of this family may carry. */
  acceptedExponents: readonly number[];
  /** Largest magnitude accepted by default, in the base unit. */
  defaultLimit: number;
  /** What the reason lists when a unit is not accepted. */
  acceptedUnitsHint: string;
}

/*
 * Default magnitude limits are typo catchers, not ratings: above anything a receiving-tube
 * bench or tube-logic build sees (television EHT is some tens of kilovolts, from memory).
 * Callers narrow them with options.min / options.max.
 */
const FAMILIES: Readonly<Record<QuantityFamily, FamilySpec>> = {
  voltage: {
    noun: "a voltage",
    symbol: "V",
    baseNames: ["v", "volt", "volts"],
    acceptedExponents: [-3, 0, 3],
    defaultLimit: 50_000,
    acceptedUnitsHint: "mV, V or kV",
  },
  current: {
    noun: "a current",
    symbol: "A",
    baseNames: ["a", "amp", "amps", "ampere", "amperes"],
    acceptedExponents: [-12, -9, -6, -3, 0],
    defaultLimit: 100,
    acceptedUnitsHint: "nA, µA, mA or A",
  },
  resistance: {
    noun: "a resistance",
    symbol: "Ω",
    baseNames: ["\u03C9", "ohm", "ohms", "r"],
    acceptedExponents: [0, 3, 6, 9],
    defaultLimit: 1e12,
    acceptedUnitsHint: "Ω, kΩ, MΩ (or k, M, meg)",
  },
  power: {
    noun: "a power",
    symbol: "W",
    baseNames: ["w", "watt", "watts"],
    acceptedExponents: [-3, 0, 3],
    defaultLimit: 100_000,
    acceptedUnitsHint: "mW, W or kW",
  },
};

const DIMENSIONS: Readonly<Record<QuantityDimension, { family: QuantityFamily; exponent: number }>> = {
  volts: { family: "voltage", exponent: 0 },
  amps: { family: "current", exponent: 0 },
  milliamps: { family: "current", exponent: -3 },
  microamps: { family: "current", exponent: -6 },
  ohms: { family: "resistance", exponent: 0 },
  watts: { family: "power", exponent: 0 },
};

const LETTER_PREFIXES: Readonly<Record<string, number>> = {
  p: -12,
  n: -9,
  u: -6,
  U: -6,
  m: -3,
  k: 3,
  K: 3,
  M: 6,
  G: 9,
};
const WORD_PREFIXES: Readonly<Record<string, number>> = { micro: -6, milli: -3, kilo: 3, mega: 6 };
/** Resistance spellings that do not split into prefix + base name. */
const RESISTANCE_WORDS: Readonly<Record<string, number>> = {
  megohm: 6,
  megohms: 6,
  kilohm: 3,
  kilohms: 3,
};
const BARE_RESISTANCE_PREFIXES: Readonly<Record<string, number>> = { k: 3, K: 3, M: 6, G: 9 };

type UnitMatch = { matched: true; exponent: number } | { matched: false };

/**
 * Reads `unitKey` (spaces removed) as a unit of `family`, without judging whether the prefix
 * is accepted. `allowBarePrefix` lets "k", "M", "meg" stand alone for resistances.
 */
function matchUnit(unitKey: string, family: QuantityFamily, allowBarePrefix = true): UnitMatch {
  const spec = FAMILIES[family];
  const lower = unitKey.toLowerCase();
  if (spec.baseNames.includes(lower)) return { matched: true, exponent: 0 };
  if (family === "resistance") {
    if (Object.hasOwn(RESISTANCE_WORDS, lower)) return { matched: true, exponent: RESISTANCE_WORDS[lower] };
    if (allowBarePrefix && (lower === "meg" || lower === "megs")) return { matched: true, exponent: 6 };
    if (allowBarePrefix && Object.hasOwn(BARE_RESISTANCE_PREFIXES, unitKey)) {
      return { matched: true, exponent: BARE_RESISTANCE_PREFIXES[unitKey] };
    }
    if (allowBarePrefix && unitKey === "m") return { matched: true, exponent: -3 };
  }
  for (const [word, exponent] of Object.entries(WORD_PREFIXES)) {
    if (lower.startsWith(word) && spec.baseNames.includes(lower.slice(word.length))) {
      return { matched: true, exponent };
    }
  }
  const letter = unitKey[0];
  if (Object.hasOwn(LETTER_PREFIXES, letter) && spec.baseNames.includes(lower.slice(1))) {
    return { matched: true, exponent: LETTER_PREFIXES[letter] };
  }
  return { matched: false };
}

export interface QuantityOptions {
  /** Accept values below zero (grid bias). Default false. */
  allowNegative?: boolean;
  /** Smallest accepted value, in the dimension's unit. Default 0, or −max when allowNegative. */
  min?: number;
  /** Largest accepted value, in the dimension's unit. Default: the family's typo-catching limit. */
  max?: number;
}

/**
 * Parses a voltage, current, resistance or power typed at a bench and returns it in the unit
 * named by `dimension` (volts → V, milliamps → mA, microamps → µA, ohms → Ω, watts → W, amps → A).
 * A number with no unit is already in that unit. Prefixes accepted: volts mV/kV; currents
 * nA/µA/mA/A (any current converts to the requested one); ohms k/K, M/meg, G, with or without
 * Ω/ohm/R, and "4k7"-style marking; watts mW/kW.
 *
 * Rejects (reason starts with `fieldName`): the ambiguities listed at the top of this file, an
 * unknown unit, a unit of another quantity ("10 mA" in a volts field), a prefix a field does not
 * use, a negative value unless `allowNegative`, and values outside `min`/`max`. Never throws.
 *
 * @example parseQuantity("-8.5 V", "volts", "Grid bias", { allowNegative: true }) // { ok: true, value: -8.5 }
 * @example parseQuantity("4k7", "ohms", "Plate load") // { ok: true, value: 4700 }
 * @example parseQuantity("1m", "ohms", "Grid leak")
 *   // { ok: false, reason: "Grid leak: '1m' — lowercase m means milli; for megohms write M, MΩ or meg" }
 */
export function parseQuantity(
  text: string,
  dimension: QuantityDimension,
  fieldName: string,
  options: QuantityOptions = {},
): ParseResult {
  const target = Object.hasOwn(DIMENSIONS, dimension) ? DIMENSIONS[dimension] : undefined;
  if (target === undefined) return { ok: false, reason: `${fieldName}: unknown dimension '${String(dimension)}'` };
  const spec = FAMILIES[target.family];
  const split = splitReading(text, fieldName);
  if (!split.ok) return split;
  const typed = text.trim();

  let exponent: number;
  if (split.infix) {
    const { letter, trailingUnitText } = split.infix;
    const trailingKey = trailingUnitText.replace(/\s+/g, "").toLowerCase();
    const trailingIsOhms = trailingKey === "" || FAMILIES.resistance.baseNames.includes(trailingKey);
    if (target.family !== "resistance" || !trailingIsOhms) {
      return {
        ok: false,
        reason: `${fieldName}: '${typed}' — the ${letter}-as-decimal-point style is for resistors; write the number with a point and a unit`,
      };
    }
    exponent = letter === "R" ? 0 : LETTER_PREFIXES[letter];
  } else {
    const unitKey = split.unitText.replace(/\s+/g, "");
    if (unitKey === "") {
      exponent = target.exponent;
    } else {
      const match = matchUnit(unitKey, target.family);
      if (!match.matched) {
        for (const otherFamily of Object.keys(FAMILIES) as QuantityFamily[]) {
          if (otherFamily !== target.family && matchUnit(unitKey, otherFamily, false).matched) {
            return {
              ok: false,
              reason: `${fieldName}: '${typed}' is ${FAMILIES[otherFamily].noun}; this field takes ${spec.noun} (${spec.acceptedUnitsHint})`,
            };
          }
        }
        const needsUnit = target.family !== "resistance" && Object.hasOwn(LETTER_PREFIXES, unitKey);
        return {
          ok: false,
          reason: needsUnit
            ? `${fieldName}: '${typed}' needs a unit after '${unitKey}' (${spec.acceptedUnitsHint})`
            : `${fieldName}: unknown unit '${unitKey}' — use ${spec.acceptedUnitsHint}`,
        };
      }
      if (target.family === "resistance" && match.exponent === -3) {
        return {
          ok: false,
          reason: `${fieldName}: '${typed}' — lowercase m means milli; for megohms write M, MΩ or meg`,
        };
      }
      if (!spec.acceptedExponents.includes(match.exponent)) {
        return { ok: false, reason: `${fieldName}: unit '${unitKey}' is not accepted here — use ${spec.acceptedUnitsHint}` };
      }
      exponent = match.exponent;
    }
  }

  const allowNegative = options.allowNegative ?? false;
  if (split.value < 0 && !allowNegative) {
    return { ok: false, reason: `${fieldName}: '${typed}' is negative; this field takes values of zero or more` };
  }
  const value = scaleByPowerOfTen(split.value, exponent - target.exponent);
  const defaultMax = scaleByPowerOfTen(spec.defaultLimit, -target.exponent);
  const max = options.max ?? defaultMax;
  const min = options.min ?? (allowNegative ? -defaultMax : 0);
  if (value > max) {
    return { ok: false, reason: `${fieldName}: '${typed}' is above the limit of ${formatQuantity(max, dimension)}` };
  }
  if (value < min) {
    return { ok: false, reason: `${fieldName}: '${typed}' is below the limit of ${formatQuantity(min, dimension)}` };
  }
  return { ok: true, value };
}

/**
 * Converts between dimensions of the same quantity (amps, milliamps, microamps); null when
 * the two measure different things.
 * @example convertQuantity(2.5, "milliamps", "microamps") // 2500
 * @example convertQuantity(2.5, "milliamps", "volts") // null
 */
export function convertQuantity(value: number, from: QuantityDimension, to: QuantityDimension): number | null {
  if (!Object.hasOwn(DIMENSIONS, from) || !Object.hasOwn(DIMENSIONS, to)) return null;
  const source = DIMENSIONS[from];
  const target = DIMENSIONS[to];
  if ( source.family !== target.family) return null;
  return scaleByPowerOfTen(value, source.exponent - target.exponent);
}

const PREFIX_SYMBOLS: Readonly<Record<number, string>> = {
  [-12]: "p",
  [-9]: "n",
  [-6]: "µ",
  [-3]: "m",
  0: "",
  3: "k",
  6: "M",
  9: "G",
};
const PREFIX_STEP = 1000;

/**
 * Formats a value given in `dimension`'s unit with an engineering prefix (the largest one
 * the quantity uses that keeps the number at 1 or more) and `significantDigits` significant
 * digits, trailing zeros dropped. Resistances never use milli; volts and watts use m and k;
 * currents n, µ, m. Returns "—" for null, undefined or a non-finite number.
 *
 * @example formatQuantity(4700, "ohms") // "4.7 kΩ"
 * @example formatQuantity(0.05, "milliamps") // "50 µA"
 * @example formatQuantity(-8.5, "volts") // "-8.5 V"
 */
export function formatQuantity(
  value: number | null | undefined,
  dimension: QuantityDimension,
  significantDigits = 4,
): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  const target = DIMENSIONS[dimension];
  const spec = FAMILIES[target.family];
  const exponents = spec.acceptedExponents;
  if (value === 0) {
    const ownExponent = exponents.includes(target.exponent) ? target.exponent : 0;
    return `0 ${PREFIX_SYMBOLS[ownExponent]}${spec.symbol}`;
  }
  const valueInBase = scaleByPowerOfTen(value, target.exponent);
  const magnitude = Math.abs(valueInBase);
  let chosenIndex = 0;
  for (let index = 0; index < exponents.length; index++) {
    if (magnitude >= 10 ** exponents[index]) chosenIndex = index;
  }
  let mantissaText = formatSignificant(scaleByPowerOfTen(valueInBase, -exponents[chosenIndex]), significantDigits);
  // Rounding can carry 999.96 up to 1000; show it as 1 of the next prefix instead.
  if (Math.abs(Number(mantissaText)) >= PREFIX_STEP && chosenIndex < exponents.length - 1) {
    chosenIndex += 1;
    mantissaText = formatSignificant(scaleByPowerOfTen(valueInBase, -exponents[chosenIndex]), significantDigits);
  }
  return `${mantissaText} ${PREFIX_SYMBOLS[exponents[chosenIndex]]}${spec.symbol}`;
}
