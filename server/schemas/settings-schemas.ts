/**
 * The settings form: one number per verdict threshold, each checked against the range its
 * description gives. Built from VERDICT_THRESHOLD_DESCRIPTIONS, so a new threshold needs no
 * change here.
 */
import { z } from "zod";
import { VERDICT_THRESHOLD_DESCRIPTIONS } from "../engine/verdicts/index.ts";

function thresholdField(description: (typeof VERDICT_THRESHOLD_DESCRIPTIONS)[number]) {
  const enterNumber = `${description.label}: enter a number`;
  return z.preprocess(
    (value) => (typeof value === "string" ? (value.trim() === "" ? undefined : Number(value.trim())) : value),
    z
      .number({ error: enterNumber })
      .finite(enterNumber)
      .min(description.min, `${description.label}: must be between ${description.min} and ${description.max} ${description.unit}`)
      .max(description.max, `${description.label}: must be between ${description.min} and ${description.max} ${description.unit}`),
  );
}

/** Form body → `{ wornBelowPercent: 70, … }`; every field's message names it. */
export const thresholdsFormSchema = z.object(Object.fromEntries(VERDICT_THRESHOLD_DESCRIPTIONS.map((description) => [description.key, thresholdField(description)])));
