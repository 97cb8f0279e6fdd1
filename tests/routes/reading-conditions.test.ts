/**
 * Readings with their own test conditions, through every path: the bench row's "at" token, the
 * API, CSV import (mapped condition columns), the tube and session pages, export, backup and
 * restore, and the OpenAPI document.
 *
 * Reference points are the reference library's (data/tube-types): 12AU7 at 250 V, −8.5 V,
 * 2200 µS (dual-triodes-noval.json; its source: from memory); 12AX7 at 250 V, −2 V, 1600 µS
 * (dual-triodes-noval.json; source: 12AX7 data sheet, class A1 characteristics, as transcribed
 * on guitarkitbuilder.com); 6AU6 at 250 V plate, 150 V screen, −1 V grid, 5200 µS
 * (pentodes.json; source: from memory).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { parse } from "csv-parse/sync";
import { makeTestApp, postForm, csrfFor } from "../helpers/app.ts";
import { parseAtToken } from "../../server/sessions/reading-conditions.ts";
import { guessMapping } from "../../server/imports/import-fields.ts";

type TestApp = Awaited<ReturnType<typeof makeTestApp>>;

let t: TestApp;
let sessionId: number;
const benchUrl = () => `/sessions/${sessionId}/readings`;
const row = (fields: Record<string, string>) => ({ gmUnit: "uS", createTube: "1", ...fields });

beforeAll(async () => {
  t = await makeTestApp();
  // The sitting is set for the 12AU7 (library point 250 V, −8.5 V).
  const response = await postForm(t.app, "/sessions", { date: "2026-12-02", instrument: "Bench tester A", plateVolts: "250", gridVolts: "-8.5" }, { from: "/sessions" });
  expect(response.statusCode).toBe(303);
  sessionId = Number(String(response.headers.location).split("/").pop());
});
afterAll(async () => t?.close());

describe("the at token", () => {
  it("reads plate/grid, plate/screen/grid, a lone plate and a heater word", () => {
    expect(parseAtToken("@250/-8.5")).toEqual({ ok: true, value: { heaterVolts: null, plateVolts: 250, screenVolts: null, gridVolts: -8.5 } });
    expect(parseAtToken(" 250 V / 150 V / −1 V ")).toEqual({ ok: true, value: { heaterVolts: null, plateVolts: 250, screenVolts: 150, gridVolts: -1 } });
    expect(parseAtToken("@250")).toEqual({ ok: true, value: { heaterVolts: null, plateVolts: 250, screenVolts: null, gridVolts: null } });
    expect(parseAtToken("h6.3 @250/150/-1")).toEqual({ ok: true, value: { heaterVolts: 6.3, plateVolts: 250, screenVolts: 150, gridVolts: -1 } });
    expect(parseAtToken("")).toEqual({ ok: true, value: null });
  });

  it("names the field and the value in every refusal", () => {
    const reason = (text: string) => {
      const parsed = parseAtToken(text);
      return parsed.ok ? "" : parsed.reason;
    };
    expect(reason("@250/x")).toBe("At grid volts: 'x' is not a number");
    expect(reason("@250/-8,5")).toContain("At grid volts: '-8,5' is ambiguous");
    expect(reason("@250//-1")).toContain("At: the screen volts are missing");
    expect(reason("@1/2/3/4")).toContain("At: '1/2/3/4' has 4 values");
    expect(reason("@")).toContain("At: nothing after @");
    expect(reason("@-250/-2")).toContain("At plate volts: '-250' is negative");
    expect(reason("@250/-2 h")).toContain("At: h needs the heater volts");
    expect(reason("@250/-2 250/-2")).toContain("give the volts once");
  });
});

describe("bench entry with the at field", () => {
  it("judges a 12AX7 row at its own conditions in a session set for the 12AU7", async () => {
    const saved = await postForm(t.app, benchUrl(), row({ label: "AX-1", type: "12AX7", s1Gm: "1500", s2Gm: "1600", at: "@250/-2" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(saved.statusCode).toBe(200);
    // 1500 / 1600 = 93.75 % → "94 %"; 1600 / 1600 = 100 % (library 12AX7 point at 250 V, −2 V).
    expect(saved.body).toContain("94 %");
    expect(saved.body).toMatch(/plate 250 V, grid -2 V <span class="judged-at-source own">own<\/span>/);
    // The entry row keeps the at value for the next tube of the same type.
    expect(saved.body).toMatch(/<input class="bench-at" name="at" value="@250\/-2"/);
    const tube = await t.app.db.tube.findUniqueOrThrow({ where: { label: "AX-1" } });
    expect(tube.verdict).toBe("good");
    expect(tube.percent).toBeCloseTo(93.75, 9);
    const readings = await t.app.db.reading.findMany({ where: { tubeId: tube.id }, orderBy: { section: "asc" } });
    expect(readings.map((r) => [r.plateVolts, r.gridVolts, r.screenVolts, r.heaterVolts])).toEqual([[250, -2, null, null], [250, -2, null, null]]);
  });

  it("a row without at is judged at the session's conditions, as before", async () => {
    const plain = await postForm(t.app, benchUrl(), row({ label: "AX-2", type: "12AX7", s1Gm: "1500", s2Gm: "1600" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(plain.statusCode).toBe(200);
    expect((await t.app.db.tube.findUniqueOrThrow({ where: { label: "AX-2" } })).verdict).toBe("not-comparable");
    const au7 = await postForm(t.app, benchUrl(), row({ label: "AU-1", type: "12AU7", s1Gm: "2200", s2Gm: "2000" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(au7.statusCode).toBe(200);
    expect(au7.body).toMatch(/plate 250 V, grid -8.5 V <span class="judged-at-source ">session<\/span>/);
    expect((await t.app.db.tube.findUniqueOrThrow({ where: { label: "AU-1" } })).verdict).toBe("good");
  });

  it("refuses a bad at beside the field and saves nothing", async () => {
    const before = await t.app.db.reading.count();
    const bad = await postForm(t.app, benchUrl(), row({ label: "AX-3", type: "12AX7", s1Gm: "1500", at: "@250/minus two" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(bad.statusCode).toBe(422);
    expect(bad.body).toMatch(/id="at-error"[^>]*>At grid volts: &#39;minus two&#39; is not a number/);
    expect(bad.body).toMatch(/name="at" value="@250\/minus two"[^>]*aria-invalid="true"/);
    expect(await t.app.db.reading.count()).toBe(before);
    expect(await t.app.db.tube.findUnique({ where: { label: "AX-3" } })).toBeNull();
  });

  it("the session page no longer calls the own-conditions rows not comparable, and explains the field", async () => {
    const page = await t.app.inject({ url: `/sessions/${sessionId}` });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('id="bench-at-hint"');
    expect(page.body).toContain("<code>@250/150/-1</code>");
    const ax1Rows = [...page.body.matchAll(/<tr class="[^"]*" data-label="AX-1">([\s\S]*?)<\/tr>/g)].map((m) => m[1]);
    expect(ax1Rows).toHaveLength(2);
    for (const cells of ax1Rows) expect(cells).not.toContain("verdict-not-comparable");
  });

  it("the tube page shows the conditions each reading was judged at", async () => {
    const ax1 = await t.app.db.tube.findUniqueOrThrow({ where: { label: "AX-1" } });
    const page = await t.app.inject({ url: `/tubes/${ax1.id}` });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain("<th>Judged at</th>");
    expect(page.body).toMatch(/plate 250 V, grid -2 V <span class="judged-at-source own">own<\/span>/);
    const au1 = await t.app.db.tube.findUniqueOrThrow({ where: { label: "AU-1" } });
    const other = await t.app.inject({ url: `/tubes/${au1.id}` });
    expect(other.body).toMatch(/plate 250 V, grid -8.5 V <span class="judged-at-source ">session<\/span>/);
  });
});

describe("the reading API", () => {
  it("accepts numeric conditions, returns each reading's own and judged-at conditions", async () => {
    // The 6AU6 runs its heater at 6.3 V and needs a screen: plate, screen and grid of its own.
    const saved = await t.app.inject({ method: "POST", url: `/api/sessions/${sessionId}/readings`, payload: { label: "AU6-1", type: "6AU6", createTube: true, s1Gm: 4680, plateVolts: 250, screenVolts: 150, gridVolts: -1 } });
    expect(saved.statusCode, saved.body).toBe(201);
    const body = saved.json();
    // 4680 / 5200 = 90 % (library 6AU6 point).
    expect(body.verdict).toBe("good");
    expect(body.sections[0].percentOfReference).toBeCloseTo(90, 9);
    expect(body.readings[0]).toMatchObject({ plateVolts: 250, screenVolts: 150, gridVolts: -1, heaterVolts: null });
    expect(body.readings[0].judgedAt).toEqual({ heaterVolts: null, plateVolts: 250, screenVolts: 150, gridVolts: -1, source: "own", text: "plate 250 V, grid -1 V, screen 150 V" });
  });

  it("accepts the at token too, and refuses at together with separate fields, naming at", async () => {
    const token = await t.app.inject({ method: "POST", url: `/api/sessions/${sessionId}/readings`, payload: { label: "AX-4", type: "12AX7", createTube: true, s1Gm: 1200, at: "@250/-2" } });
    expect(token.statusCode).toBe(201);
    // 1200 / 1600 = 75 %: good (worn below 70 %, common practice).
    expect(token.json().sections[0].percentOfReference).toBeCloseTo(75, 9);
    const both = await t.app.inject({ method: "POST", url: `/api/sessions/${sessionId}/readings`, payload: { label: "AX-4", s1Gm: 1200, at: "@250/-2", plateVolts: 250 } });
    expect(both.statusCode).toBe(422);
    expect(both.json().fields.at).toContain("not both");
    const badField = await t.app.inject({ method: "POST", url: `/api/sessions/${sessionId}/readings`, payload: { label: "AX-4", s1Gm: 1200, gridVolts: "-2 mA" } });
    expect(badField.statusCode).toBe(422);
    expect(badField.json().fields.gridVolts).toMatch(/^Grid volts: /);
  });

  it("the session's API lists every reading with the conditions it was judged at", async () => {
    const response = await t.app.inject({ url: `/api/sessions/${sessionId}` });
    expect(response.statusCode).toBe(200);
    const tubes = response.json().tubes as Array<{ label: string; verdict: string; readings: Array<{ judgedAt: { source: string; gridVolts: number } }> }>;
    const byLabel = Object.fromEntries(tubes.map((tube) => [tube.label, tube]));
    expect(byLabel["AX-1"].readings.map((r) => [r.judgedAt.source, r.judgedAt.gridVolts])).toEqual([["own", -2], ["own", -2]]);
    expect(byLabel["AU-1"].readings[0].judgedAt).toMatchObject({ source: "session", gridVolts: -8.5 });
    expect(byLabel["AX-2"].verdict).toBe("not-comparable");
  });

  it("documents the conditions in the OpenAPI document", async () => {
    const document = (await t.app.inject({ url: "/api/openapi.json" })).json();
    const post = document.paths["/api/sessions/{id}/readings"].post;
    const properties = post.requestBody.content["application/json"].schema.properties;
    for (const name of ["at", "heaterVolts", "plateVolts", "screenVolts", "gridVolts"]) expect(properties[name], name).toBeDefined();
    expect(properties.at.description).toContain("@250/-8.5");
    const reading = post.responses["200"].content["application/json"].schema.properties.readings.items.properties;
    expect(reading.judgedAt.properties.source.enum).toEqual(["own", "session"]);
    expect(reading.plateVolts).toBeDefined();
    expect(document.paths["/api/sessions/{id}"].get.responses["200"].content["application/json"].schema.properties.tubes).toBeDefined();
  });
});

describe("CSV import with condition columns", () => {
  const csv = [
    "Tube,Type,Section,Gm,Plate V,Screen V,Grid V,Heater V",
    "IX-1,12AX7,1,1520,250,,-2,",
    "IX-1,12AX7,2,1600,250,,-2,",
    "IX-2,12AU7,1,2200,,,,",
    "IX-3,6AU6,1,3380,250,150,-1,6.3",
  ].join("\n");

  it("guesses the condition columns from their names", () => {
    expect(guessMapping(csv.split("\n")[0].split(",")).columns).toMatchObject({ plateVolts: 4, screenVolts: 5, gridVolts: 6, heaterVolts: 7 });
  });

  it("a dry run names a bad condition cell by row and column, like any numeric column", async () => {
    const broken = csv.replace("IX-3,6AU6,1,3380,250,150,-1,6.3", "IX-3,6AU6,1,3380,250,150 mA,-1,6.3");
    const query = new URLSearchParams({ instrument: "CSV tester", date: "2026-12-03", plateVolts: "250", gridVolts: "-8.5", dryRun: "true" });
    const response = await t.app.inject({ method: "POST", url: `/api/import?${query}`, headers: { "content-type": "text/csv" }, payload: broken });
    expect(response.statusCode).toBe(200);
    expect(response.json().problems).toEqual([{ row: 5, column: "Screen V", reason: expect.stringContaining("'150 mA' is a current") }]);
    expect(response.json().mapping).toMatchObject({ plateVolts: "Plate V", screenVolts: "Screen V", gridVolts: "Grid V", heaterVolts: "Heater V" });
  });

  it("saves each row's conditions and judges it at them; blank cells keep the session's", async () => {
    const query = new URLSearchParams({ instrument: "CSV tester", date: "2026-12-03", plateVolts: "250", gridVolts: "-8.5" });
    const response = await t.app.inject({ method: "POST", url: `/api/import?${query}`, headers: { "content-type": "text/csv" }, payload: csv });
    expect(response.statusCode, response.body).toBe(201);
    const verdict = async (label: string) => t.app.db.tube.findUniqueOrThrow({ where: { label } });
    // 1520 / 1600 = 95 % (library 12AX7 point at 250 V, −2 V).
    expect(await verdict("IX-1")).toMatchObject({ verdict: "good" });
    expect((await verdict("IX-1")).percent).toBeCloseTo(95, 9);
    // Blank cells: the session's 250 V, −8.5 V; 2200 / 2200 = 100 % (library 12AU7 point).
    expect((await verdict("IX-2")).percent).toBeCloseTo(100, 9);
    // 3380 / 5200 = 65 %: worn below 70 % (library 6AU6 point; default thresholds).
    expect(await verdict("IX-3")).toMatchObject({ verdict: "worn" });
    const stored = t.app.sqlite.prepare("SELECT plateVolts, screenVolts, gridVolts, heaterVolts FROM Reading r JOIN Tube t ON t.id = r.tubeId WHERE t.label = ?");
    expect(stored.get("IX-2")).toEqual({ plateVolts: null, screenVolts: null, gridVolts: null, heaterVolts: null });
    expect(stored.get("IX-3")).toEqual({ plateVolts: 250, screenVolts: 150, gridVolts: -1, heaterVolts: 6.3 });
  });

  it("the mapping page offers the condition fields and the preview shows them", async () => {
    const { token, cookie } = await csrfFor(t.app, "/import");
    const boundary = "----conditionsBoundary";
    const fields = { _csrf: token, instrument: "Page tester", date: "2026-12-04", plateVolts: "250", gridVolts: "-8.5" };
    const parts = Object.entries(fields).map(([key, value]) => `--${boundary}\r\nContent-Disposition: form-data; name="${key}"\r\n\r\n${value}\r\n`);
    parts.push(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="mixed.csv"\r\nContent-Type: text/csv\r\n\r\n${csv.replaceAll("IX-", "PX-")}\r\n--${boundary}--\r\n`);
    const uploaded = await t.app.inject({ method: "POST", url: "/import", headers: { "content-type": `multipart/form-data; boundary=${boundary}`, cookie }, payload: parts.join("") });
    expect(uploaded.statusCode, uploaded.body).toBe(303);
    const mappingUrl = String(uploaded.headers.location);
    const mapping = await t.app.inject({ url: mappingUrl });
    expect(mapping.body).toContain("Test conditions of each row");
    expect(mapping.body).toMatch(/<select id="col_gridVolts" name="col_gridVolts"[\s\S]*?<option value="6" selected>Grid V/);
    const values: Record<string, string> = {};
    for (const select of mapping.body.matchAll(/<select id="([^"]+)" name="[^"]+"[^>]*>([\s\S]*?)<\/select>/g)) values[select[1]] = /<option value="([^"]*)" selected/.exec(select[2])?.[1] ?? "";
    const form = await csrfFor(t.app, mappingUrl);
    const posted = await t.app.inject({
      method: "POST", url: mappingUrl, headers: { "content-type": "application/x-www-form-urlencoded", cookie: form.cookie },
      payload: new URLSearchParams({ ...values, _csrf: form.token }).toString(),
    });
    expect(posted.statusCode, posted.body).toBe(303);
    const preview = await t.app.inject({ url: String(posted.headers.location) });
    expect(preview.body).toContain("<th>Conditions</th>");
    expect(preview.body).toContain("<td>plate 250 V, grid -1 V, screen 150 V, heater 6.3 V</td>");
    expect(preview.body).toContain("<td>session&#39;s</td>");
  });
});

describe("export and backup carry the conditions", () => {
  it("the readings CSV and JSON have each reading's own conditions beside the session's", async () => {
    const records = parse((await t.app.inject({ url: "/export/readings.csv" })).body, { columns: true }) as Array<Record<string, string>>;
    const ax1 = records.find((r) => r.label === "AX-1" && r.section === "1")!;
    expect(ax1).toMatchObject({ reading_plate_V: "250", reading_grid_V: "-2", reading_screen_V: "", reading_heater_V: "", plate_V: "250", grid_V: "-8.5" });
    const au1 = records.find((r) => r.label === "AU-1")!;
    expect(au1).toMatchObject({ reading_plate_V: "", reading_grid_V: "", plate_V: "250" });
    const json = (await t.app.inject({ url: "/export/readings.json" })).json() as Array<Record<string, unknown>>;
    expect(json.find((r) => r.label === "AU6-1")).toMatchObject({ readingPlateVolts: 250, readingScreenVolts: 150, readingGridVolts: -1, readingHeaterVolts: null, gridVolts: -8.5 });
  });

  it("the readings CSV imports back with the same own conditions", async () => {
    const exported = (await t.app.inject({ url: "/export/readings.csv" })).body;
    const records = parse(exported, { columns: true }) as Array<Record<string, string>>;
    const benchRows = records.filter((r) => r.date === "2026-12-02");
    const header = Object.keys(benchRows[0]);
    const { stringify } = await import("csv-stringify/sync");
    const target = await makeTestApp();
    try {
      const query = new URLSearchParams({ instrument: "Bench tester A", date: "2026-12-02", plateVolts: "250", gridVolts: "-8.5" });
      const imported = await target.app.inject({ method: "POST", url: `/api/import?${query}`, headers: { "content-type": "text/csv" }, payload: stringify([header, ...benchRows.map((r) => header.map((h) => r[h]))]) });
      expect(imported.statusCode, imported.body).toBe(201);
      expect(imported.json().mapping).toMatchObject({ plateVolts: "reading_plate_V", gridVolts: "reading_grid_V", screenVolts: "reading_screen_V", heaterVolts: "reading_heater_V" });
      const again = parse((await target.app.inject({ url: "/export/readings.csv" })).body, { columns: true }) as Array<Record<string, string>>;
      const columns = header.filter((h) => h !== "session_id");
      expect(again.map((r) => columns.map((h) => r[h]))).toEqual(benchRows.map((r) => columns.map((h) => r[h])));
      expect((await target.app.db.tube.findUniqueOrThrow({ where: { label: "AX-1" } })).verdict).toBe("good");
    } finally {
      await target.close();
    }
  });

  it("backup → restore → backup is exact, conditions included", async () => {
    const backup = (await t.app.inject({ url: "/api/backup" })).json();
    expect(backup.version).toBe(2);
    const columns = backup.tables.Reading.columns as string[];
    expect(columns.slice(-4)).toEqual(["gridVolts", "heaterVolts", "plateVolts", "screenVolts"]);
    expect(backup.tables.Reading.rows.some((r: unknown[]) => r[columns.indexOf("gridVolts")] === -2)).toBe(true);
    const target = await makeTestApp();
    try {
      const restored = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", payload: backup });
      expect(restored.statusCode, restored.body).toBe(200);
      const again = (await target.app.inject({ url: "/api/backup" })).json();
      expect({ ...again, createdAt: "" }).toEqual({ ...backup, createdAt: "" });
      expect((await target.app.db.tube.findUniqueOrThrow({ where: { label: "AX-1" } })).verdict).toBe("good");
    } finally {
      await target.close();
    }
  });

  it("a version 1 backup (no reading conditions) still restores, its readings at the session's conditions", async () => {
    const backup = (await t.app.inject({ url: "/api/backup" })).json();
    const columns = backup.tables.Reading.columns as string[];
    const keep = columns.map((_, index) => index).filter((index) => !["gridVolts", "heaterVolts", "plateVolts", "screenVolts"].includes(columns[index]));
    const older = {
      ...backup, version: 1,
      tables: { ...backup.tables, Reading: { columns: keep.map((i) => columns[i]), rows: backup.tables.Reading.rows.map((r: unknown[]) => keep.map((i) => r[i])) } },
    };
    const target = await makeTestApp();
    try {
      const restored = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", payload: older });
      expect(restored.statusCode, restored.body).toBe(200);
      const reading = await target.app.db.reading.findFirstOrThrow({ where: { tube: { label: "AX-1" } } });
      expect([reading.plateVolts, reading.gridVolts, reading.screenVolts, reading.heaterVolts]).toEqual([null, null, null, null]);
      // Without its own conditions the 12AX7 is judged at the 12AU7's 250 V, −8.5 V again.
      expect((await target.app.db.tube.findUniqueOrThrow({ where: { label: "AX-1" } })).verdict).toBe("not-comparable");
    } finally {
      await target.close();
    }
  });
});
