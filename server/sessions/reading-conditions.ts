/**
 * Test conditions as typed: the session form's four fields, the bench row's short "at" token
 * (`@250/-8.5`, `@250/150/-1 h6.3`), API fields and CSV cells all go through the same volt
 * parser and the same limits, so a value refused in one place is refused everywhere.
 */
import { parseQuantity } from "../engine/units/index.ts";

export interface ConditionValues {
  heaterVolts: number | null;
  plateVolts: number | null;
  screenVolts: number | null;
  gridVolts: number | null;
}

export type ConditionField = keyof ConditionValues;

export const CONDITION_FIELDS: readonly ConditionField[] = ["heaterVolts", "plateVolts", "screenVolts", "gridVolts"];

/** Limits per field: no receiving tube is tested above these (common practice, no source). */
const LIMITS: Readonly<Record<ConditionField, { max: number; allowNegative: boolean }>> = {
  heaterVolts: { max: 150, allowNegative: false },
  plateVolts: { max: 1000, allowNegative: false },
  screenVolts: { max: 1000, allowNegative: false },
  gridVolts: { max: 300, allowNegative: true },
};

export const NO_CONDITIONS: Readonly<ConditionValues> = { heaterVolts: null, plateVolts: null, screenVolts: null, gridVolts: null };

/** Parses one condition in volts (units allowed, grid may be negative); the reason starts with `label`. */
export function parseConditionVolts(text: string, field: ConditionField, label: string): { ok: true; value: number } | { ok: false; reason: string } {
  const { max, allowNegative } = LIMITS[field];
  const parsed = parseQuantity(text, "volts", label, { allowNegative, max, min: allowNegative ? -max : 0 });
  return parsed.ok ? { ok: true, value: parsed.value } : { ok: false, reason: parsed.reason };
}

const SLASH_NAMES: Readonly<Record<number, ConditionField[]>> = {
  1: ["plateVolts"],
  2: ["plateVolts", "gridVolts"],
  3: ["plateVolts", "screenVolts", "gridVolts"],
};

const WORDS: Readonly<Record<ConditionField, string>> = { heaterVolts: "heater volts", plateVolts: "plate volts", screenVolts: "screen volts", gridVolts: "grid volts" };

/**
 * Reads the bench row's "at" token: an optional `@`, then `plate`, `plate/grid` or
 * `plate/screen/grid` in volts (units allowed, the grid signed), and optionally a word `h<volts>`
 * for the heater, in either order. Empty text is no conditions (null). Every reason starts with
 * `fieldName` and names the value it is about.
 *
 * @example parseAtToken("@250/-8.5") // { ok: true, value: { heaterVolts: null, plateVolts: 250, screenVolts: null, gridVolts: -8.5 } }
 * @example parseAtToken("250/150/-1 h6.3") // { ok: true, value: { heaterVolts: 6.3, plateVolts: 250, screenVolts: 150, gridVolts: -1 } }
 * @example parseAtToken("@250/x") // { ok: false, reason: "At grid volts: 'x' is not a number" }
 */
export function parseAtToken(text: string | undefined, fieldName = "At"): { ok: true; value: ConditionValues | null } | { ok: false; reason: string } {
  const trimmed = (text ?? "").trim();
  if (trimmed === "") return { ok: true, value: null };
  const body = trimmed.startsWith("@") ? trimmed.slice(1).trim() : trimmed;
  const example = "write plate/grid such as @250/-8.5 or plate/screen/grid such as @250/150/-1";
  if (body === "") return { ok: false, reason: `${fieldName}: nothing after @ — ${example}` };
  const value: ConditionValues = { ...NO_CONDITIONS };
  let sawVolts = false;
  let sawHeater = false;
  // "250 V/-8.5 V" keeps its spaces before units: split words only where a new value starts.
  const words = body.replace(/\s*\/\s*/g, "/").split(/\s+(?=[hH@]|[-−+]?\d)/);
  for (const typed of words) {
    const word = typed.startsWith("@") ? typed.slice(1) : typed;
    const heater = /^[hH]\s*(.*)$/.exec(word);
    if (heater) {
      if (sawHeater) return { ok: false, reason: `${fieldName}: heater volts given twice` };
      sawHeater = true;
      if (heater[1] === "") return { ok: false, reason: `${fieldName}: h needs the heater volts after it, such as h6.3` };
      const parsed = parseConditionVolts(heater[1], "heaterVolts", `${fieldName} heater volts`);
      if (!parsed.ok) return parsed;
      value.heaterVolts = parsed.value;
      continue;
    }
    if (sawVolts) return { ok: false, reason: `${fieldName}: '${word}' — give the volts once, as ${example}` };
    sawVolts = true;
    const parts = word.split("/");
    const names = SLASH_NAMES[parts.length];
    if (!names) return { ok: false, reason: `${fieldName}: '${word}' has ${parts.length} values; ${example}` };
    for (const [position, part] of parts.entries()) {
      const field = names[position];
      if (part.trim() === "") return { ok: false, reason: `${fieldName}: the ${WORDS[field]} are missing in '${word}' — ${example}` };
      const parsed = parseConditionVolts(part.trim(), field, `${fieldName} ${WORDS[field]}`);
      if (!parsed.ok) return parsed;
      value[field] = parsed.value;
    }
  }
  return { ok: true, value };
}
