/** Makes the import service (uploads, mappings, commit jobs) available to the import pages and API. */
import fp from "fastify-plugin";
import { ImportService } from "./import-service.ts";

export default fp(
  async (app) => {
    app.decorate("imports", new ImportService(app.sqlite, app.catalog, app.sessions, app.verdicts, (error, message) => app.log.error({ err: error }, message)));
  },
  { name: "imports", dependencies: ["database", "services"] },
);

declare module "fastify" {
  interface FastifyInstance {
    imports: ImportService;
  }
}
