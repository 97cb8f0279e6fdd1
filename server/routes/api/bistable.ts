/** JSON API: analyse a bistable pair, and suggest E12/E24 resistors (the same service as the page). */
import type { FastifyInstance } from "fastify";
import { parseWith } from "../../schemas/form-parsing.ts";
import { bistableRequestSchema, requestToQuestion, resistorRequestSchema } from "../../schemas/bistable-schemas.ts";
import { BISTABLE_CAUTION, BistableService } from "../../bistable/bistable-service.ts";
import { sendFieldErrors } from "./tubes.ts";

export default async function bistableApi(app: FastifyInstance) {
  const service = new BistableService(app.catalog);

  app.post("/bistable/analyze", async (request, reply) => {
    const parsed = parseWith(bistableRequestSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const answer = service.analyze(requestToQuestion(parsed.data));
    if (!answer.ok) return sendFieldErrors(reply, answer.errors, answer.status);
    const { analysis, sides, notes } = answer.value;
    return {
      bistable: analysis.bistable,
      reasons: analysis.reasons,
      warnings: analysis.warnings,
      states: analysis.states,
      levels: analysis.levels,
      loopGain: analysis.loopGain,
      stageGains: analysis.stageGains,
      cutoffDefinition: analysis.cutoffDefinition,
      ...(analysis.solverFailure ? { solverFailure: analysis.solverFailure } : {}),
      sides,
      notes,
      ...(answer.value.yield ? { yield: { ...answer.value.yield, nominal: { pass: answer.value.yield.nominal.pass, failures: answer.value.yield.nominal.failures } } } : {}),
      caution: BISTABLE_CAUTION,
    };
  });

  app.post("/bistable/resistors", async (request, reply) => {
    const parsed = parseWith(resistorRequestSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const answer = service.suggest(parsed.data);
    if (!answer.ok) return sendFieldErrors(reply, answer.errors, answer.status);
    const { result, series } = answer.value;
    return {
      ok: result.ok,
      ...(result.ok ? {} : { reason: result.reason }),
      series,
      analysesRun: result.analysesRun,
      suggestions: result.ok
        ? result.suggestions.map((suggestion) => ({
            plateLoadOhms: suggestion.plateLoadOhms,
            couplingOhms: suggestion.couplingOhms,
            gridReturnOhms: suggestion.gridReturnOhms,
            highLevelVolts: suggestion.analysis.levels?.highLevelVolts ?? null,
            lowLevelVolts: suggestion.analysis.levels?.lowLevelVolts ?? null,
            cutoffMarginVolts: suggestion.analysis.levels?.cutoffMarginVolts ?? null,
            loopGain: suggestion.analysis.loopGain,
            levelErrorVolts: suggestion.levelErrorVolts,
            worstCase: suggestion.worstCase,
          }))
        : [],
      caution: BISTABLE_CAUTION,
    };
  });
}
