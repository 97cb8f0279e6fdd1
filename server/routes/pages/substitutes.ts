/**
 * Substitutes pages: which types could go in a socket (GET form, shareable URL, htmx swaps the
 * workspace), and the reverse question — which sockets a held type could fill.
 */
import type { FastifyInstance } from "fastify";
import { parseWith, type FieldErrors } from "../../schemas/form-parsing.ts";
import {
  MAX_FORM_SECTIONS,
  SECTION_FIELDS,
  sectionFieldName,
  socketsQuerySchema,
  substituteFormSchema,
  substituteFormToQuestion,
  type SubstituteForm,
  type SubstituteFormQuestion,
} from "../../schemas/substitute-schemas.ts";
import { SUBSTITUTE_CAUTION, SubstituteService } from "../../substitutes/substitute-service.ts";
import { sectionRowsFor, socketsResultView, substituteResultView } from "../../substitutes/substitute-view.ts";
import { DEFAULT_DERATING_FACTOR, DEFAULT_TOLERANCES } from "../../engine/substitution/index.ts";
import { render } from "../render.ts";

/** The query as typed, for re-filling the form (repeated parameters keep their first value). */
function typedValues(query: unknown): Record<string, string> {
  const values: Record<string, string> = {};
  for (const [key, value] of Object.entries((query ?? {}) as Record<string, unknown>)) {
    const first = Array.isArray(value) ? value[0] : value;
    if (typeof first === "string") values[key] = first;
  }
  return values;
}

/** Puts a service error (keyed by the question's paths) beside the form field it is about. */
function formErrorsOf(errors: FieldErrors, form: SubstituteForm, question: SubstituteFormQuestion): FieldErrors {
  const mapped: FieldErrors = {};
  for (const [path, message] of Object.entries(errors)) {
    let field = "_form";
    if (path === "type") field = "type";
    else if (path.startsWith("heaterSupply")) field = form.supply === "parallel" ? "heaterVolts" : "stringMilliamps";
    else if (path.startsWith("operating.")) {
      const section = question.operating?.[Number(path.split(".")[1])]?.section;
      field = section !== undefined ? sectionFieldName(section, "PlateVolts") : "values";
    } else if (path === "deratingFactor") field = "derating";
    else if (path === "tolerances") field = "gmTolerance";
    mapped[field] = mapped[field] ? `${mapped[field]}; ${message}` : message;
  }
  return mapped;
}

const SECTION_ERROR_FIELDS = Array.from({ length: MAX_FORM_SECTIONS }, (_, index) => SECTION_FIELDS.map((field) => sectionFieldName(index + 1, field))).flat();

export default async function substitutePages(app: FastifyInstance) {
  const service = new SubstituteService(app.catalog, app.stock);
  const typeNames = () => app.catalog.list().flatMap((entry) => [entry.designation, ...entry.spec.aliases]);
  const defaults = {
    tolerances: DEFAULT_TOLERANCES,
    derating: DEFAULT_DERATING_FACTOR,
  };

  app.get("/substitutes", async (request, reply) => {
    const values = typedValues(request.query);
    const asked = Object.hasOwn((request.query ?? {}) as object, "type");
    let errors: FieldErrors = {};
    let result = null;
    if (asked) {
      const parsed = parseWith(substituteFormSchema, request.query);
      if (!parsed.ok) errors = parsed.errors;
      else {
        const question = substituteFormToQuestion(parsed.data);
        const answer = await service.rank(question);
        if (answer.ok) result = substituteResultView(answer.value);
        else errors = formErrorsOf(answer.errors, parsed.data, question);
      }
    }
    if (Object.keys(errors).length > 0) reply.code(422);
    const socket = values.type ? app.catalog.resolve(values.type) : undefined;
    return render(
      request,
      reply,
      "pages/substitutes/index.eta",
      {
        title: socket && result ? `Substitutes for ${socket.designation}` : "Substitutes",
        nav: "substitutes",
        values,
        errors,
        errorSummary: Object.values(errors),
        sectionErrorFields: SECTION_ERROR_FIELDS,
        result,
        sectionRows: sectionRowsFor(socket?.spec),
        typeNames: typeNames(),
        defaults,
        caution: SUBSTITUTE_CAUTION,
      },
      "partials/substitutes/workspace.eta",
    );
  });

  // The section rows follow the type typed in the form (htmx swaps them on change).
  app.get("/substitutes/section-fields", async (request, reply) => {
    const values = typedValues(request.query);
    const socket = values.type ? app.catalog.resolve(values.type) : undefined;
    return render(request, reply, "partials/substitutes/section-rows.eta", { values, errors: {}, sectionErrorFields: SECTION_ERROR_FIELDS, sectionRows: sectionRowsFor(socket?.spec) });
  });

  app.get("/substitutes/sockets", async (request, reply) => {
    const values = typedValues(request.query);
    let errors: FieldErrors = {};
    let result = null;
    if (values.type !== undefined) {
      const parsed = parseWith(socketsQuerySchema, request.query);
      if (!parsed.ok) errors = parsed.errors;
      else if (parsed.data.type === undefined) errors = { type: "Type is required (a designation or alias, e.g. 12AT7)" };
      else {
        const answer = await service.socketsFor(parsed.data.type, parsed.data);
        if (answer.ok) result = socketsResultView(answer.value);
        else {
          errors = {};
          for (const [path, message] of Object.entries(answer.errors)) {
            const field = path === "type" ? "type" : path.startsWith("heaterSupply") ? (parsed.data.supply === "series" ? "stringMilliamps" : "heaterVolts") : path === "deratingFactor" ? "derating" : "_form";
            errors[field] = message;
          }
        }
      }
    }
    if (Object.keys(errors).length > 0) reply.code(422);
    return render(
      request,
      reply,
      "pages/substitutes/sockets.eta",
      {
        title: result ? `Sockets for ${result.heldDesignation}` : "Sockets a type could fill",
        nav: "substitutes",
        values,
        errors,
        errorSummary: Object.values(errors),
        result,
        typeNames: typeNames(),
        defaults,
        caution: SUBSTITUTE_CAUTION,
      },
      "partials/substitutes/sockets-workspace.eta",
    );
  });
}
