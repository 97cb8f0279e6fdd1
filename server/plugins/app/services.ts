/** Domain services shared by pages and API: the type catalog, stock, sessions, verdicts, settings. */
import fp from "fastify-plugin";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { TypeCatalog } from "../../types/type-catalog.ts";
import { loadTubeLibrary } from "../../library/load-library.ts";
import { StockService } from "../../stock/stock-service.ts";
import { SettingsService } from "../../settings/settings-service.ts";
import { VerdictService } from "../../verdicts/verdict-service.ts";
import { SessionService } from "../../sessions/session-service.ts";

export const referenceLibraryDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../../data/tube-types");

export default fp(
  async (app, options: { libraryDir?: string }) => {
    const catalog = new TypeCatalog(app.sqlite);
    catalog.syncReferenceTypes(loadTubeLibrary(options.libraryDir ?? referenceLibraryDir).types);
    const settings = new SettingsService(app.db);
    const verdicts = new VerdictService(app.sqlite, catalog, settings);
    app.decorate("catalog", catalog);
    app.decorate("settings", settings);
    app.decorate("verdicts", verdicts);
    app.decorate("stock", new StockService(app.db, catalog, app.sqlite));
    app.decorate("sessions", new SessionService(app.db, catalog, verdicts));
  },
  { name: "services", dependencies: ["database"] },
);

declare module "fastify" {
  interface FastifyInstance {
    catalog: TypeCatalog;
    settings: SettingsService;
    verdicts: VerdictService;
    stock: StockService;
    sessions: SessionService;
  }
}
