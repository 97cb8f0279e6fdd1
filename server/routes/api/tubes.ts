/** JSON API for the stock: the same schemas and services as the pages. */
import type { FastifyInstance, FastifyReply } from "fastify";
import { idParamSchema, parseWith, type FieldErrors } from "../../schemas/form-parsing.ts";
import { tubeInputSchema, tubeListQuerySchema, tubePatchSchema } from "../../schemas/tube-schemas.ts";

export function sendFieldErrors(reply: FastifyReply, errors: FieldErrors, status = 422) {
  return reply.code(status).send({ error: "Invalid input", message: Object.values(errors).join("; "), fields: errors });
}

export default async function tubeApi(app: FastifyInstance) {
  app.get("/tubes", async (request, reply) => {
    const parsed = parseWith(tubeListQuerySchema, request.query);
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors, 400);
    return app.stock.list(parsed.data);
  });

  app.post("/tubes", async (request, reply) => {
    const parsed = parseWith(tubeInputSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await app.stock.create(parsed.data);
    if (!result.ok) return sendFieldErrors(reply, result.errors, result.status ?? 422);
    return reply.code(201).send(result.value);
  });

  app.get("/tubes/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const tube = await app.stock.get(params.data.id);
    if (!tube) return reply.code(404).send({ error: "Not Found", message: "Tube not found" });
    const [history, events] = await Promise.all([app.sessions.history(tube.id), app.stock.events(tube.id)]);
    return {
      ...tube,
      sessions: history.map((h) => ({ session: h.session, readings: h.readings.map(({ session: _s, ...r }) => r), verdict: h.evaluation.verdict, balancePercent: h.evaluation.balancePercent, sections: h.evaluation.sections })),
      events,
    };
  });

  app.patch("/tubes/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const parsed = parseWith(tubePatchSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await app.stock.update(params.data.id, parsed.data);
    if (!result.ok) return result.status === 404 ? reply.code(404).send({ error: "Not Found", message: "Tube not found" }) : sendFieldErrors(reply, result.errors, result.status ?? 422);
    return result.value;
  });

  app.get("/summary", async () => app.stock.summary());
}
