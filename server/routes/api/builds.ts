/** JSON API for build plans: the same schemas, services and transactions as the pages. */
import type { FastifyInstance, FastifyReply } from "fastify";
import { idParamSchema, parseWith } from "../../schemas/form-parsing.ts";
import { acceptSubstituteSchema, buildInputSchema, installApiSchema, parseBuildWith } from "../../schemas/build-schemas.ts";
import { BuildService } from "../../builds/build-service.ts";
import { Reservations } from "../../builds/reservations.ts";
import { BUILD_CAUTION } from "../../builds/build-view.ts";
import { sendFieldErrors } from "./tubes.ts";

function notFound(reply: FastifyReply) {
  return reply.code(404).send({ error: "Not Found", message: "Build not found" });
}

export default async function buildApi(app: FastifyInstance) {
  const service = new BuildService(app.db, app.sqlite, app.catalog);
  const reservations = new Reservations(app.sqlite, service.store, () => service.library(), app.catalog);

  app.get("/builds", async () => service.list().map(({ lineText: _text, updatedAt: _updated, ...summary }) => summary));

  app.post("/builds", async (request, reply) => {
    const parsed = parseBuildWith(buildInputSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await service.create(parsed.data);
    if (!result.ok) return sendFieldErrors(reply, result.errors, result.status);
    return reply.code(201).send(service.get(result.value.id));
  });

  app.get("/builds/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    return service.get(params.data.id) ?? notFound(reply);
  });

  app.post("/builds/:id", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const parsed = parseBuildWith(buildInputSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await service.update(params.data.id, parsed.data);
    if (!result.ok) return result.status === 404 ? notFound(reply) : sendFieldErrors(reply, result.errors, result.status);
    return service.get(params.data.id);
  });

  app.get("/builds/:id/check", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const checked = service.check(params.data.id);
    if (!checked) return notFound(reply);
    return { build: { id: checked.build.id, name: checked.build.name }, caution: BUILD_CAUTION, ...checked.result };
  });

  app.post("/builds/:id/accept", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const parsed = parseWith(acceptSubstituteSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await service.acceptSubstitute(params.data.id, parsed.data.lineId, parsed.data.designation);
    if (!result.ok) return result.status === 404 ? notFound(reply) : sendFieldErrors(reply, result.errors, result.status);
    return service.get(params.data.id);
  });

  app.post("/builds/:id/reserve", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const result = reservations.reserve(params.data.id);
    if (!result.ok) return result.status === 404 ? notFound(reply) : sendFieldErrors(reply, result.errors, result.status);
    return { reserved: result.value.reserved.length, tubes: result.value.reserved };
  });

  app.post("/builds/:id/release", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const result = reservations.release(params.data.id);
    if (!result.ok) return result.status === 404 ? notFound(reply) : sendFieldErrors(reply, result.errors, result.status);
    return { reserved: 0, released: result.value.released };
  });

  app.post("/builds/:id/install", async (request, reply) => {
    const params = parseWith(idParamSchema, request.params);
    if (!params.ok) return sendFieldErrors(reply, params.errors, 400);
    const parsed = parseWith(installApiSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = reservations.install(params.data.id, parsed.data.tubes);
    if (!result.ok) return result.status === 404 ? notFound(reply) : sendFieldErrors(reply, result.errors, result.status);
    return result.value;
  });
}
