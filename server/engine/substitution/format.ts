/** Small text helpers shared by the substitution files. */
import { elementName, PIN_ELEMENT_NAMES, type PinElement, type SectionKind } from "../tube-types/index.ts";

// Pin labels are few ("1".."9", "cap"), and sorting them is the ranker's innermost loop.
const pinNumbers = new Map<string, number>();

function pinNumber(label: string): number {
  let value = pinNumbers.get(label);
  if (value === undefined) {
    value = /^[0-9]+$/.test(label) ? Number(label) : Number.NaN;
    if (pinNumbers.size < 4096) pinNumbers.set(label, value);
  }
  return value;
}

/**
 * Orders pin labels as a builder reads them: numbers numerically ("2" before "10"), then other
 * labels ("cap", lead names) alphabetically.
 *
 * Example: `["10", "cap", "2"].sort(comparePinLabels)` → `["2", "10", "cap"]`.
 */
export function comparePinLabels(left: string, right: string): number {
  const leftNumber = pinNumber(left);
  const rightNumber = pinNumber(right);
  if (!Number.isNaN(leftNumber) && !Number.isNaN(rightNumber)) return leftNumber - rightNumber;
  if (!Number.isNaN(leftNumber)) return -1;
  if (!Number.isNaN(rightNumber)) return 1;
  return left < right ? -1 : left > right ? 1 : 0;
}

/**
 * A number for prose: at most `maximumDecimals` decimals, trailing zeros dropped.
 *
 * Example: `formatNumber(0.1500001)` → "0.15"; `formatNumber(12.6)` → "12.6".
 */
export function formatNumber(value: number, maximumDecimals = 3): string {
  const factor = 10 ** maximumDecimals;
  const rounded = Math.round(value * factor) / factor;
  return String(Object.is(rounded, -0) ? 0 : rounded);
}

/**
 * A signed percentage for prose.
 *
 * Example: `formatPercent(12.345)` → "+12.3 %"; `formatPercent(-4)` → "−4 %".
 */
export function formatPercent(value: number): string {
  const text = formatNumber(Math.abs(value), 1);
  if (text === "0") return "0 %";
  return `${value > 0 ? "+" : "−"}${text} %`;
}

/**
 * A designation as compared: upper-cased, without spaces or hyphens.
 *
 * Example: `normaliseDesignation("ecc 82")` → "ECC82"; `normaliseDesignation("6SN7-GT")` → "6SN7GT".
 */
export function normaliseDesignation(name: string): string {
  return name.toUpperCase().replace(/[\s-]+/g, "");
}

const ELEMENT_NAMES: Readonly<Record<string, string>> = PIN_ELEMENT_NAMES;

/**
 * Plain name of a pin element, with its section when it has one; `kind` names a heptode's grids
 * by what they do.
 *
 * Example: `describeElement("g1", 2)` → "control grid (section 2)"; `describeElement("g3", 1, "heptode")` → "signal grid (section 1)".
 */
export function describeElement(element: string, section?: number, kind?: SectionKind): string {
  const name = element in ELEMENT_NAMES ? elementName(element as PinElement, kind) : element;
  return section !== undefined && section > 0 ? `${name} (section ${section})` : name;
}
