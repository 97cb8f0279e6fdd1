/**
 * Bistable page: the circuit as a GET form (shareable URL), htmx swaps the workspace with the
 * states, levels, transfer curves and yield; the resistor helper swaps only its own results.
 */
import type { FastifyInstance } from "fastify";
import { parseWith, type FieldErrors } from "../../schemas/form-parsing.ts";
import {
  bistableFormSchema,
  bistableFormToQuestion,
  formFieldForPath,
  HELPER_DEFAULTS,
  resistorFormSchema,
  resistorFormToRequest,
  YIELD_DEFAULTS,
} from "../../schemas/bistable-schemas.ts";
import { BISTABLE_CAUTION, BistableService } from "../../bistable/bistable-service.ts";
import { bistableResultView, suggestionsView } from "../../bistable/bistable-view.ts";
import { render } from "../render.ts";

/** A known-good starting circuit: two 12AU7 sections, RL 27 kΩ, R1 = R2 = 220 kΩ, B+ 250 V, −150 V. */
const STARTING_VALUES: Record<string, string> = {
  aType: "12AU7",
  aPlateLoad: "27k",
  aCoupling: "220k",
  aGridReturn: "220k",
  bPlus: "250",
  negativeRail: "-150",
  cathode: "none",
  targetHigh: "220",
  targetLow: "50",
};

const HELPER_FIELDS = new Set(["targetHigh", "targetLow", "levelTolerance", "series", "suggestions"]);

/** The query as typed, for re-filling the form (repeated parameters keep their first value). */
function typedValues(query: unknown): Record<string, string> {
  const values: Record<string, string> = {};
  for (const [key, value] of Object.entries((query ?? {}) as Record<string, unknown>)) {
    const first = Array.isArray(value) ? value[0] : value;
    if (typeof first === "string") values[key] = first;
  }
  return values;
}

function mapServiceErrors(errors: FieldErrors): FieldErrors {
  const mapped: FieldErrors = {};
  for (const [path, message] of Object.entries(errors)) {
    const field = formFieldForPath(path);
    mapped[field] = mapped[field] ? `${mapped[field]}; ${message}` : message;
  }
  return mapped;
}

export default async function bistablePages(app: FastifyInstance) {
  const service = new BistableService(app.catalog);
  const pageData = (values: Record<string, string>, errors: FieldErrors) => ({
    title: "Bistable stage",
    nav: "bistable",
    values,
    errors,
    errorSummary: Object.values(errors),
    models: service.modelChoices(),
    yieldDefaults: YIELD_DEFAULTS,
    helperDefaults: HELPER_DEFAULTS,
    caution: BISTABLE_CAUTION,
  });

  app.get("/bistable", async (request, reply) => {
    const asked = Object.hasOwn((request.query ?? {}) as object, "aType");
    const values = asked ? typedValues(request.query) : { ...STARTING_VALUES };
    let errors: FieldErrors = {};
    let result = null;
    if (asked) {
      const parsed = parseWith(bistableFormSchema, request.query);
      if (!parsed.ok) errors = parsed.errors;
      else {
        const answer = service.analyze(bistableFormToQuestion(parsed.data));
        if (answer.ok) result = bistableResultView(answer.value);
        else errors = mapServiceErrors(answer.errors);
      }
    }
    if (Object.keys(errors).length > 0) reply.code(422);
    return render(request, reply, "pages/bistable/index.eta", { ...pageData(values, errors), result, suggestions: null }, "partials/bistable/workspace.eta");
  });

  app.get("/bistable/resistors", async (request, reply) => {
    const values = typedValues(request.query);
    let errors: FieldErrors = {};
    let suggestions = null;
    const parsed = parseWith(resistorFormSchema, request.query);
    if (!parsed.ok) errors = parsed.errors;
    else {
      const answer = service.suggest(resistorFormToRequest(parsed.data));
      if (answer.ok) {
        const circuitQuery = Object.fromEntries(Object.entries(values).filter(([key]) => !HELPER_FIELDS.has(key)));
        suggestions = suggestionsView(answer.value, circuitQuery);
      } else errors = mapServiceErrors(answer.errors);
    }
    if (Object.keys(errors).length > 0) reply.code(422);
    return render(
      request,
      reply,
      "pages/bistable/index.eta",
      { ...pageData(values, errors), result: null, suggestions, helperAsked: true },
      "partials/bistable/suggestions.eta",
    );
  });
}
