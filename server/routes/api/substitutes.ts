/** JSON API: rank substitute types for one socket (the same service as the substitutes page). */
import type { FastifyInstance } from "fastify";
import { parseWith } from "../../schemas/form-parsing.ts";
import { substituteRequestSchema } from "../../schemas/substitute-schemas.ts";
import { SUBSTITUTE_CAUTION, SubstituteService } from "../../substitutes/substitute-service.ts";
import { sendFieldErrors } from "./tubes.ts";

export default async function substituteApi(app: FastifyInstance) {
  const service = new SubstituteService(app.catalog, app.stock);

  app.post("/substitutes", async (request, reply) => {
    const parsed = parseWith(substituteRequestSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const answer = await service.rank(parsed.data);
    if (!answer.ok) return sendFieldErrors(reply, answer.errors, answer.status);
    const result = answer.value;
    return {
      socketType: result.socket.designation,
      heaterSupply: result.heaterSupply,
      deratingFactor: result.deratingFactor,
      operatingFromTypical: result.operatingFromTypical,
      caution: SUBSTITUTE_CAUTION,
      candidates: result.ranking.candidates,
      excluded: result.ranking.excluded,
    };
  });
}
