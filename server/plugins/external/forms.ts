/** Body parsers: urlencoded forms, multipart uploads (CSV, backups) and CSV text for the API. */
import fp from "fastify-plugin";
import formbody from "@fastify/formbody";
import multipart from "@fastify/multipart";

export default fp(
  async (app, options: { uploadLimitBytes: number }) => {
    await app.register(formbody);
    await app.register(multipart, {
      attachFieldsToBody: "keyValues",
      limits: { fileSize: options.uploadLimitBytes, files: 1, fields: 40, fieldSize: 64 * 1024 },
    });
    app.addContentTypeParser(["text/csv", "text/plain"], { parseAs: "string", bodyLimit: options.uploadLimitBytes }, (_request, body, done) =>
      done(null, body),
    );
  },
  { name: "forms" },
);
