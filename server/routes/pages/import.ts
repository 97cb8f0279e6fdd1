/** CSV import pages: upload → map columns → preview every problem → save all or nothing, with progress. */
import type { FastifyInstance, FastifyReply, FastifyRequest } from "fastify";
import { z } from "zod";
import { render, redirectAfterPost } from "../render.ts";
import { parseMappingForm } from "../../imports/import-fields.ts";
import { PROBLEM_DISPLAY_LIMIT, UPLOAD_MAX_AGE_MILLISECONDS } from "../../imports/import-service.ts";
import { noteUploadFileNames, uploadFileName } from "../../imports/upload-file-name.ts";

const uploadParamSchema = z.object({ uploadId: z.string().regex(/^[0-9a-f]{24}$/) });
const jobParamSchema = z.object({ jobId: z.string().regex(/^[0-9a-f]{24}$/) });

/** 64 MB, 512 kB, 200 bytes: the upload limit as people read it. */
function byteSizeText(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${Math.round(bytes / 1024 / 1024)} MB`;
  if (bytes >= 1024) return `${Math.round(bytes / 1024)} kB`;
  return `${bytes} bytes`;
}

export default async function importPages(app: FastifyInstance) {
  const today = () => new Date().toISOString().slice(0, 10);
  const limitText = byteSizeText(app.config.uploadLimitBytes);

  async function uploadPage(request: FastifyRequest, reply: FastifyReply, values: Record<string, unknown>, errors: Record<string, string>) {
    return render(request, reply, "pages/import/index.eta", {
      title: "Import readings", nav: "import", values, errors, limitText,
      sessions: await app.imports.sessionChoices(), recent: app.imports.recentImports(),
    });
  }

  function expired(request: FastifyRequest, reply: FastifyReply) {
    reply.code(404);
    return render(request, reply, "pages/import/expired.eta", { title: "Upload not found", nav: "import", hours: UPLOAD_MAX_AGE_MILLISECONDS / 3_600_000 });
  }

  function findUpload(request: FastifyRequest) {
    const params = uploadParamSchema.safeParse(request.params);
    if (!params.success) return null;
    const upload = app.imports.uploads.get(params.data.uploadId);
    return upload ? { id: params.data.uploadId, upload } : null;
  }

  app.get("/import", async (request, reply) => uploadPage(request, reply, { date: today() }, {}));

  app.post("/import", {
    onRequest: noteUploadFileNames,
    // A file over the limit is refused while the body is read, before the handler: say so on the form.
    errorHandler: async (error: Error & { code?: string; statusCode?: number }, request, reply) => {
      if (error.code === "FST_REQ_FILE_TOO_LARGE" || error.code === "FST_ERR_CTP_BODY_TOO_LARGE" || error.statusCode === 413) {
        reply.code(413);
        return uploadPage(request, reply, { date: today() }, { file: `File: larger than the upload limit of ${limitText}. Split it into smaller files.` });
      }
      throw error;
    },
  }, async (request, reply) => {
    const body = (request.body ?? {}) as Record<string, unknown>;
    const file = Buffer.isBuffer(body.file) ? body.file : undefined;
    const fields = Object.fromEntries(Object.entries(body).filter(([, v]) => typeof v === "string"));
    const result = await app.imports.receiveUpload({ bytes: file, fileName: uploadFileName(request, "file"), fields });
    if (!result.ok) {
      reply.code(422);
      return uploadPage(request, reply, fields, result.errors);
    }
    return redirectAfterPost(request, reply, `/import/${result.uploadId}/mapping`);
  });

  app.get("/import/:uploadId/mapping", async (request, reply) => {
    const found = findUpload(request);
    if (!found) return expired(request, reply);
    const { mapping, source } = await app.imports.initialMapping(found.upload);
    return render(request, reply, "pages/import/mapping.eta", {
      title: "Map the columns", nav: "import", uploadId: found.id, upload: app.imports.describeUpload(found.upload), source,
      form: app.imports.mappingForm(found.upload, mapping), headers: found.upload.table.headers, firstRows: found.upload.table.rows.slice(0, 3), errors: {},
    });
  });

  app.post("/import/:uploadId/mapping", async (request, reply) => {
    const found = findUpload(request);
    if (!found) return expired(request, reply);
    const { upload } = found;
    const body = (request.body ?? {}) as Record<string, unknown>;
    const parsed = parseMappingForm(body, upload.table.headers);
    if (!parsed.ok) {
      reply.code(422);
      const { mapping, source } = await app.imports.initialMapping(upload);
      return render(request, reply, "pages/import/mapping.eta", {
        title: "Map the columns", nav: "import", uploadId: found.id, upload: app.imports.describeUpload(upload), source,
        form: app.imports.mappingForm(upload, mapping, body), headers: upload.table.headers, firstRows: upload.table.rows.slice(0, 3), errors: parsed.errors,
      });
    }
    upload.mapping = parsed.mapping;
    await app.imports.rememberMapping(upload.instrument, parsed.mapping, upload.table.headers);
    upload.preview = app.imports.preview({ table: upload.table, mapping: parsed.mapping, target: upload.target, fileHash: upload.fileHash });
    return redirectAfterPost(request, reply, `/import/${found.id}/preview`);
  });

  app.get("/import/:uploadId/preview", async (request, reply) => {
    const found = findUpload(request);
    if (!found) return expired(request, reply);
    if (!found.upload.preview) return reply.redirect(`/import/${found.id}/mapping`, 303);
    return render(request, reply, "pages/import/preview.eta", {
      title: "Preview the import", nav: "import", uploadId: found.id, upload: app.imports.describeUpload(found.upload),
      preview: found.upload.preview, problemLimit: PROBLEM_DISPLAY_LIMIT, message: null,
    });
  });

  app.post("/import/:uploadId/commit", async (request, reply) => {
    const found = findUpload(request);
    if (!found) return expired(request, reply);
    const started = app.imports.startCommitJob(found.id);
    if (!started.ok) {
      if (!found.upload.preview) return reply.redirect(`/import/${found.id}/mapping`, 303);
      reply.code(409);
      return render(request, reply, "pages/import/preview.eta", {
        title: "Preview the import", nav: "import", uploadId: found.id, upload: app.imports.describeUpload(found.upload),
        preview: found.upload.preview, problemLimit: PROBLEM_DISPLAY_LIMIT, message: started.message,
      });
    }
    return redirectAfterPost(request, reply, `/import/jobs/${started.jobId}`);
  });

  app.get("/import/jobs/:jobId", async (request, reply) => {
    const params = jobParamSchema.safeParse(request.params);
    const job = params.success ? app.imports.jobs.get(params.data.jobId) : undefined;
    if (!params.success || !job) return expired(request, reply);
    return render(request, reply, "pages/import/job.eta", {
      title: "Saving the import", nav: "import", jobId: params.data.jobId, job: app.imports.presentJob(job),
    }, "partials/import/job-status.eta");
  });
}
