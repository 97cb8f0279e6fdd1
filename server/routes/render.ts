/** One handler serves the whole page or, for htmx, only the fragment the page includes. */
import type { FastifyReply, FastifyRequest } from "fastify";

export function isHtmx(request: FastifyRequest): boolean {
  return request.headers["hx-request"] === "true";
}

/** Renders `page` (which includes `fragment`), or only `fragment` for an htmx request. */
export async function render(
  request: FastifyRequest,
  reply: FastifyReply,
  page: string,
  data: Record<string, unknown>,
  fragment?: string,
) {
  reply.header("Vary", "HX-Request");
  reply.type("text/html; charset=utf-8");
  const template = fragment && isHtmx(request) ? fragment : page;
  return reply.view(template, { ...data, csrfToken: reply.generateCsrf() });
}

/** Post/Redirect/Get for plain forms; htmx follows `HX-Location` instead. */
export function redirectAfterPost(request: FastifyRequest, reply: FastifyReply, url: string) {
  if (isHtmx(request)) return reply.header("HX-Location", url).code(204).send();
  return reply.redirect(url, 303);
}
