/**
 * The library of tube types: the list (filter by class and base, search), one type's page
 * (pin diagram, heater, ratings, typical points, sources, stock), and the form that adds a
 * user type, checked exactly as the reference library is.
 */
import type { FastifyInstance } from "fastify";
import { parseWith, type FieldErrors } from "../../schemas/form-parsing.ts";
import { BASE_FAMILIES, PIN_ELEMENTS, SECTION_CUTOFFS, SECTION_KINDS, TUBE_CLASSES } from "../../schemas/tube-type-schema.ts";
import { GLOW_FIELDS, MAX_RATING_FIELDS, TYPE_FORM_SECTIONS, parseTypeFormFields, typeListQuerySchema } from "../../schemas/type-form-schemas.ts";
import { formErrorsFromSpecErrors, typeFormToSpec } from "../../types/type-form.ts";
import { checkNewType, designationClash } from "../../types/type-validation.ts";
import { typeDetailView, typeListRows } from "../../types/type-view.ts";
import { render, redirectAfterPost } from "../render.ts";

function formValues(body: unknown): Record<string, string> {
  const values: Record<string, string> = {};
  for (const [key, value] of Object.entries((body ?? {}) as Record<string, unknown>)) if (typeof value === "string") values[key] = value;
  return values;
}

export default async function typePages(app: FastifyInstance) {
  const formContext = () => ({
    classes: TUBE_CLASSES,
    bases: BASE_FAMILIES,
    sectionKinds: SECTION_KINDS,
    cutoffs: SECTION_CUTOFFS,
    pinElements: PIN_ELEMENTS,
    ratingFields: MAX_RATING_FIELDS,
    glowFields: GLOW_FIELDS,
    sectionCount: TYPE_FORM_SECTIONS,
    designations: app.catalog.list().map((entry) => entry.designation),
  });

  app.get("/types", async (request, reply) => {
    const parsed = parseWith(typeListQuerySchema, request.query);
    const query = parsed.ok ? parsed.data : {};
    const types = typeListRows(app.catalog.list(), await app.stock.summary(), query);
    if (!parsed.ok) reply.code(400);
    return render(
      request,
      reply,
      "pages/types/index.eta",
      {
        title: "Tube types",
        nav: "types",
        types,
        total: app.catalog.list().length,
        values: formValues(request.query),
        errors: parsed.ok ? {} : parsed.errors,
        classes: TUBE_CLASSES,
        bases: BASE_FAMILIES,
      },
      "partials/types/table.eta",
    );
  });

  app.get("/types/new", async (request, reply) =>
    render(request, reply, "pages/types/new.eta", {
      title: "Add a tube type",
      nav: "types",
      values: {},
      errors: {},
      ...formContext(),
    }),
  );

  app.post("/types/new", async (request, reply) => {
    const values = formValues(request.body);
    const known = { specs: app.catalog.list().map((entry) => entry.spec), ownerOf: (name: string) => app.catalog.resolve(name)?.designation };
    let status = 422;
    const parsed = parseTypeFormFields(request.body);
    const built = typeFormToSpec(parsed.values, parsed.errors);
    let errors: FieldErrors = built.errors;
    if (built.spec !== null) {
      const check = checkNewType(built.spec, known);
      if (!check.ok) {
        if (Object.keys(errors).length === 0) status = check.status;
        errors = formErrorsFromSpecErrors(check.errors, built.pinLineNumbers, errors);
      } else if (Object.keys(errors).length === 0) {
        try {
          const entry = app.catalog.addUserType(check.spec);
          return redirectAfterPost(request, reply, `/types/${encodeURIComponent(entry.designation)}`);
        } catch (error) {
          errors = { designation: (error as Error).message };
          status = 409;
        }
      }
    } else if (!errors.designation) {
      // Without a buildable spec the library checks cannot run; a taken name is still worth saying now.
      const clash = designationClash(values.designation ?? "", known.ownerOf);
      if (clash !== null) errors.designation = clash;
    }
    reply.code(status);
    return render(request, reply, "pages/types/new.eta", { title: "Add a tube type", nav: "types", values, errors, ...formContext() }, "partials/types/form.eta");
  });

  app.get("/types/:designation", async (request, reply) => {
    const name = String((request.params as Record<string, string>).designation ?? "");
    const entry = app.catalog.resolve(name);
    if (!entry) return reply.callNotFound();
    if (entry.designation !== name) return reply.redirect(`/types/${encodeURIComponent(entry.designation)}`, 301);
    const view = typeDetailView(entry, app.catalog.list(), await app.stock.summary());
    return render(request, reply, "pages/types/show.eta", { title: entry.designation, nav: "types", type: view });
  });
}
