/** Test sessions and the keyboard-first bench entry. */
import type { FastifyInstance } from "fastify";
import { z } from "zod";
import { idParamSchema, parseWith } from "../../schemas/form-parsing.ts";
import { benchRowSchema, sessionInputSchema, GM_UNITS } from "../../schemas/session-schemas.ts";
import { describeConditions } from "../../verdicts/verdict-service.ts";
import { render, redirectAfterPost } from "../render.ts";

const lookupQuerySchema = z.object({ label: z.string().trim().max(60).default("") });

export default async function sessionPages(app: FastifyInstance) {
  const today = () => new Date().toISOString().slice(0, 10);

  app.get("/sessions", async (request, reply) => {
    const page = z.coerce.number().int().min(1).catch(1).parse((request.query as Record<string, unknown>).page);
    const list = await app.sessions.list(page);
    return render(request, reply, "pages/sessions/index.eta", { title: "Bench sessions", nav: "bench", list, values: { date: today() }, errors: {} });
  });

  app.post("/sessions", async (request, reply) => {
    const values = request.body as Record<string, string>;
    const parsed = parseWith(sessionInputSchema, request.body);
    const result = parsed.ok ? await app.sessions.create(parsed.data) : parsed;
    if (!result.ok) {
      reply.code(422);
      return render(request, reply, "pages/sessions/index.eta", { title: "Bench sessions", nav: "bench", list: await app.sessions.list(1), values, errors: result.errors }, "partials/sessions/new-form.eta");
    }
    return redirectAfterPost(request, reply, `/sessions/${result.value.id}`);
  });

  app.get("/sessions/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return reply.callNotFound();
    const session = await app.sessions.get(params.data.id);
    if (!session) return reply.callNotFound();
    const rows = await app.sessions.rows(session.id);
    return render(request, reply, "pages/sessions/show.eta", {
      title: `Session ${session.date}`, nav: "bench", session, conditionsText: describeConditions(session), rows, units: GM_UNITS,
      entry: { values: { gmUnit: "uS", emissionFullScale: "100" }, errors: {} }, types: app.catalog.list().map((t) => t.designation),
    });
  });

  // The label field asks this as you leave it: known labels fill in their type.
  app.get("/sessions/:id/lookup", async (request, reply) => {
    const query = lookupQuerySchema.parse(request.query);
    const tube = query.label ? await app.stock.findByLabel(query.label) : null;
    return render(request, reply, "partials/sessions/lookup.eta", {
      known: !!tube, label: query.label, type: tube?.type ?? "", tube,
    });
  });

  app.post("/sessions/:id/readings", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return reply.callNotFound();
    const session = await app.sessions.get(params.data.id);
    if (!session) return reply.callNotFound();
    const values = request.body as Record<string, string>;
    const parsed = parseWith(benchRowSchema, request.body);
    const result = parsed.ok ? await app.sessions.saveBenchRow(session.id, parsed.data) : { ...parsed, needsCreate: false };
    const types = app.catalog.list().map((t) => t.designation);
    if (!result.ok) {
      reply.code("status" in result && result.status ? result.status : 422);
      return render(request, reply, "pages/sessions/show.eta", {
        title: `Session ${session.date}`, nav: "bench", session, conditionsText: describeConditions(session), rows: await app.sessions.rows(session.id), units: GM_UNITS,
        entry: { values, errors: result.errors, needsCreate: result.needsCreate }, types,
      }, "partials/sessions/bench.eta");
    }
    if (request.headers["hx-request"] !== "true") return redirectAfterPost(request, reply, `/sessions/${session.id}`);
    // htmx: the bench again with a fresh entry row (keeping unit, pass mark and the row's own conditions) and the saved row on top.
    return render(request, reply, "partials/sessions/bench.eta", {
      session, units: GM_UNITS, types, rows: await app.sessions.rows(session.id), savedTubeId: result.value.tubeId,
      entry: { values: { gmUnit: values.gmUnit, emissionPassMark: values.emissionPassMark, emissionFullScale: values.emissionFullScale, at: values.at }, errors: {} },
    });
  });
}
