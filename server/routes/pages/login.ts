/** Login form, used only when the ledger listens beyond loopback with an access token. */
import type { FastifyInstance } from "fastify";
import { z } from "zod";
import { render } from "../render.ts";

const loginSchema = z.object({ token: z.string().max(500).default(""), next: z.string().max(2000).default("/") });
/** Only same-site paths; never an absolute URL someone slipped into ?next=. */
const safeNext = (next: string) => (next.startsWith("/") && !next.startsWith("//") ? next : "/");

export default async function loginPages(app: FastifyInstance) {
  app.get("/login", async (request, reply) => {
    const next = safeNext(String((request.query as Record<string, string>).next ?? "/"));
    return render(request, reply, "pages/login.eta", { title: "Sign in", next, error: null });
  });
  app.post("/login", async (request, reply) => {
    const parsed = loginSchema.safeParse(request.body);
    const token = parsed.success ? parsed.data.token : "";
    const next = safeNext(parsed.success ? parsed.data.next : "/");
    if (!app.isValidAccessToken(token)) {
      reply.code(401);
      return render(request, reply, "pages/login.eta", { title: "Sign in", next, error: "Access token: not accepted" });
    }
    app.setAccessCookie(reply, token);
    return reply.redirect(next, 303);
  });
}
