/** Verdict thresholds: shown with their defaults and sources, saved, and applied to every tube. */
import type { FastifyInstance } from "fastify";
import { VERDICT_THRESHOLD_DESCRIPTIONS, resolveVerdictThresholds } from "../../engine/verdicts/index.ts";
import { parseWith } from "../../schemas/form-parsing.ts";
import { thresholdsFormSchema } from "../../schemas/settings-schemas.ts";
import { render, redirectAfterPost } from "../render.ts";

export default async function settingsPages(app: FastifyInstance) {
  app.get("/settings", async (request, reply) => {
    const thresholds = await app.settings.thresholds();
    const saved = (request.query as Record<string, string>).saved === "1";
    return render(request, reply, "pages/settings.eta", { title: "Settings", nav: "settings", descriptions: VERDICT_THRESHOLD_DESCRIPTIONS, values: thresholds, errors: {}, saved });
  });

  app.post("/settings", async (request, reply) => {
    const parsed = parseWith(thresholdsFormSchema, request.body);
    const resolved = parsed.ok ? resolveVerdictThresholds(parsed.data) : null;
    if (!parsed.ok || !resolved?.ok) {
      const errors = parsed.ok ? { _form: resolved && !resolved.ok ? resolved.reason : "" } : parsed.errors;
      reply.code(422);
      return render(request, reply, "pages/settings.eta", { title: "Settings", nav: "settings", descriptions: VERDICT_THRESHOLD_DESCRIPTIONS, values: request.body, errors, saved: false });
    }
    await app.settings.saveThresholds(resolved.thresholds);
    await app.verdicts.recompute();
    return redirectAfterPost(request, reply, "/settings?saved=1");
  });
}
