/** Stock pages: list with filters, add, edit, move, change state, and one tube's page. */
import type { FastifyInstance } from "fastify";
import { idParamSchema, parseWith } from "../../schemas/form-parsing.ts";
import { moveSchema, stateChangeSchema, tubeInputSchema, tubeListQuerySchema, TUBE_STATES, VERDICTS } from "../../schemas/tube-schemas.ts";
import { render, redirectAfterPost } from "../render.ts";
import { buildTubeChart } from "../../stock/tube-chart.ts";

/** The HTTP status a failed service result asks for (422 unless it says otherwise). */
export function statusOf(result: { ok: false; status?: number } | { ok: false }): number {
  return "status" in result && typeof result.status === "number" ? result.status : 422;
}

function pageQuery(query: Record<string, unknown>, page: number): string {
  const params = new URLSearchParams();
  for (const [key, value] of Object.entries(query)) if (value !== undefined && key !== "page" && key !== "pageSize") params.set(key, String(value));
  params.set("page", String(page));
  return params.toString();
}

export default async function tubePages(app: FastifyInstance) {
  const formContext = () => ({ states: TUBE_STATES, types: app.catalog.list().map((t) => t.designation) });

  app.get("/tubes", async (request, reply) => {
    const parsed = parseWith(tubeListQuerySchema, request.query);
    const query = parsed.ok ? parsed.data : tubeListQuerySchema.parse({});
    const [result, locations] = await Promise.all([app.stock.list(query), app.stock.locations()]);
    return render(request, reply, "pages/tubes/index.eta", {
      title: "Stock", nav: "stock", query, result, locations, verdicts: VERDICTS, ...formContext(),
      pageLink: (page: number) => pageQuery(query, page),
      queryError: parsed.ok ? null : Object.values(parsed.errors).join("; "),
    }, "partials/tubes/table.eta");
  });

  app.get("/tubes/new", async (request, reply) =>
    render(request, reply, "pages/tubes/form.eta", { title: "Add a tube", nav: "stock", values: { state: "stock" }, errors: {}, action: "/tubes", ...formContext() }),
  );

  app.post("/tubes", async (request, reply) => {
    const parsed = parseWith(tubeInputSchema, request.body);
    const values = request.body as Record<string, string>;
    const result = parsed.ok ? await app.stock.create(parsed.data) : parsed;
    if (!result.ok) {
      reply.code(statusOf(result));
      return render(request, reply, "pages/tubes/form.eta", { title: "Add a tube", nav: "stock", values, errors: result.errors, action: "/tubes", ...formContext() }, "partials/tubes/form-body.eta");
    }
    return redirectAfterPost(request, reply, `/tubes/${result.value.id}`);
  });

  app.get("/tubes/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return reply.callNotFound();
    const tube = await app.stock.get(params.data.id);
    if (!tube) return reply.callNotFound();
    const [history, events, thresholds] = await Promise.all([app.sessions.history(tube.id), app.stock.events(tube.id), app.verdicts.thresholds()]);
    const sectionCount = app.catalog.resolve(tube.type)?.spec.sections.length ?? 1;
    const chart = buildTubeChart(history, sectionCount, thresholds);
    return render(request, reply, "pages/tubes/show.eta", { title: tube.label, nav: "stock", tube, history, events, chart, states: TUBE_STATES, errors: {} });
  });

  app.get("/tubes/:id/edit", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return reply.callNotFound();
    const tube = await app.stock.get(params.data.id);
    if (!tube) return reply.callNotFound();
    return render(request, reply, "pages/tubes/form.eta", { title: `Edit ${tube.label}`, nav: "stock", values: tube, errors: {}, action: `/tubes/${tube.id}`, ...formContext() });
  });

  app.post("/tubes/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return reply.callNotFound();
    const values = request.body as Record<string, string>;
    const parsed = parseWith(tubeInputSchema, request.body);
    const blankToEmpty = parsed.ok ? { ...parsed.data, maker: parsed.data.maker ?? "", dateCode: parsed.data.dateCode ?? "", location: parsed.data.location ?? "", notes: parsed.data.notes ?? "" } : null;
    const result = blankToEmpty ? await app.stock.update(params.data.id, blankToEmpty) : (parsed as { ok: false; errors: Record<string, string> });
    if (!result.ok) {
      if ("status" in result && result.status === 404) return reply.callNotFound();
      reply.code(statusOf(result));
      return render(request, reply, "pages/tubes/form.eta", { title: "Edit tube", nav: "stock", values, errors: result.errors, action: `/tubes/${params.data.id}`, ...formContext() }, "partials/tubes/form-body.eta");
    }
    return redirectAfterPost(request, reply, `/tubes/${params.data.id}`);
  });

  // Move and state change are small forms on the tube page; both write the tube's history.
  for (const [path, schema] of [["move", moveSchema], ["state", stateChangeSchema]] as const) {
    app.post(`/tubes/:id/${path}`, async (request, reply) => {
      const params = parseWith(idParamSchema, request.params);
      if (!params.ok) return reply.callNotFound();
      const parsed = parseWith(schema, request.body);
      const result = parsed.ok ? await app.stock.update(params.data.id, parsed.data) : parsed;
      if (!result.ok) {
        if ("status" in result && result.status === 404) return reply.callNotFound();
        const tube = await app.stock.get(params.data.id);
        reply.code(422);
        return render(request, reply, "pages/tubes/actions.eta", { title: tube?.label ?? "Tube", nav: "stock", tube, states: TUBE_STATES, errors: result.errors }, "partials/tubes/actions.eta");
      }
      return redirectAfterPost(request, reply, `/tubes/${params.data.id}`);
    });
  }
}
