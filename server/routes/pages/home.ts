/** The shelf overview: per-type counts by verdict and the latest sessions. */
import type { FastifyInstance } from "fastify";
import { render } from "../render.ts";
import { shelfCards } from "../../stock/shelf-overview.ts";

export default async function homePages(app: FastifyInstance) {
  app.get("/", async (request, reply) => {
    const [summary, sessions] = await Promise.all([app.stock.summary(), app.sessions.list(1, 5)]);
    return render(request, reply, "pages/home.eta", { title: "Shelf overview", nav: "", cards: shelfCards(summary), sessions: sessions.sessions });
  });
}
