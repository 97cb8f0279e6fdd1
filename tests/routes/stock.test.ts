import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { makeTestApp, postForm } from "../helpers/app.ts";

let t: Awaited<ReturnType<typeof makeTestApp>>;
beforeAll(async () => { t = await makeTestApp(); });
afterAll(async () => { await t.close(); });

describe("stock pages", () => {
  it("adds a tube through the form and shows it on its page", async () => {
    const response = await postForm(t.app, "/tubes", { label: "A-001", type: "ecc82", maker: "Invented Co", location: "Drawer 1", state: "stock" });
    expect(response.statusCode).toBe(303);
    const page = await t.app.inject({ url: response.headers.location as string });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain("A-001");
    expect(page.body).toContain("12AU7"); // ECC82 is the Pro Electron name of the 12AU7 (RCA RC-30 / Mullard data, trade fact)
    expect(page.body).toContain("untested");
  });

  it("rejects bad input with a message beside the field and saves nothing", async () => {
    const before = await t.app.db.tube.count();
    for (const [fields, field, text] of [
      [{ label: "", type: "12AU7" }, "label", "Label is required"],
      [{ label: "has space", type: "12AU7" }, "label", "no spaces"],
      [{ label: "B-1", type: "NOSUCH" }, "type", "not in the library"],
      [{ label: "B-2", type: "12AU7", state: "lost" }, "state", "State must be one of"],
      [{ label: "A-001", type: "12AU7" }, "label", "already used"],
    ] as const) {
      const response = await postForm(t.app, "/tubes", fields as Record<string, string>);
      expect(response.statusCode, JSON.stringify(fields)).toBeGreaterThanOrEqual(400);
      expect(response.statusCode).toBeLessThan(500);
      expect(response.body).toContain(`id="${field}-error"`);
      expect(response.body).toContain(text);
    }
    expect(await t.app.db.tube.count()).toBe(before);
  });

  it("refuses a form without its CSRF token", async () => {
    const response = await t.app.inject({ method: "POST", url: "/tubes", headers: { "content-type": "application/x-www-form-urlencoded" }, payload: "label=X-1&type=12AU7" });
    expect(response.statusCode).toBe(403);
    expect(await t.app.db.tube.findUnique({ where: { label: "X-1" } })).toBeNull();
  });

  it("moves and retires a tube, recording both in its history", async () => {
    const tube = await t.app.db.tube.findUniqueOrThrow({ where: { label: "A-001" } });
    expect((await postForm(t.app, `/tubes/${tube.id}/move`, { location: "Shelf C", note: "sorted" })).statusCode).toBe(303);
    expect((await postForm(t.app, `/tubes/${tube.id}/state`, { state: "retired", note: "glass cracked" })).statusCode).toBe(303);
    const events = await t.app.db.tubeEvent.findMany({ where: { tubeId: tube.id }, orderBy: { id: "asc" } });
    expect(events.map((e) => [e.kind, e.fromValue, e.toValue])).toEqual([
      ["created", "", "stock"],
      ["location", "Drawer 1", "Shelf C"],
      ["state", "stock", "retired"],
    ]);
    const bad = await postForm(t.app, `/tubes/${tube.id}/move`, { location: "" });
    expect(bad.statusCode).toBe(422);
    expect(bad.body).toContain("Location is required");
    expect((await postForm(t.app, `/tubes/999999/move`, { location: "X" })).statusCode).toBe(404);
  });

  it("edits a tube and rejects a bad edit", async () => {
    const tube = await t.app.db.tube.findUniqueOrThrow({ where: { label: "A-001" } });
    const ok = await postForm(t.app, `/tubes/${tube.id}`, { label: "A-001", type: "12AU7", maker: "Other", dateCode: "K4", location: "Shelf C", state: "retired", notes: "relabelled" });
    expect(ok.statusCode).toBe(303);
    expect((await t.app.db.tube.findUniqueOrThrow({ where: { id: tube.id } })).dateCode).toBe("K4");
    const bad = await postForm(t.app, `/tubes/${tube.id}`, { label: "A-001", type: "", state: "retired" });
    expect(bad.statusCode).toBe(422);
    expect(bad.body).toContain("Type is required");
  });

  it("filters the list by type, state, location, verdict and label, paginated", async () => {
    for (let i = 0; i < 60; i++) {
      await t.app.stock.create({ label: `F-${String(i).padStart(3, "0")}`, type: i % 2 ? "12AX7" : "12AU7", state: "stock", location: i < 30 ? "Box 1" : "Box 2" });
    }
    const all = await t.app.inject({ url: "/api/tubes?q=F-&pageSize=25" });
    expect(all.json().total).toBe(60);
    expect(all.json().tubes).toHaveLength(25);
    expect(all.json().pages).toBe(3);
    const filtered = await t.app.inject({ url: "/api/tubes?type=ECC83&location=Box%201&state=stock&verdict=untested" });
    expect(filtered.json().total).toBe(15);
    const page = await t.app.inject({ url: "/tubes?type=12AX7&page=2&pageSize=10", headers: { "hx-request": "true" } });
    expect(page.statusCode).toBe(200);
    expect(page.body.startsWith('<div id="tube-table">')).toBe(true);
    expect(page.headers.vary).toContain("HX-Request");
    // % and _ in a search are literal characters, not SQL wildcards.
    expect((await t.app.inject({ url: "/api/tubes?q=F-0_1" })).json().total).toBe(0);
    expect((await t.app.inject({ url: "/api/tubes?q=f-05" })).json().total).toBe(10); // F-050 … F-059, any case
    // The label index follows renames and deletions, and quotes in a search are plain characters.
    const renamed = await t.app.db.tube.findUniqueOrThrow({ where: { label: "F-059" } });
    await t.app.db.tube.update({ where: { id: renamed.id }, data: { label: "F-059-\"odd\"" } });
    expect((await t.app.inject({ url: `/api/tubes?q=${encodeURIComponent('-"odd"')}` })).json().tubes.map((tube: { label: string }) => tube.label)).toEqual(['F-059-"odd"']);
    expect((await t.app.inject({ url: "/api/tubes?q=f-05" })).json().total).toBe(10);
    await t.app.db.tube.update({ where: { id: renamed.id }, data: { label: "F-059" } });
    expect((await t.app.inject({ url: `/api/tubes?q=${encodeURIComponent('"odd"')}` })).json().total).toBe(0);
    expect((await t.app.inject({ url: "/api/tubes?q=F" })).json().total).toBe(60); // one character: the plain scan
    // "active" leaves retired tubes out, counted as all minus retired.
    await t.app.db.tube.update({ where: { id: renamed.id }, data: { state: "retired" } });
    const active = (await t.app.inject({ url: "/api/tubes?q=F-&state=active&pageSize=100" })).json();
    expect([active.total, active.tubes.length]).toEqual([59, 59]);
    await t.app.db.tube.update({ where: { id: renamed.id }, data: { state: "stock" } });
    // The location filter's list follows writes through Prisma and through the raw connection.
    expect(await t.app.stock.locations()).toEqual(expect.arrayContaining(["Box 1", "Box 2"]));
    await t.app.stock.create({ label: "F-LOC-1", type: "12AU7", state: "stock", location: "Attic crate" });
    expect(await t.app.stock.locations()).toContain("Attic crate");
    t.app.sqlite.prepare("UPDATE Tube SET location = 'Cellar rack' WHERE label = 'F-LOC-1'").run();
    const afterRaw = await t.app.stock.locations();
    expect(afterRaw).toContain("Cellar rack");
    expect(afterRaw).not.toContain("Attic crate");
    await t.app.db.tube.delete({ where: { label: "F-LOC-1" } });
    expect(await t.app.stock.locations()).not.toContain("Cellar rack");
    const badQuery = await t.app.inject({ url: "/api/tubes?verdict=shiny" });
    expect(badQuery.statusCode).toBe(400);
    expect(badQuery.json().fields.verdict).toBeDefined();
  });

  it("summarises per type", async () => {
    const summary = (await t.app.inject({ url: "/api/summary" })).json() as Array<{ type: string; total: number; counts: Record<string, number> }>;
    const ax7 = summary.find((s) => s.type === "12AX7")!;
    expect(ax7.total).toBe(30);
    expect(ax7.counts.untested).toBe(30);
    const home = await t.app.inject({ url: "/" });
    expect(home.body).toContain("12AX7");
  });

  it("API: creates, reads, patches a tube and rejects bad JSON input", async () => {
    const created = await t.app.inject({ method: "POST", url: "/api/tubes", payload: { label: "API-1", type: "6AU6" } });
    expect(created.statusCode).toBe(201);
    const id = created.json().id;
    const patched = await t.app.inject({ method: "PATCH", url: `/api/tubes/${id}`, payload: { location: "Tray 9" } });
    expect(patched.json().location).toBe("Tray 9");
    expect((await t.app.inject({ method: "POST", url: "/api/tubes", payload: { label: "API-2" } })).statusCode).toBe(422);
    expect((await t.app.inject({ method: "POST", url: "/api/tubes", payload: "{not json", headers: { "content-type": "application/json" } })).statusCode).toBe(400);
    expect((await t.app.inject({ method: "POST", url: "/api/tubes", payload: "label=x", headers: { "content-type": "application/x-www-form-urlencoded" } })).statusCode).toBe(415);
    expect((await t.app.inject({ url: "/api/tubes/abc" })).statusCode).toBe(400);
    expect((await t.app.inject({ url: "/api/tubes/99999" })).statusCode).toBe(404);
  });
});
