/** The library of tube types: list, and one type with pins, heater, ratings, typical points and sources. */
import type { FastifyInstance } from "fastify";
import { render } from "../render.ts";

export default async function typePages(app: FastifyInstance) {
  app.get("/types", async (request, reply) => {
    const summary = new Map((await app.stock.summary()).map((s) => [s.type, s]));
    const types = app.catalog.list().map((entry) => ({
      designation: entry.designation, aliases: entry.spec.aliases.join(", "), tubeClass: entry.spec.class, base: entry.spec.base,
      heater: `${entry.spec.heater.volts} V ${entry.spec.heater.amps} A`, userAdded: entry.userAdded,
      good: summary.get(entry.designation)?.counts.good ?? 0, total: summary.get(entry.designation)?.total ?? 0,
    }));
    return render(request, reply, "pages/types/index.eta", { title: "Tube types", nav: "types", types });
  });

  app.get("/types/:designation", async (request, reply) => {
    const name = String((request.params as Record<string, string>).designation ?? "");
    const entry = app.catalog.resolve(name);
    if (!entry) return reply.callNotFound();
    if (entry.designation !== name) return reply.redirect(`/types/${encodeURIComponent(entry.designation)}`, 301);
    const summary = (await app.stock.summary()).find((s) => s.type === entry.designation);
    return render(request, reply, "pages/types/show.eta", {
      title: entry.designation, nav: "types", entry, spec: entry.spec, counts: summary?.counts ?? null, total: summary?.total ?? 0,
      sources: Object.entries(entry.spec.sources),
    });
  });
}
