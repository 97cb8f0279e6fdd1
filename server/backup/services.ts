/** Builds the export and backup services from the app's shared parts. */
import type { FastifyInstance } from "fastify";
import { loadTubeLibrary } from "../library/load-library.ts";
import { referenceLibraryDir } from "../plugins/app/services.ts";
import { BackupService } from "./backup-service.ts";
import { ExportService } from "./export-service.ts";

export function exportServicesOf(app: FastifyInstance) {
  return {
    exports: new ExportService(app.databaseFile, app.sqlite),
    backups: new BackupService(
      app.databaseFile,
      app.sqlite,
      app.catalog,
      () => loadTubeLibrary(app.config.libraryDir ?? referenceLibraryDir).types,
      app.settings,
      app.verdicts,
    ),
  };
}
