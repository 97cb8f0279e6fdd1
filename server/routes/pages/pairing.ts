/**
 * Pairing page: choose types and a balance rule (GET form, shareable URL; htmx swaps the
 * workspace), see the optimal pairs beside sort-and-pair, and reserve the chosen tubes.
 */
import type { FastifyInstance } from "fastify";
import { parseWith, type FieldErrors } from "../../schemas/form-parsing.ts";
import { DEFAULT_GM_TOLERANCE_PERCENT, pairingFieldForPath, pairingFormSchema, pairingFormToQuestion, reserveFormSchema } from "../../schemas/pairing-schemas.ts";
import { PairingService } from "../../pairing/pairing-service.ts";
import { pairingView, reservedView } from "../../pairing/pairing-view.ts";
import { isHtmx, render } from "../render.ts";

function typedValues(query: unknown): Record<string, string> {
  const values: Record<string, string> = {};
  for (const [key, value] of Object.entries((query ?? {}) as Record<string, unknown>)) {
    const first = Array.isArray(value) ? value[0] : value;
    if (typeof first === "string") values[key] = first;
  }
  return values;
}

/** Only a pairing page may be returned to after reserving. */
function safeBack(back: string | undefined): string {
  return back && /^\/pairing(\?[^\s]*)?$/.test(back) ? back : "/pairing";
}

export default async function pairingPages(app: FastifyInstance) {
  const service = new PairingService(app.db, app.sqlite, app.catalog);
  const typeNames = () => app.catalog.list().map((entry) => entry.designation);

  app.get("/pairing", async (request, reply) => {
    const asked = Object.hasOwn((request.query ?? {}) as object, "type");
    const values = asked ? typedValues(request.query) : { envelopes: "any", setSize: "2" };
    let errors: FieldErrors = {};
    let result = null;
    if (asked) {
      const parsed = parseWith(pairingFormSchema, request.query);
      if (!parsed.ok) errors = parsed.errors;
      else {
        const answer = service.pair(pairingFormToQuestion(parsed.data));
        if (answer.ok) result = pairingView(answer.value);
        else for (const [path, message] of Object.entries(answer.errors)) errors[pairingFieldForPath(path)] = message;
      }
    }
    if (Object.keys(errors).length > 0) reply.code(422);
    return render(
      request,
      reply,
      "pages/pairing/index.eta",
      {
        title: result ? result.heading : "Pairing",
        nav: "pairing",
        values,
        errors,
        errorSummary: Object.values(errors),
        result,
        typeNames: typeNames(),
        typesInStock: service.typesInStock(),
        defaultGmTolerance: DEFAULT_GM_TOLERANCE_PERCENT,
        back: request.url,
      },
      "partials/pairing/workspace.eta",
    );
  });

  app.post("/pairing/reserve", async (request, reply) => {
    const parsed = parseWith(reserveFormSchema, request.body);
    const back = safeBack(typeof (request.body as Record<string, unknown> | undefined)?.back === "string" ? ((request.body as Record<string, string>).back) : undefined);
    let status = 200;
    let report;
    if (!parsed.ok) {
      status = 422;
      report = { ok: false, message: Object.values(parsed.errors).join("; "), rows: [] };
    } else {
      const ids = parsed.data.tubes.split(",").map(Number);
      const result = await service.reserve(ids, parsed.data.note || "reserved for balanced pairs from the pairing page");
      if (result.ok) {
        if (!isHtmx(request)) return reply.redirect(`/pairing/reserved?tubes=${ids.join(",")}&back=${encodeURIComponent(back)}`, 303);
        report = reservedView(result.value);
      } else {
        status = result.status ?? 409;
        report = { ok: false, message: Object.values(result.errors).join("; "), rows: [] };
      }
    }
    reply.code(status);
    return render(request, reply, "pages/pairing/reserved.eta", { title: report.ok ? "Tubes reserved" : "Nothing reserved", nav: "pairing", report, back }, "partials/pairing/reserve-report.eta");
  });

  app.get("/pairing/reserved", async (request, reply) => {
    const values = typedValues(request.query);
    const back = safeBack(values.back);
    const ids = /^\d+(,\d+)*$/.test(values.tubes ?? "") ? values.tubes.split(",").map(Number).slice(0, 5000) : [];
    const rows = ids.length ? await service.tubesByIds(ids) : [];
    const report = rows.length
      ? { ...reservedView(rows), message: `${rows.filter((row) => row.state === "reserved").length} of these ${rows.length} tubes are reserved now.` }
      : { ok: false, message: "No tubes were named.", rows: [] };
    return render(request, reply, "pages/pairing/reserved.eta", { title: "Reserved tubes", nav: "pairing", report, back });
  });
}
