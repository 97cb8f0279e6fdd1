/** JSON API twins of the export page: stock and readings downloads, full backup, restore. */
import type { FastifyInstance } from "fastify";
import { parseWith } from "../../schemas/form-parsing.ts";
import { exportServicesOf } from "../../backup/services.ts";
import { attachmentHeader, EXPORT_KINDS } from "../../backup/export-service.ts";
import { parseBackupDocument } from "../../backup/backup-format.ts";
import { exportFormatQuerySchema, restoreQuerySchema } from "../../backup/restore-input.ts";
import { sendFieldErrors } from "./tubes.ts";

export default async function exportApi(app: FastifyInstance) {
  const { exports, backups } = exportServicesOf(app);

  for (const kind of EXPORT_KINDS) {
    app.get(`/export/${kind}`, async (request, reply) => {
      const parsed = parseWith(exportFormatQuerySchema, request.query);
      if (!parsed.ok) return sendFieldErrors(reply, parsed.errors, 400);
      const download = exports.download(kind, parsed.data.format);
      return reply.type(download.contentType).header("Content-Disposition", attachmentHeader(download.fileName)).send(download.stream);
    });
  }

  app.get("/backup", async (_request, reply) =>
    reply.type("application/json; charset=utf-8").header("Content-Disposition", attachmentHeader(backups.fileName())).send(backups.stream()),
  );

  // A whole ledger is far larger than an ordinary JSON body; it gets the upload limit instead.
  app.post("/backup/restore", { bodyLimit: app.config.uploadLimitBytes }, async (request, reply) => {
    const query = parseWith(restoreQuerySchema, request.query);
    if (!query.ok) return sendFieldErrors(reply, query.errors);
    if (request.body === undefined || request.body === null) return sendFieldErrors(reply, { backup: "backup: send the backup document as the JSON body" });
    const backup = parseBackupDocument(request.body);
    if (!backup.ok) {
      return reply.code(422).send({ error: "Invalid backup", message: `backup: ${backup.message}`, fields: { backup: backup.message }, problems: backup.problems });
    }
    const result = await backups.restore(backup.document);
    if (!result.ok) return sendFieldErrors(reply, { backup: `backup: ${result.message}` });
    return { restored: true, ...result.summary };
  });
}
