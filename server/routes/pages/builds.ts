/**
 * Build pages: the list, the editor (lines and supplies added/removed in place, nothing saved
 * until "Save"), the check report with reserve / release / install / swap, and the pick list.
 */
import type { FastifyInstance, FastifyReply, FastifyRequest } from "fastify";
import { z } from "zod";
import { idParamSchema, parseWith, type FieldErrors } from "../../schemas/form-parsing.ts";
import {
  acceptSubstituteSchema,
  buildInputSchema,
  formRowsOf,
  formRowsToInput,
  installRowsOf,
  LINE_KINDS,
  parseBuildWith,
  swapSchema,
  type BuildFormRows,
} from "../../schemas/build-schemas.ts";
import { BuildService } from "../../builds/build-service.ts";
import { Reservations } from "../../builds/reservations.ts";
import { applyEditorAction, BUILD_CAUTION, checkReportView, editorView, lineDescription, newBuildRows, pickList, pickListCsv, rowsOfBuild } from "../../builds/build-view.ts";
import { render, redirectAfterPost } from "../render.ts";

const DONE_MESSAGES: Record<string, (count: number) => string> = {
  created: () => "Build saved. Its check is below.",
  saved: () => "Changes saved. The check below is recomputed from the stock as it is now.",
  accepted: () => "Substitute accepted for the line; the check counts it now.",
  reserved: (count) => (count === 0 ? "Nothing new to reserve: every stage and spare is already allocated." : `Reserved ${count} ${count === 1 ? "tube" : "tubes"} for this build. The pick list is ready.`),
  released: (count) => `Released ${count} reserved ${count === 1 ? "tube" : "tubes"} back to stock.`,
  installed: (count) => `Marked ${count} ${count === 1 ? "tube" : "tubes"} installed.`,
  swapped: () => "Tube swapped: the replacement is reserved in its place, the old one is back in stock.",
};

const doneQuerySchema = z.object({
  done: z.enum(Object.keys(DONE_MESSAGES) as [string, ...string[]]).optional().catch(undefined),
  n: z.coerce.number().int().min(0).max(1_000_000).optional().catch(undefined),
});

export default async function buildPages(app: FastifyInstance) {
  const service = new BuildService(app.db, app.sqlite, app.catalog);
  const reservations = new Reservations(app.sqlite, service.store, () => service.library(), app.catalog);
  const typeNames = () => app.catalog.list().map((entry) => entry.designation);

  const editorData = (rows: BuildFormRows, errors: FieldErrors, action: string, title: string, buildId: number | null) => ({
    title, nav: "builds", form: editorView(rows), errors, action, buildId, types: typeNames(), kinds: LINE_KINDS,
  });

  /** One handler for both editor forms: an add/remove action re-renders, "save" validates and stores. */
  const submitEditor = async (request: FastifyRequest, reply: FastifyReply, buildId: number | null) => {
    const body = (request.body ?? {}) as Record<string, unknown>;
    const rows = formRowsOf(body);
    const actionUrl = buildId === null ? "/builds" : `/builds/${buildId}`;
    const title = buildId === null ? "New build" : `Edit ${rows.top.name || "build"}`;
    const action = typeof body.action === "string" ? body.action : "save";
    if (action !== "save") {
      const changed = applyEditorAction(rows, action);
      if (changed === null) reply.code(422);
      return render(request, reply, "pages/builds/editor.eta", editorData(changed ?? rows, changed ? {} : { _form: `Unknown editor action "${action}"` }, actionUrl, title, buildId), "partials/builds/editor-form.eta");
    }
    const converted = formRowsToInput(rows);
    const parsed = parseBuildWith(buildInputSchema, converted.input);
    const errors: FieldErrors = { ...(parsed.ok ? {} : parsed.errors), ...converted.errors };
    let result: Awaited<ReturnType<BuildService["create"]>> | null = null;
    if (Object.keys(errors).length === 0 && parsed.ok) {
      result = buildId === null ? await service.create(parsed.data) : await service.update(buildId, parsed.data);
      if (!result.ok && result.status === 404) return reply.callNotFound();
      if (!result.ok) Object.assign(errors, result.errors);
    }
    if (Object.keys(errors).length > 0 || !result || !result.ok) {
      reply.code(result && !result.ok ? result.status : 422);
      return render(request, reply, "pages/builds/editor.eta", editorData(rows, errors, actionUrl, title, buildId), "partials/builds/editor-form.eta");
    }
    return redirectAfterPost(request, reply, `/builds/${result.value.id}?done=${buildId === null ? "created" : "saved"}`);
  };

  /** The check report, with an optional action error (reserve refused, bad install form). */
  const showCheck = async (request: FastifyRequest, reply: FastifyReply, id: number, extra: { actionError?: string; installErrors?: FieldErrors; typedPositions?: Record<string, string>; notice?: string } = {}) => {
    const checked = service.check(id);
    if (!checked) return reply.callNotFound();
    const report = checkReportView(checked.build, checked.result, service.store, app.catalog);
    return render(request, reply, "pages/builds/show.eta", {
      title: checked.build.name, nav: "builds", build: checked.build, report, caution: BUILD_CAUTION,
      lineDescriptions: checked.build.lines.map(lineDescription),
      actionError: extra.actionError ?? null, installErrors: extra.installErrors ?? {}, typedPositions: extra.typedPositions ?? {}, notice: extra.notice ?? null,
    });
  };

  const idOf = (request: FastifyRequest): number | null => {
    const params = parseWith(idParamSchema, request.params);
    return params.ok ? params.data.id : null;
  };

  app.get("/builds", async (request, reply) =>
    render(request, reply, "pages/builds/index.eta", { title: "Builds", nav: "builds", builds: service.list() }),
  );

  app.get("/builds/new", async (request, reply) => render(request, reply, "pages/builds/editor.eta", editorData(newBuildRows(), {}, "/builds", "New build", null)));

  app.post("/builds", async (request, reply) => submitEditor(request, reply, null));

  app.get("/builds/:id", async (request, reply) => {
    const id = idOf(request);
    if (id === null) return reply.callNotFound();
    const query = doneQuerySchema.parse(request.query ?? {});
    const notice = query.done ? DONE_MESSAGES[query.done](query.n ?? 0) : undefined;
    return showCheck(request, reply, id, notice ? { notice } : {});
  });

  app.get("/builds/:id/edit", async (request, reply) => {
    const id = idOf(request);
    const build = id === null ? null : service.get(id);
    if (!build) return reply.callNotFound();
    return render(request, reply, "pages/builds/editor.eta", editorData(rowsOfBuild(build), {}, `/builds/${build.id}`, `Edit ${build.name}`, build.id));
  });

  app.post("/builds/:id", async (request, reply) => {
    const id = idOf(request);
    if (id === null || !service.get(id)) return reply.callNotFound();
    return submitEditor(request, reply, id);
  });

  app.post("/builds/:id/delete", async (request, reply) => {
    const id = idOf(request);
    if (id === null) return reply.callNotFound();
    const result = await service.remove(id);
    if (!result.ok && result.status === 404) return reply.callNotFound();
    if (!result.ok) {
      reply.code(result.status);
      return showCheck(request, reply, id, { actionError: Object.values(result.errors).join("; ") });
    }
    return redirectAfterPost(request, reply, "/builds");
  });

  app.post("/builds/:id/accept", async (request, reply) => {
    const id = idOf(request);
    if (id === null) return reply.callNotFound();
    const parsed = parseWith(acceptSubstituteSchema, request.body);
    const result = parsed.ok ? await service.acceptSubstitute(id, parsed.data.lineId, parsed.data.designation) : { ok: false as const, errors: parsed.errors, status: 422 };
    if (!result.ok && result.status === 404) return reply.callNotFound();
    if (!result.ok) {
      reply.code(result.status);
      return showCheck(request, reply, id, { actionError: Object.values(result.errors).join("; ") });
    }
    return redirectAfterPost(request, reply, `/builds/${id}?done=accepted`);
  });

  for (const [path, done] of [["reserve", "reserved"], ["release", "released"]] as const) {
    app.post(`/builds/:id/${path}`, async (request, reply) => {
      const id = idOf(request);
      if (id === null) return reply.callNotFound();
      const result = path === "reserve" ? reservations.reserve(id) : reservations.release(id);
      if (!result.ok && result.status === 404) return reply.callNotFound();
      if (!result.ok) {
        reply.code(result.status);
        return showCheck(request, reply, id, { actionError: Object.values(result.errors).join("; ") });
      }
      const count = "reserved" in result.value ? result.value.reserved.length : result.value.released;
      return redirectAfterPost(request, reply, `/builds/${id}?done=${done}&n=${count}`);
    });
  }

  app.post("/builds/:id/install", async (request, reply) => {
    const id = idOf(request);
    if (id === null) return reply.callNotFound();
    const body = (request.body ?? {}) as Record<string, unknown>;
    const typedPositions = Object.fromEntries(Object.entries(body).filter(([key, value]) => key.startsWith("position.") && typeof value === "string")) as Record<string, string>;
    const { rows, errors } = installRowsOf(body);
    const result = Object.keys(errors).length > 0 ? { ok: false as const, errors, status: 422 } : reservations.install(id, rows);
    if (!result.ok && result.status === 404) return reply.callNotFound();
    if (!result.ok) {
      reply.code(result.status);
      return showCheck(request, reply, id, { installErrors: result.errors, typedPositions, actionError: `Nothing was marked installed: ${Object.values(result.errors).join("; ")}` });
    }
    return redirectAfterPost(request, reply, `/builds/${id}?done=installed&n=${result.value.installed}`);
  });

  app.post("/builds/:id/swap", async (request, reply) => {
    const id = idOf(request);
    if (id === null) return reply.callNotFound();
    const parsed = parseWith(swapSchema, request.body);
    const result = parsed.ok ? reservations.swap(id, parsed.data.allocationId, parsed.data.tubeId) : { ok: false as const, errors: parsed.errors, status: 422 };
    if (!result.ok && result.status === 404) return reply.callNotFound();
    if (!result.ok) {
      reply.code(result.status);
      return showCheck(request, reply, id, { actionError: Object.values(result.errors).join("; ") });
    }
    return redirectAfterPost(request, reply, `/builds/${id}?done=swapped`);
  });

  app.get("/builds/:id/pick-list", async (request, reply) => {
    const id = idOf(request);
    const build = id === null ? null : service.get(id);
    if (!build) return reply.callNotFound();
    const rows = pickList(build, service.store, app.catalog);
    return render(request, reply, "pages/builds/pick-list.eta", { title: `Pick list — ${build.name}`, nav: "builds", build, rows, caution: BUILD_CAUTION });
  });

  app.get("/builds/:id/pick-list.csv", async (request, reply) => {
    const id = idOf(request);
    const build = id === null ? null : service.get(id);
    if (!build) return reply.callNotFound();
    const safeName = build.name.replace(/[^\w.-]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 60) || "build";
    reply.header("content-disposition", `attachment; filename="pick-list-${safeName}.csv"`);
    return reply.type("text/csv; charset=utf-8").send(pickListCsv(pickList(build, service.store, app.catalog)));
  });
}
