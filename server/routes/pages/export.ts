/** Export & backup page: downloads of stock and readings, the full backup, and restore. */
import type { FastifyInstance, FastifyReply, FastifyRequest } from "fastify";
import { parseWith, type FieldErrors } from "../../schemas/form-parsing.ts";
import { exportServicesOf } from "../../backup/services.ts";
import { attachmentHeader, EXPORT_FORMATS, EXPORT_KINDS } from "../../backup/export-service.ts";
import { parseBackupText } from "../../backup/backup-format.ts";
import { restoredNoticeSchema, restoreFormSchema, uploadedText } from "../../backup/restore-input.ts";
import { render, redirectAfterPost } from "../render.ts";

/** Display lines for the counts table, prepared here so the template only prints. */
function holdings(counts: ReturnType<ReturnType<typeof exportServicesOf>["exports"]["counts"]>) {
  return [
    { name: "Tubes", count: counts.tubes },
    { name: "History entries", count: counts.events },
    { name: "Test sessions", count: counts.sessions },
    { name: "Section readings", count: counts.readings },
    { name: "Tube types", count: counts.types, note: `${counts.userTypes} added by you` },
    { name: "Import mappings", count: counts.mappings },
    { name: "Imported files", count: counts.batches },
  ];
}

/** "2026-05-01T14:22:33.000Z" → "2026-05-01 14:22 UTC"; anything else is shown as given. */
function readableTimestamp(text: string): string {
  const match = /^(\d{4}-\d{2}-\d{2})T(\d{2}:\d{2})/.exec(text);
  return match && text.endsWith("Z") ? `${match[1]} ${match[2]} UTC` : text;
}

export default async function exportPages(app: FastifyInstance) {
  const { exports, backups } = exportServicesOf(app);

  const page = (request: FastifyRequest, reply: FastifyReply, extra: { errors: FieldErrors; problems: string[]; notice: string | null }) =>
    render(request, reply, "pages/export/index.eta", {
      title: "Export & backup",
      nav: "export",
      holdings: holdings(exports.counts()),
      ...extra,
    });

  app.get("/export", async (request, reply) => {
    const parsed = parseWith(restoredNoticeSchema, request.query);
    const query = parsed.ok ? parsed.data : {};
    let notice: string | null = null;
    if (query.restored) {
      notice = `Restored the backup${query.from ? ` made ${readableTimestamp(query.from)}` : ""}. The ledger now holds exactly what it held then.`;
      if (query.refreshed) notice += ` ${query.refreshed} reference type${query.refreshed === 1 ? " was" : "s were"} brought up to date from the library.`;
    }
    return page(request, reply, { errors: {}, problems: [], notice });
  });

  for (const kind of EXPORT_KINDS) {
    for (const format of EXPORT_FORMATS) {
      app.get(`/export/${kind}.${format}`, async (_request, reply) => {
        const download = exports.download(kind, format);
        return reply.type(download.contentType).header("Content-Disposition", attachmentHeader(download.fileName)).send(download.stream);
      });
    }
  }

  app.get("/export/backup.json", async (_request, reply) =>
    reply.type("application/json; charset=utf-8").header("Content-Disposition", attachmentHeader(backups.fileName())).send(backups.stream()),
  );

  app.post("/export/restore", async (request, reply) => {
    const parsed = parseWith(restoreFormSchema, request.body ?? {});
    if (!parsed.ok) {
      reply.code(422);
      return page(request, reply, { errors: parsed.errors, problems: [], notice: null });
    }
    const backup = parseBackupText(uploadedText(parsed.data.file));
    if (!backup.ok) {
      reply.code(422);
      return page(request, reply, { errors: { file: `Backup file: ${backup.message}` }, problems: backup.problems, notice: null });
    }
    const result = await backups.restore(backup.document);
    if (!result.ok) {
      reply.code(422);
      return page(request, reply, { errors: { file: `Backup file: ${result.message}` }, problems: [], notice: null });
    }
    const params = new URLSearchParams({ restored: "1", from: result.summary.backupCreatedAt, refreshed: String(result.summary.referenceTypesRefreshed) });
    return redirectAfterPost(request, reply, `/export?${params}`);
  });
}
