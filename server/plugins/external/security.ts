/**
 * Security headers, cookies, CSRF for browser forms, and the access token required when the
 * ledger listens beyond loopback.
 */
import fp from "fastify-plugin";
import helmet from "@fastify/helmet";
import cookie from "@fastify/cookie";
import csrf from "@fastify/csrf-protection";
import { timingSafeEqual, createHash } from "node:crypto";
import type { FastifyReply, FastifyRequest } from "fastify";

const tokenCookie = "tubeledger_access";

function sameSecret(a: string, b: string): boolean {
  // Hash first so the comparison is constant-time regardless of length.
  const left = createHash("sha256").update(a).digest();
  const right = createHash("sha256").update(b).digest();
  return timingSafeEqual(left, right);
}

export function accessTokenOf(request: FastifyRequest): string | undefined {
  const header = request.headers.authorization;
  if (header?.startsWith("Bearer ")) return header.slice("Bearer ".length).trim();
  const signed = request.cookies[tokenCookie];
  if (!signed) return undefined;
  const unsigned = request.unsignCookie(signed);
  return unsigned.valid ? (unsigned.value ?? undefined) : undefined;
}

export default fp(
  async (app, options: { accessToken?: string }) => {
    await app.register(helmet, {
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'"],
          imgSrc: ["'self'", "data:"],
          formAction: ["'self'"],
          frameAncestors: ["'none'"],
          upgradeInsecureRequests: null,
        },
      },
      // Pages are served over plain HTTP on loopback; HSTS would only confuse a browser later.
      strictTransportSecurity: false,
    });
    await app.register(cookie, { secret: options.accessToken ?? "tubeledger-loopback-cookie-secret" });
    await app.register(csrf, {
      cookieOpts: { path: "/", sameSite: "strict", httpOnly: true, signed: true },
      getToken: (request) =>
        (request.body as Record<string, string> | undefined)?._csrf ?? (request.headers["x-csrf-token"] as string | undefined),
    });

    app.decorate("accessToken", options.accessToken);
    app.decorate("setAccessCookie", (reply: FastifyReply, token: string) => {
      reply.setCookie(tokenCookie, token, { path: "/", httpOnly: true, sameSite: "strict", signed: true });
    });
    app.decorate("isValidAccessToken", (token: string) => !!options.accessToken && sameSecret(token, options.accessToken));

    // With a token configured, every request but the login page and static files must carry it.
    app.addHook("onRequest", async (request, reply) => {
      if (!options.accessToken) return;
      const url = request.url;
      if (url.startsWith("/login") || url.startsWith("/static/")) return;
      const token = accessTokenOf(request);
      if (token && sameSecret(token, options.accessToken)) return;
      if (url.startsWith("/api/")) return reply.code(401).send({ error: "Unauthorized", message: "Send Authorization: Bearer <token>" });
      return reply.redirect(`/login?next=${encodeURIComponent(url)}`);
    });

    // Browser forms carry a CSRF token. The JSON API is safe from cross-site forms because it
    // accepts only JSON or CSV bodies, which a plain HTML form cannot send.
    app.addHook("preHandler", async (request, reply) => {
      if (request.method === "GET" || request.method === "HEAD" || request.method === "OPTIONS") return;
      if (request.url.startsWith("/api/")) {
        const type = request.headers["content-type"] ?? "";
        if (!type.startsWith("application/json") && !type.startsWith("text/csv") && request.headers["content-length"] !== "0") {
          return reply.code(415).send({ error: "Unsupported Media Type", message: "Send application/json (or text/csv for imports)" });
        }
        return;
      }
      await new Promise<void>((resolve, reject) => {
        app.csrfProtection(request, reply, (error?: Error) => (error ? reject(error) : resolve()));
      });
    });
  },
  { name: "security" },
);

declare module "fastify" {
  interface FastifyInstance {
    accessToken: string | undefined;
    setAccessCookie(reply: FastifyReply, token: string): void;
    isValidAccessToken(token: string): boolean;
  }
}
