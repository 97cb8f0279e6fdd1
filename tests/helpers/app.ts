/** Builds a fresh app on a temporary SQLite file for one test file; removes the file after. */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { buildApp } from "../../server/app.ts";
import type { AppConfig } from "../../server/config.ts";

export async function makeTestApp(config: Partial<AppConfig> = {}) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "tubeledger-test-"));
  const app = await buildApp({ config: { databaseUrl: `file:${path.join(dir, "test.db")}`, libraryDir: process.env.TEST_LIBRARY_DIR || undefined, ...config } });
  const close = async () => {
    await app.close();
    fs.rmSync(dir, { recursive: true, force: true });
  };
  return { app, dir, close };
}

/** Fetches a page, returns its CSRF token and the cookie to send with the next POST. */
export async function csrfFor(app: Awaited<ReturnType<typeof makeTestApp>>["app"], url = "/tubes/new", headers: Record<string, string> = {}) {
  const page = await app.inject({ url, headers });
  const token = /name="_csrf" value="([^"]+)"/.exec(page.body)?.[1];
  if (!token) throw new Error(`no CSRF token on ${url} (status ${page.statusCode})`);
  const cookie = page.cookies.map((c) => `${c.name}=${c.value}`).join("; ");
  return { token, cookie };
}

/** POSTs a urlencoded form with a valid CSRF token. */
export async function postForm(
  app: Awaited<ReturnType<typeof makeTestApp>>["app"],
  url: string,
  fields: Record<string, string>,
  options: { from?: string; htmx?: boolean } = {},
) {
  const { token, cookie } = await csrfFor(app, options.from ?? "/tubes/new");
  return app.inject({
    method: "POST",
    url,
    headers: { "content-type": "application/x-www-form-urlencoded", cookie, ...(options.htmx ? { "hx-request": "true" } : {}) },
    payload: new URLSearchParams({ ...fields, _csrf: token }).toString(),
  });
}
