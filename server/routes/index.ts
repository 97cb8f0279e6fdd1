/** Every route of the app: pages first, then the JSON API under /api. */
import type { FastifyInstance } from "fastify";
import homePages from "./pages/home.ts";
import tubePages from "./pages/tubes.ts";
import sessionPages from "./pages/sessions.ts";
import settingsPages from "./pages/settings.ts";
import typePages from "./pages/types.ts";
import loginPages from "./pages/login.ts";
import tubeApi from "./api/tubes.ts";
import sessionApi from "./api/sessions.ts";
import openApi from "./api/openapi.ts";
import importPages from "./pages/import.ts";
import importApi from "./api/import.ts";
import exportPages from "./pages/export.ts";
import exportApi from "./api/export.ts";

export default async function routes(app: FastifyInstance) {
  await app.register(homePages);
  await app.register(tubePages);
  await app.register(sessionPages);
  await app.register(settingsPages);
  await app.register(typePages);
  await app.register(loginPages);
  await app.register(tubeApi, { prefix: "/api" });
  await app.register(sessionApi, { prefix: "/api" });
  await app.register(exportPages);
  await app.register(exportApi, { prefix: "/api" });
  await app.register(importPages);
  await app.register(importApi, { prefix: "/api" });
  await app.register(openApi, { prefix: "/api" });
}
