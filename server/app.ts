/**
 * Builds the Fastify app in three passes: external plugins (security, forms, views) →
 * app plugins (database, services) → routes. server.ts only listens; tests build the app
 * without a port.
 */
import Fastify, { type FastifyServerOptions } from "fastify";
import type { AppConfig } from "./config.ts";
import { configSchema, assertSafeBinding } from "./config.ts";
import security from "./plugins/external/security.ts";
import forms from "./plugins/external/forms.ts";
import views from "./plugins/external/views.ts";
import database from "./plugins/app/database.ts";
import services from "./plugins/app/services.ts";
import imports from "./imports/imports-plugin.ts";
import routes from "./routes/index.ts";

export interface BuildOptions {
  config: Partial<AppConfig>;
  logger?: FastifyServerOptions["logger"];
}

export async function buildApp(options: BuildOptions) {
  const config = configSchema.parse(options.config);
  assertSafeBinding(config);
  const app = Fastify({ logger: options.logger ?? false, bodyLimit: config.bodyLimitBytes, trustProxy: false });
  app.decorate("config", config);

  // 1. external
  await app.register(security, { accessToken: config.accessToken });
  await app.register(forms, { uploadLimitBytes: config.uploadLimitBytes });
  await app.register(views);
  // 2. app
  await app.register(database, { databaseUrl: config.databaseUrl });
  await app.register(services, { libraryDir: config.libraryDir });
  await app.register(imports);
  // 3. routes
  await app.register(routes);

  app.setNotFoundHandler((request, reply) => {
    if (request.url.startsWith("/api/")) return reply.code(404).send({ error: "Not Found", message: `No route ${request.method} ${request.url}` });
    return reply.code(404).view("pages/error.eta", { title: "Not found", status: 404, message: "There is nothing at this address." });
  });

  app.setErrorHandler((error: Error & { statusCode?: number; code?: string }, request, reply) => {
    let status = error.statusCode && error.statusCode >= 400 ? error.statusCode : 500;
    let message = status < 500 ? error.message : "Something went wrong on the server; nothing was saved.";
    if (error.code === "FST_CSRF_INVALID_TOKEN" || error.code === "FST_CSRF_MISSING_SECRET") {
      status = 403;
      message = "The form had expired. Reload the page and submit again.";
    }
    if (error.code === "FST_ERR_CTP_BODY_TOO_LARGE" || error.code === "FST_REQ_FILE_TOO_LARGE" || status === 413) {
      status = 413;
      message = `Upload too large: the limit is ${Math.round(config.uploadLimitBytes / 1024 / 1024)} MB for files and ${Math.round(config.bodyLimitBytes / 1024)} kB for forms.`;
    }
    if (status >= 500) request.log.error(error);
    if (request.url.startsWith("/api/")) return reply.code(status).send({ error: status >= 500 ? "Internal Server Error" : "Bad Request", message });
    return reply.code(status).view("pages/error.eta", { title: "Problem", status, message });
  });

  return app;
}

declare module "fastify" {
  interface FastifyInstance {
    config: AppConfig;
  }
}
