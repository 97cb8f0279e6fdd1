/** The shelf overview: per-type counts by verdict and the latest sessions. */
import type { FastifyInstance } from "fastify";
import { render } from "../render.ts";

/** Segments of a stacked bar: x offset and width in percent of the whole. */
function stackedShares(counts: Record<string, number>, total: number) {
  let x = 0;
  return (["good", "worn", "failed", "not-comparable"] as const).map((verdict) => {
    const width = total ? ((counts[verdict] ?? 0) / total) * 100 : 0;
    const segment = { verdict, x: x.toFixed(2), width: width.toFixed(2) };
    x += width;
    return segment;
  });
}

export default async function homePages(app: FastifyInstance) {
  app.get("/", async (request, reply) => {
    const [summary, sessions] = await Promise.all([app.stock.summary(), app.sessions.list(1, 5)]);
    const cards = summary.map((entry) => ({
      ...entry,
      // Widths for the stacked bar, in percent of the type's active tubes.
      shares: stackedShares(entry.counts, entry.total),
    }));
    return render(request, reply, "pages/home.eta", { title: "Shelf overview", nav: "", cards, sessions: sessions.sessions });
  });
}
