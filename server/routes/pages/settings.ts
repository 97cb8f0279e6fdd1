/** Verdict thresholds: shown with their defaults and sources, saved, and applied to every tube. */
import type { FastifyInstance } from "fastify";
import { VERDICT_THRESHOLD_DESCRIPTIONS, resolveVerdictThresholds } from "../../engine/verdicts/index.ts";
import { render, redirectAfterPost } from "../render.ts";

export default async function settingsPages(app: FastifyInstance) {
  app.get("/settings", async (request, reply) => {
    const thresholds = await app.settings.thresholds();
    const saved = (request.query as Record<string, string>).saved === "1";
    return render(request, reply, "pages/settings.eta", { title: "Settings", nav: "settings", descriptions: VERDICT_THRESHOLD_DESCRIPTIONS, values: thresholds, errors: {}, saved });
  });

  app.post("/settings", async (request, reply) => {
    const body = request.body as Record<string, string>;
    const errors: Record<string, string> = {};
    const overrides: Record<string, number> = {};
    for (const description of VERDICT_THRESHOLD_DESCRIPTIONS) {
      const text = (body[description.key] ?? "").trim();
      const value = Number(text);
      if (text === "" || !Number.isFinite(value)) errors[description.key] = `${description.label}: enter a number`;
      else if (value < description.min || value > description.max) errors[description.key] = `${description.label}: must be between ${description.min} and ${description.max} ${description.unit}`;
      else overrides[description.key] = value;
    }
    const resolved = Object.keys(errors).length ? null : resolveVerdictThresholds(overrides);
    if (!resolved || !resolved.ok) {
      if (resolved && !resolved.ok) errors._form = resolved.reason;
      reply.code(422);
      return render(request, reply, "pages/settings.eta", { title: "Settings", nav: "settings", descriptions: VERDICT_THRESHOLD_DESCRIPTIONS, values: body, errors, saved: false });
    }
    await app.settings.saveThresholds(resolved.thresholds);
    await app.verdicts.recompute();
    return redirectAfterPost(request, reply, "/settings?saved=1");
  });
}
