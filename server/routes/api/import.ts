/** JSON API for CSV import: the CSV is the text/csv body, the session and options are query parameters. */
import type { FastifyInstance } from "fastify";
import { parseWith } from "../../schemas/form-parsing.ts";
import { importApiQuerySchema } from "../../imports/import-schemas.ts";
import { sendFieldErrors } from "./tubes.ts";

export default async function importApi(app: FastifyInstance) {
  app.post("/import", async (request, reply) => {
    if (typeof request.body !== "string") {
      return reply.code(415).send({ error: "Unsupported Media Type", message: "body: send the CSV file itself with Content-Type: text/csv", fields: { body: "send text/csv" } });
    }
    const query = parseWith(importApiQuerySchema, request.query);
    if (!query.ok) return sendFieldErrors(reply, query.errors, 400);
    const result = await app.imports.importText(query.data, request.body);
    return reply.code(result.status).send(result.body);
  });
}
