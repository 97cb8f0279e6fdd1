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
import substitutePages from "./pages/substitutes.ts";
import substituteApi from "./api/substitutes.ts";
import typeApi from "./api/types.ts";
import bistablePages from "./pages/bistable.ts";
import bistableApi from "./api/bistable.ts";
import pairingPages from "./pages/pairing.ts";
import pairingApi from "./api/pairing.ts";
import buildPages from "./pages/builds.ts";
import buildApi from "./api/builds.ts";

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
  await app.register(substitutePages);
  await app.register(substituteApi, { prefix: "/api" });
  await app.register(typeApi, { prefix: "/api" });
  await app.register(bistablePages);
  await app.register(bistableApi, { prefix: "/api" });
  await app.register(pairingPages);
  await app.register(pairingApi, { prefix: "/api" });
  await app.register(buildPages);
  await app.register(buildApi, { prefix: "/api" });
  await app.register(openApi, { prefix: "/api" });
}
