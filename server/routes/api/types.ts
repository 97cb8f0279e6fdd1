/** JSON API for tube types: list, one type (aliases resolve), add a user type, and the reverse substitute question. */
import type { FastifyInstance } from "fastify";
import { parseWith } from "../../schemas/form-parsing.ts";
import { socketsApiQuerySchema } from "../../schemas/substitute-schemas.ts";
import { typeListQuerySchema } from "../../schemas/type-form-schemas.ts";
import { SUBSTITUTE_CAUTION, SubstituteService } from "../../substitutes/substitute-service.ts";
import { matchesTypeQuery } from "../../types/type-view.ts";
import { checkNewType } from "../../types/type-validation.ts";
import { sendFieldErrors } from "./tubes.ts";

function designationParam(params: unknown): string {
  const value = (params as Record<string, unknown> | undefined)?.designation;
  return typeof value === "string" ? value : "";
}

export default async function typeApi(app: FastifyInstance) {
  const substitutes = new SubstituteService(app.catalog, app.stock);
  const notFound = (name: string) => ({ error: "Not Found", message: `Type ${name} is not in the library` });

  app.get("/types", async (request, reply) => {
    const parsed = parseWith(typeListQuerySchema, request.query);
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors, 400);
    return app.catalog
      .list()
      .filter((entry) => matchesTypeQuery(entry, parsed.data))
      .map((entry) => ({
        designation: entry.designation,
        aliases: entry.spec.aliases,
        class: entry.spec.class,
        base: entry.spec.base,
        heater: entry.spec.heater,
        userAdded: entry.userAdded,
      }));
  });

  app.get("/types/:designation", async (request, reply) => {
    const name = designationParam(request.params);
    const entry = app.catalog.resolve(name);
    if (!entry) return reply.code(404).send(notFound(name));
    const summary = (await app.stock.summary()).find((row) => row.type === entry.designation);
    const variants = app.catalog.list().filter((other) => other.spec.variantOf === entry.designation).map((other) => other.designation);
    return { ...entry.spec, userAdded: entry.userAdded, variants, stock: { total: summary?.total ?? 0, counts: summary?.counts ?? {} } };
  });

  app.post("/types", async (request, reply) => {
    const known = app.catalog.list();
    const check = checkNewType(request.body ?? {}, {
      specs: known.map((entry) => entry.spec),
      ownerOf: (name) => app.catalog.resolve(name)?.designation,
    });
    if (!check.ok) return sendFieldErrors(reply, check.errors, check.status);
    try {
      const entry = app.catalog.addUserType(check.spec);
      return reply.code(201).header("Location", `/api/types/${encodeURIComponent(entry.designation)}`).send({ ...entry.spec, userAdded: true });
    } catch (error) {
      // A name taken between the check and the insert.
      return sendFieldErrors(reply, { designation: (error as Error).message }, 409);
    }
  });

  app.get("/types/:designation/sockets", async (request, reply) => {
    const parsed = parseWith(socketsApiQuerySchema, request.query);
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors, 400);
    const name = designationParam(request.params);
    if (!app.catalog.resolve(name)) return reply.code(404).send(notFound(name));
    const answer = await substitutes.socketsFor(name, parsed.data);
    if (!answer.ok) return sendFieldErrors(reply, answer.errors, answer.status);
    const result = answer.value;
    return {
      heldType: result.held.designation,
      inStockGood: result.heldGood,
      caution: SUBSTITUTE_CAUTION,
      fits: result.fits.map((fit) => ({
        socketDesignation: fit.socketDesignation,
        socketInStockGood: result.goodByDesignation.get(fit.socketDesignation) ?? 0,
        heaterSupply:
          fit.heaterSupply.kind === "parallel"
            ? fit.heaterSupply
            : { kind: "series", milliamps: Math.round(fit.heaterSupply.amps * 1e6) / 1000, ...(fit.heaterSupply.stringWarmUpSeconds !== undefined ? { warmUpSeconds: fit.heaterSupply.stringWarmUpSeconds } : {}) },
        candidate: fit.candidate,
      })),
      misses: result.misses,
    };
  });
}
