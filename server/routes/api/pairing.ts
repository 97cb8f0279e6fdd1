/** JSON API: optimal pairs (or sets) from the good stock, and reserving chosen tubes. */
import type { FastifyInstance } from "fastify";
import { parseWith } from "../../schemas/form-parsing.ts";
import { pairingRequestSchema, reserveRequestSchema } from "../../schemas/pairing-schemas.ts";
import { PairingService, type SectionReading } from "../../pairing/pairing-service.ts";
import type { PairingCandidate } from "../../engine/pairing/index.ts";
import { sendFieldErrors } from "./tubes.ts";

const toPercent = (fraction: number) => Math.round(fraction * 1e6) / 1e4;

export default async function pairingApi(app: FastifyInstance) {
  const service = new PairingService(app.db, app.sqlite, app.catalog);

  app.post("/pairing", async (request, reply) => {
    const parsed = parseWith(pairingRequestSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const answer = service.pair(parsed.data);
    if (!answer.ok) return sendFieldErrors(reply, answer.errors, answer.status);
    const result = answer.value;
    const section = (candidate: PairingCandidate) => {
      const reading = result.byCandidateId.get(candidate.id) as SectionReading;
      return {
        tubeId: reading.tubeId,
        label: reading.label,
        type: reading.type,
        section: reading.section,
        transconductanceMicroSiemens: reading.transconductanceMicroSiemens,
        plateMilliamps: reading.plateMilliamps,
      };
    };
    const engine = result.exact ?? result.grouping;
    return {
      types: result.types,
      rule: parsed.data.rule,
      candidates: { tubes: result.tubeCount, sections: result.sections.length, notGoodInStock: result.notGoodInStock },
      method: result.exact ? result.exact.stats.method : "set-grouping-heuristic",
      pairs: (result.exact?.pairs ?? []).map((pair) => ({
        a: section(pair.a),
        b: section(pair.b),
        differencesPercent: pair.perValueDifference.map(toPercent),
        imbalance: pair.imbalance,
        sameEnvelope: pair.sameEnvelope,
        explanation: pair.explanation,
      })),
      groups: (result.grouping?.groups ?? []).map((group) => ({
        members: group.members.map(section),
        spreadPercent: group.perValueSpread.map(toPercent),
        imbalance: group.imbalance,
        explanation: group.explanation,
      })),
      leftovers: (engine?.leftovers ?? []).map((leftover) => ({ ...section(leftover.candidate), reasonCode: leftover.reasonCode, reason: leftover.reason })),
      greedy: result.greedy ? { pairs: result.greedy.stats.pairsFound, totalImbalance: result.greedy.stats.totalImbalance } : null,
      stats: result.exact?.stats ?? result.grouping?.stats ?? {},
      tubeIds: result.chosenTubeIds,
    };
  });

  app.post("/pairing/reserve", async (request, reply) => {
    const parsed = parseWith(reserveRequestSchema, request.body ?? {});
    if (!parsed.ok) return sendFieldErrors(reply, parsed.errors);
    const result = await service.reserve(parsed.data.tubeIds, parsed.data.note || "reserved for balanced pairs through the API");
    if (!result.ok) return sendFieldErrors(reply, result.errors, result.status ?? 409);
    return { reserved: result.value.map((row) => ({ id: row.id, label: row.label, type: row.type, state: row.state })) };
  });
}
