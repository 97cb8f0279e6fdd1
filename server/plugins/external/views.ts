/** Server-side templates (Eta, autoescaping) and static files: our CSS/JS and htmx from node_modules. */
import fp from "fastify-plugin";
import view from "@fastify/view";
import staticFiles from "@fastify/static";
import { Eta } from "eta";
import path from "node:path";
import { createRequire } from "node:module";
import { fileURLToPath } from "node:url";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../..");

export default fp(
  async (app) => {
    // Compiled templates are cached unless NODE_ENV=development (then edits show without a restart).
    const cacheTemplates = process.env.NODE_ENV !== "development";
    const eta = new Eta({ views: path.join(root, "views"), autoEscape: true, cache: cacheTemplates });
    await app.register(view, { engine: { eta }, templates: path.join(root, "views"), viewExt: "eta", layout: undefined, production: cacheTemplates });
    await app.register(staticFiles, { root: path.join(root, "views", "static"), prefix: "/static/", decorateReply: false });
    const require = createRequire(import.meta.url);
    const htmxDir = path.dirname(require.resolve("htmx.org/dist/htmx.min.js"));
    await app.register(staticFiles, { root: htmxDir, prefix: "/static/htmx/", decorateReply: false, allowedPath: (p) => p === "/htmx.min.js" });
  },
  { name: "views" },
);
