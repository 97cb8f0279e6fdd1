/** JSON API for test sessions and readings. */
import type { FastifyInstance } from "fastify";
import { z } from "zod";
import { idParamSchema, parseWith } from "../../schemas/form-parsing.ts";
import { benchRowSchema, sessionInputSchema } from "../../schemas/session-schemas.ts";
import { sendFieldErrors } from "./tubes.ts";

/** The API takes numbers or text with units; both go through the same unit parser. */
const toText = (body: unknown) =>
  Object.fromEntries(Object.entries((body ?? {}) as Record<string, unknown>).map(([k, v]) => [k, typeof v === "number" ? String(v) : v]));

type SessionRow = Awaited<ReturnType<FastifyInstance["sessions"]["rows"]>>[number];

/** One tube of a session as the API returns it (sessionTubeSchema): readings with the conditions each was judged at. */
const tubeOfSession = (r: SessionRow) => ({
  tubeId: r.tubeId, label: r.label, type: r.type, readings: r.readings.map(({ tube: _t, ...x }) => x),
  verdict: r.evaluation.verdict, balancePercent: r.evaluation.balancePercent, sections: r.evaluation.sections,
});

export default async function sessionApi(app: FastifyInstance) {
  app.get("/sessions", async (request) => {
    const page = z.coerce.number().int().min(1).catch(1).parse((request.query as Record<string, unknown>).page);
    const list = await app.sessions.list(page);
    return { ...list, sessions: list.sessions.map(({ _count, ...s }) => ({ ...s, readings: _count.readings })) };
  });

  app.post("/sessions", async (request, reply) => {
    const parsed = parseWith(sessionInputSchema, toText(request.body));
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await app.sessions.create(parsed.data);
    if (!result.ok) return sendFieldErrors(reply, result.errors);
    return reply.code(201).send({ ...(await app.sessions.get(result.value.id)) });
  });

  app.get("/sessions/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const session = await app.sessions.get(params.data.id);
    if (!session) return reply.code(404).send({ error: "Not Found", message: "Session not found" });
    const rows = await app.sessions.rows(session.id, 100_000);
    return { ...session, tubes: rows.map(tubeOfSession) };
  });

  // One bench row: the same fields as the page's entry row.
  app.post("/sessions/:id/readings", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const parsed = parseWith(benchRowSchema, toText(request.body));
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await app.sessions.saveBenchRow(params.data.id, parsed.data);
    if (!result.ok) return result.status === 404 ? reply.code(404).send({ error: "Not Found", message: "Session not found" }) : sendFieldErrors(reply, result.errors, result.status ?? 422);
    const rows = await app.sessions.rows(params.data.id, 100_000);
    return reply.code(201).send(tubeOfSession(rows.find((r) => r.tubeId === result.value.tubeId)!));
  });
}
