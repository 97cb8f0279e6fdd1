import { describe, it, expect, afterAll, beforeAll } from "vitest";
import { makeTestApp } from "../helpers/app.ts";
import { configFromEnvironment } from "../../server/config.ts";

describe("binding and access token", () => {
  it("refuses to listen beyond loopback without a token", () => {
    expect(() => configFromEnvironment({ HOST: "0.0.0.0" })).toThrow(/TUBELEDGER_TOKEN/);
    expect(configFromEnvironment({}).host).toBe("127.0.0.1");
    expect(configFromEnvironment({ HOST: "0.0.0.0", TUBELEDGER_TOKEN: "a-long-enough-token" }).accessToken).toBe("a-long-enough-token");
    expect(() => configFromEnvironment({ TUBELEDGER_TOKEN: "short" })).toThrow(/16/);
  });
});

describe("with an access token", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  const token = "bench-token-0123456789";
  beforeAll(async () => { t = await makeTestApp({ accessToken: token }); });
  afterAll(async () => { await t.close(); });

  it("sends pages to the login form and the API a 401", async () => {
    const page = await t.app.inject({ url: "/tubes" });
    expect(page.statusCode).toBe(302);
    expect(page.headers.location).toBe("/login?next=%2Ftubes");
    expect((await t.app.inject({ url: "/api/tubes" })).statusCode).toBe(401);
    expect((await t.app.inject({ url: "/api/tubes", headers: { authorization: "Bearer wrong-token-000000" } })).statusCode).toBe(401);
    expect((await t.app.inject({ url: "/api/tubes", headers: { authorization: `Bearer ${token}` } })).statusCode).toBe(200);
  });

  it("logs in with the token and then serves pages", async () => {
    const form = await t.app.inject({ url: "/login" });
    const csrf = /name="_csrf" value="([^"]+)"/.exec(form.body)![1];
    const cookie = form.cookies.map((c) => `${c.name}=${c.value}`).join("; ");
    const wrong = await t.app.inject({ method: "POST", url: "/login", headers: { cookie, "content-type": "application/x-www-form-urlencoded" }, payload: new URLSearchParams({ token: "nope", next: "/tubes", _csrf: csrf }).toString() });
    expect(wrong.statusCode).toBe(401);
    const ok = await t.app.inject({ method: "POST", url: "/login", headers: { cookie, "content-type": "application/x-www-form-urlencoded" }, payload: new URLSearchParams({ token, next: "//evil.example/", _csrf: csrf }).toString() });
    expect(ok.statusCode).toBe(303);
    expect(ok.headers.location).toBe("/");
    const access = ok.cookies.find((c) => c.name === "tubeledger_access")!;
    const page = await t.app.inject({ url: "/tubes", headers: { cookie: `${access.name}=${access.value}` } });
    expect(page.statusCode).toBe(200);
  });
});

describe("headers and limits", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  beforeAll(async () => { t = await makeTestApp({ bodyLimitBytes: 2048 }); });
  afterAll(async () => { await t.close(); });

  it("sets security headers", async () => {
    const page = await t.app.inject({ url: "/" });
    expect(page.headers["content-security-policy"]).toContain("script-src 'self'");
    expect(page.headers["x-content-type-options"]).toBe("nosniff");
    expect(page.headers["x-frame-options"]).toBeDefined();
  });

  it("bounds request bodies with a clear message", async () => {
    const response = await t.app.inject({ method: "POST", url: "/api/tubes", payload: { label: "x".repeat(5000), type: "12AU7" } });
    expect(response.statusCode).toBe(413);
    expect(response.json().message).toContain("too large");
  });

  it("serves htmx from node_modules and an OpenAPI document", async () => {
    expect((await t.app.inject({ url: "/static/htmx/htmx.min.js" })).statusCode).toBe(200);
    const doc = (await t.app.inject({ url: "/api/openapi.json" })).json();
    expect(doc.openapi).toBe("3.1.0");
    expect(Object.keys(doc.paths)).toContain("/api/tubes");
    expect(doc.paths["/api/tubes"].post.requestBody.content["application/json"].schema.properties.label).toBeDefined();
  });
});
