/**
 * The OpenAPI 3.1 document, generated from the same zod schemas the routes validate with
 * (zod's own JSON Schema export), so the document cannot drift from what is enforced.
 */
import type { FastifyInstance } from "fastify";
import { z } from "zod";
import { tubeInputSchema, tubeListQuerySchema, tubePatchSchema, tubeSchema } from "../../schemas/tube-schemas.ts";
import { benchRowSchema, sessionDetailSchema, sessionInputSchema, sessionSchema, sessionTubeSchema } from "../../schemas/session-schemas.ts";
import { apiOperations as importExportOperations } from "./openapi-operations.ts";

export interface ApiOperation {
  method: "get" | "post" | "patch" | "delete";
  path: string;
  summary: string;
  tag: string;
  query?: z.ZodType;
  body?: z.ZodType;
  bodyType?: "application/json" | "text/csv";
  response?: z.ZodType;
  responseType?: string;
}

const errorSchema = z.object({ error: z.string(), message: z.string(), fields: z.record(z.string(), z.string()).optional() });
/** Numeric ids are integers; other path parameters (a type designation) are strings. */
const pathParameter = (name: string) => ({
  name, in: "path", required: true, schema: name === "id" ? { type: "integer", minimum: 1 } : { type: "string", minLength: 1 },
});

const coreOperations: ApiOperation[] = [
  { method: "get", path: "/api/tubes", summary: "List tubes with filters and pagination", tag: "stock", query: tubeListQuerySchema, response: z.object({ total: z.number(), page: z.number(), pages: z.number(), tubes: z.array(tubeSchema) }) },
  { method: "post", path: "/api/tubes", summary: "Add a tube", tag: "stock", body: tubeInputSchema, response: tubeSchema },
  { method: "get", path: "/api/tubes/{id}", summary: "One tube with its readings by session and its history", tag: "stock", response: tubeSchema },
  { method: "patch", path: "/api/tubes/{id}", summary: "Edit, move or change the state of a tube (history is recorded)", tag: "stock", body: tubePatchSchema, response: tubeSchema },
  { method: "get", path: "/api/summary", summary: "Per-type counts by verdict", tag: "stock" },
  { method: "get", path: "/api/sessions", summary: "List test sessions", tag: "bench" },
  { method: "post", path: "/api/sessions", summary: "Open a test session (conditions accept units)", tag: "bench", body: sessionInputSchema, response: sessionSchema },
  { method: "get", path: "/api/sessions/{id}", summary: "A session with every tube read, each reading with the conditions it was judged at (its own or the session's), and the verdicts", tag: "bench", response: sessionDetailSchema },
  { method: "post", path: "/api/sessions/{id}/readings", summary: "Save one bench row (replaces that tube's readings in the session); the row may carry its own test conditions (at, or heaterVolts/plateVolts/screenVolts/gridVolts), which override the session's field by field. 201 with the tube's readings and verdict", tag: "bench", body: benchRowSchema, response: sessionTubeSchema },
];

function jsonSchema(schema: z.ZodType) {
  return z.toJSONSchema(schema, { io: "input", unrepresentable: "any", target: "draft-2020-12" });
}

export function buildOpenApiDocument(operations: ApiOperation[]) {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const op of operations) {
    const parameters: unknown[] = [];
    for (const match of op.path.matchAll(/\{(\w+)\}/g)) parameters.push(pathParameter(match[1]));
    if (op.query) {
      const schema = jsonSchema(op.query) as { properties?: Record<string, unknown>; required?: string[] };
      for (const [name, property] of Object.entries(schema.properties ?? {})) parameters.push({ name, in: "query", required: schema.required?.includes(name) ?? false, schema: property });
    }
    paths[op.path] ??= {};
    paths[op.path][op.method] = {
      summary: op.summary,
      tags: [op.tag],
      ...(parameters.length ? { parameters } : {}),
      ...(op.body ? { requestBody: { required: true, content: { [op.bodyType ?? "application/json"]: { schema: op.bodyType === "text/csv" ? { type: "string" } : jsonSchema(op.body) } } } } : {}),
      responses: {
        "200": { description: "OK", content: { [op.responseType ?? "application/json"]: { schema: op.response ? jsonSchema(op.response) : {} } } },
        "4XX": { description: "Invalid input, named by field", content: { "application/json": { schema: jsonSchema(errorSchema) } } },
      },
    };
  }
  return {
    openapi: "3.1.0",
    info: { title: "Tubeledger API", version: "0.1.0", description: "Tube stock, tester readings and verdicts. With TUBELEDGER_TOKEN set, send Authorization: Bearer <token>." },
    components: { securitySchemes: { bearer: { type: "http", scheme: "bearer" } } },
    security: [{ bearer: [] }, {}],
    paths,
  };
}

export default async function openApi(app: FastifyInstance) {
  const document = buildOpenApiDocument([...coreOperations, ...importExportOperations]);
  app.get("/openapi.json", async () => document);
}
