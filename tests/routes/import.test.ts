/**
 * CSV import through the pages and the API: upload → map → preview → commit, every problem kind,
 * all-or-nothing, no duplicate imports, the remembered mapping, and bad input on every form.
 *
 * Readings in the fixtures are invented demo values. Reference figures: RCA RC-30 receiving tube
 * manual, 12AU7 class A1 at 250 V plate, −8.5 V grid: 2200 µmho per section; 6C4 the same point.
 */
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { makeTestApp, csrfFor } from "../helpers/app.ts";
import { detectDelimiter, readCsvText, decodeUpload } from "../../server/imports/csv-table.ts";
import { guessMapping } from "../../server/imports/import-fields.ts";

const fixtures = path.join(path.dirname(fileURLToPath(import.meta.url)), "../fixtures/import");
const fixture = (name: string) => fs.readFileSync(path.join(fixtures, name));

type TestApp = Awaited<ReturnType<typeof makeTestApp>>["app"];

function multipart(fields: Record<string, string>, file?: { name: string; content: Buffer | string; type?: string }) {
  const boundary = `----tubeledger${Math.random().toString(16).slice(2)}`;
  const parts: Buffer[] = [];
  for (const [key, value] of Object.entries(fields)) parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${key}"\r\n\r\n${value}\r\n`));
  if (file) {
    parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${file.name}"\r\nContent-Type: ${file.type ?? "text/csv"}\r\n\r\n`));
    parts.push(Buffer.from(file.content));
    parts.push(Buffer.from("\r\n"));
  }
  parts.push(Buffer.from(`--${boundary}--\r\n`));
  return { payload: Buffer.concat(parts), contentType: `multipart/form-data; boundary=${boundary}` };
}

const newSession = { instrument: "Bench tester A", date: "2026-03-14", plateVolts: "250", gridVolts: "-8.5" };

async function upload(app: TestApp, fields: Record<string, string>, file?: { name: string; content: Buffer | string; type?: string }, withCsrf = true) {
  const { token, cookie } = await csrfFor(app, "/import");
  const body = multipart(withCsrf ? { _csrf: token, ...fields } : fields, file);
  return app.inject({ method: "POST", url: "/import", headers: { "content-type": body.contentType, cookie }, payload: body.payload });
}

async function uploadOk(app: TestApp, fileName: string, fields: Record<string, string> = newSession, content?: Buffer | string) {
  const response = await upload(app, fields, { name: fileName, content: content ?? fixture(fileName) });
  expect(response.statusCode, response.body).toBe(303);
  const match = /^\/import\/([0-9a-f]{24})\/mapping$/.exec(String(response.headers.location));
  expect(match).not.toBeNull();
  return match![1];
}

async function postTo(app: TestApp, url: string, from: string, fields: Record<string, string>, withCsrf = true) {
  const { token, cookie } = await csrfFor(app, from);
  return app.inject({
    method: "POST", url, headers: { "content-type": "application/x-www-form-urlencoded", cookie },
    payload: new URLSearchParams(withCsrf ? { ...fields, _csrf: token } : fields).toString(),
  });
}

/** The mapping form as the page preselected it: every select's selected option, and the unit. */
async function preselected(app: TestApp, uploadId: string) {
  const page = await app.inject({ url: `/import/${uploadId}/mapping` });
  expect(page.statusCode).toBe(200);
  const values: Record<string, string> = {};
  for (const select of page.body.matchAll(/<select id="([^"]+)" name="[^"]+"[^>]*>([\s\S]*?)<\/select>/g)) {
    values[select[1]] = /<option value="([^"]*)" selected/.exec(select[2])?.[1] ?? "";
  }
  return { values, body: page.body };
}

async function mapAndPreview(app: TestApp, uploadId: string, values: Record<string, string>) {
  const response = await postTo(app, `/import/${uploadId}/mapping`, `/import/${uploadId}/mapping`, values);
  expect(response.statusCode, response.body).toBe(303);
  expect(response.headers.location).toBe(`/import/${uploadId}/preview`);
  return app.inject({ url: `/import/${uploadId}/preview` });
}

async function commitAndWait(app: TestApp, uploadId: string) {
  const response = await postTo(app, `/import/${uploadId}/commit`, "/import", {});
  expect(response.statusCode, response.body).toBe(303);
  const jobUrl = String(response.headers.location);
  expect(jobUrl).toMatch(/^\/import\/jobs\/[0-9a-f]{24}$/);
  for (let attempt = 0; attempt < 200; attempt++) {
    const page = await app.inject({ url: jobUrl, headers: { "hx-request": "true" } });
    if (!page.body.includes('data-state="running"')) return page;
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
  throw new Error("the import job did not finish");
}

function tableCounts(app: TestApp) {
  const count = (table: string) => (app.sqlite.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number }).n;
  return { tubes: count("Tube"), readings: count("Reading"), sessions: count("TestSession"), batches: count("ImportBatch"), events: count("TubeEvent") };
}

describe("CSV reading", () => {
  it("finds the delimiter from the header line, not from decimal commas in the data", () => {
    expect(detectDelimiter("Label;Type;Gm\nA;12AU7;2,2\n")).toBe(";");
    expect(detectDelimiter("Label\tGm\nA\t2200\n")).toBe("\t");
    expect(detectDelimiter('"a,b";c;d\n')).toBe(";");
  });

  it("numbers rows as the file does (header = row 1), skipping blank lines and following quoted line breaks", () => {
    const read = readCsvText('Label,Note\n\nA,"two\nlines"\nB,x\n');
    expect(read.ok).toBe(true);
    if (!read.ok) return;
    expect(read.table.rows).toEqual([["A", "two\nlines"], ["B", "x"]]);
    expect(read.table.lineNumbers).toEqual([3, 5]);
  });

  it("refuses empty, header-only, headerless and binary files with a clear reason", () => {
    expect(readCsvText("")).toEqual({ ok: false, reason: "The file is empty." });
    expect(readCsvText("Label,Gm\n")).toEqual({ ok: false, reason: "The file has a header row but no data rows." });
    const headerless = readCsvText("A1,2200\nA2,2100\n");
    expect(headerless.ok).toBe(false);
    expect(!headerless.ok && headerless.reason).toContain("looks like data");
    expect(decodeUpload(Buffer.from([0x50, 0x4b, 3, 4, 0, 0]))).toMatchObject({ ok: false, reason: expect.stringContaining("spreadsheet workbook") });
    expect(decodeUpload(Buffer.from([1, 2, 0, 4]))).toMatchObject({ ok: false, reason: expect.stringContaining("binary") });
  });

  it("guesses the mapping and the gm unit from header names", () => {
    const guess = guessMapping(["Tube", "Type", "Section", "Gm (umho)", "Ia (mA)", "Shorts", "Heater open", "Remark"]);
    expect(guess.columns).toEqual({ label: 0, type: 1, section: 2, gm: 3, plateMilliamps: 4, shorts: 5, heaterOpen: 6, noise: 7 });
    expect(guess.gmUnit).toBe("umho");
    expect(guessMapping(["Label", "gm1 (mA/V)", "gm2 (mA/V)"])).toEqual({ columns: { label: 0, gm: 1, gmSection2: 2 }, gmUnit: "mA/V" });
  });
});

describe("import pages", () => {
  let app: TestApp;
  let close: () => Promise<void>;
  beforeEach(async () => ({ app, close } = await makeTestApp()));
  afterEach(async () => close());

  it("uploads, maps, previews and commits; verdicts are computed and the mapping is remembered", async () => {
    const page = await app.inject({ url: "/import" });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('enctype="multipart/form-data"');
    expect(page.body).toContain('aria-current="page">Import');

    const uploadId = await uploadOk(app, "bench-12au7.csv");
    const form = await preselected(app, uploadId);
    expect(form.body).toContain("Preselected from the column names");
    // Headers of the fixture: Tube, Type, Section, Gm (umho), Ia (mA), Shorts, Heater open, Remark.
    expect(form.values).toMatchObject({ col_label: "0", col_type: "1", col_section: "2", col_gm: "3", col_plateMilliamps: "4", col_noise: "7", gmUnit: "umho" });

    // Deliberately differ from the guess (no noise column) so the remembered mapping can be told apart.
    const preview = await mapAndPreview(app, uploadId, { ...form.values, col_noise: "" });
    expect(preview.statusCode).toBe(200);
    expect(preview.body).toMatch(/<strong>6<\/strong> rows/);
    expect(preview.body).toMatch(/<strong>6<\/strong> readings/);
    expect(preview.body).toMatch(/<strong>3<\/strong> new tubes/);
    expect(preview.body).toMatch(/<strong>0<\/strong> problems/);
    expect(preview.body).toContain("2150 µS"); // 2150 µmho = 2150 µS (1 mho = 1 S, fact of SI)
    expect(preview.body).toContain('action="/import/' + uploadId + '/commit"');
    expect(tableCounts(app)).toMatchObject({ tubes: 0, readings: 0, sessions: 0 });

    const done = await commitAndWait(app, uploadId);
    expect(done.body).toContain('data-state="done"');
    expect(done.body).toContain("6 readings from 6 rows are in the ledger: 3 new tubes");
    const sessionId = Number(/href="\/sessions\/(\d+)"/.exec(done.body)![1]);
    expect(tableCounts(app)).toEqual({ tubes: 3, readings: 6, sessions: 1, batches: 1, events: 3 });

    const session = app.sqlite.prepare("SELECT * FROM TestSession WHERE id = ?").get(sessionId) as { date: string; instrument: string; plateVolts: number; gridVolts: number };
    expect(session).toMatchObject({ date: "2026-03-14", instrument: "Bench tester A", plateVolts: 250, gridVolts: -8.5 });
    const tubes = app.sqlite.prepare("SELECT label, verdict, percent FROM Tube ORDER BY label").all() as Array<{ label: string; verdict: string; percent: number }>;
    // Percent of the RCA RC-30 12AU7 reference 2200 µmho at 250 V / −8.5 V; the lowest section counts.
    expect(tubes[0]).toMatchObject({ label: "BX-101", verdict: "good" });
    expect(tubes[0].percent).toBeCloseTo((2100 / 2200) * 100, 6);
    // 1380/2200 = 62.7 %: below the default 70 % wear threshold (rule of thumb, common practice, no source).
    expect(tubes[1]).toMatchObject({ label: "BX-102", verdict: "worn" });
    expect(tubes[1].percent).toBeCloseTo((1380 / 2200) * 100, 6);
    expect(tubes[2]).toMatchObject({ label: "BX-103", verdict: "good" }); // typed as ECC82, the trade alias of 12AU7
    const event = app.sqlite.prepare("SELECT kind, toValue, note FROM TubeEvent LIMIT 1").get() as { kind: string; note: string };
    expect(event.kind).toBe("created");
    expect(event.note).toContain("bench-12au7.csv");
    const reading = app.sqlite.prepare("SELECT r.* FROM Reading r JOIN Tube t ON t.id = r.tubeId WHERE t.label = 'BX-102' AND r.section = 1").get() as { gmMicroSiemens: number; plateMilliamps: number; noise: string };
    expect(reading).toMatchObject({ gmMicroSiemens: 1400, plateMilliamps: 6.8, noise: "" });

    const sessionPage = await app.inject({ url: `/sessions/${sessionId}` });
    expect(sessionPage.body).toContain("BX-101");
    expect(sessionPage.body).toContain("verdict-worn");

    const stored = await app.db.importMapping.findUnique({ where: { instrument: "Bench tester A" } });
    expect(JSON.parse(stored!.mapping)).toEqual({
      columns: {
        label: "Tube", type: "Type", section: "Section", gm: "Gm (umho)", plateMilliamps: "Ia (mA)", shorts: "Shorts", heaterOpen: "Heater open",
        emissionValue: null, emissionPassMark: null, emissionFullScale: null, gridMicroamps: null, leakageMicroamps: null, noise: null,
        gmSection2: null, plateMilliampsSection2: null, emissionSection2: null,
        plateVolts: null, screenVolts: null, gridVolts: null, heaterVolts: null,
      },
      gmUnit: "umho",
    });

    // Next file from the same instrument, columns in another order: preselected from the remembered mapping.
    const reordered = "Remark,Gm (umho),Tube,Type,Section,Ia (mA),Shorts,Heater open\n,2000,BX-104,12AU7,1,9.9,,no\n";
    const nextId = await uploadOk(app, "next.csv", { ...newSession, date: "2026-03-15" }, reordered);
    const next = await preselected(app, nextId);
    expect(next.body).toContain("Preselected from the mapping remembered for Bench tester A");
    expect(next.values).toMatchObject({ col_label: "2", col_gm: "1", col_type: "3", col_section: "4", col_noise: "", gmUnit: "umho" });
    const importPage = await app.inject({ url: "/import" });
    expect(importPage.body).toContain("bench-12au7.csv");
  });

  it("lists every problem by row, column and reason, offers no commit and writes nothing", async () => {
    const before = tableCounts(app);
    const uploadId = await uploadOk(app, "every-problem.csv");
    const form = await preselected(app, uploadId);
    const preview = await mapAndPreview(app, uploadId, form.values);
    expect(preview.statusCode).toBe(200);
    const problems = [...preview.body.matchAll(/<tr><td class="num">(\d+)<\/td><td>([^<]*)<\/td><td>([^<]*)<\/td><\/tr>/g)].map((m) => ({ row: Number(m[1]), column: m[2], reason: m[3].replace(/&#39;/g, "'") }));
    expect(preview.body).toMatch(/<strong>8<\/strong> problems/);
    expect(problems).toEqual([
      { row: 2, column: "Gm (umho)", reason: expect.stringContaining("'2,2' is ambiguous") },
      { row: 3, column: "Gm (umho)", reason: expect.stringContaining("unknown unit") },
      { row: 4, column: "Type", reason: expect.stringContaining("P-3 is not in stock and no type is given") },
      { row: 5, column: "Type", reason: expect.stringContaining("unknown type '12XY99'") },
      { row: 6, column: "Section", reason: "12AU7 has 2 sections; there is no section 3" },
      { row: 8, column: "Tube", reason: "P-6 section 1 is already on row 7" },
      { row: 9, column: "Shorts", reason: expect.stringContaining("'g1-q' is not a pair of elements") },
      { row: 10, column: "Heater open", reason: expect.stringContaining("'maybe'") },
    ]);
    expect(preview.body).not.toContain("/commit");

    const refused = await postTo(app, `/import/${uploadId}/commit`, "/import", {});
    expect(refused.statusCode).toBe(409);
    expect(refused.body).toContain("The preview lists problems");
    expect(tableCounts(app)).toEqual(before);
  });

  it("rolls everything back when saving fails part-way", async () => {
    const uploadId = await uploadOk(app, "bench-12au7.csv");
    await mapAndPreview(app, uploadId, (await preselected(app, uploadId)).values);
    const before = tableCounts(app);
    // Fail in the last step, after the session, tubes, readings and batch rows were written.
    app.verdicts.recomputeWith = () => {
      throw new Error("simulated failure while working out verdicts");
    };
    const failed = await commitAndWait(app, uploadId);
    expect(failed.body).toContain('data-state="failed"');
    expect(failed.body).toContain("nothing was saved");
    expect(tableCounts(app)).toEqual(before);
    expect(app.sqlite.inTransaction).toBe(false);
  });

  it("refuses the same file a second time and keeps the readings as they were", async () => {
    const first = await uploadOk(app, "bench-12au7.csv");
    await mapAndPreview(app, first, (await preselected(app, first)).values);
    expect((await commitAndWait(app, first)).body).toContain('data-state="done"');
    const after = tableCounts(app);

    const again = await uploadOk(app, "bench-12au7.csv", { ...newSession, date: "2026-04-01" });
    const preview = await mapAndPreview(app, again, (await preselected(app, again)).values);
    expect(preview.body).toMatch(/This exact file was already imported on \d{4}-\d{2}-\d{2} \d{2}:\d{2}/);
    expect(preview.body).toContain("into the session of <a href=\"/sessions/1\">2026-03-14</a>");
    expect(preview.body).not.toContain("/commit\"");
    const refused = await postTo(app, `/import/${again}/commit`, "/import", {});
    expect(refused.statusCode).toBe(409);
    expect(tableCounts(app)).toEqual(after);
  });

  it("imports into an existing session, replacing that session's reading of the same tube section", async () => {
    const first = await uploadOk(app, "bench-12au7.csv");
    await mapAndPreview(app, first, (await preselected(app, first)).values);
    await commitAndWait(app, first);
    const changed = "Tube,Section,Gm (umho)\nBX-101,1,1900\n";
    const second = await uploadOk(app, "retest.csv", { sessionId: "1", instrument: "" }, changed);
    const preview = await mapAndPreview(app, second, (await preselected(app, second)).values);
    expect(preview.body).toMatch(/<strong>1<\/strong> reading replaces an earlier one in this session/);
    expect(preview.body).toMatch(/<strong>1<\/strong> tube already in stock/);
    const done = await commitAndWait(app, second);
    expect(done.body).toContain('data-state="done"');
    expect(tableCounts(app)).toMatchObject({ readings: 6, sessions: 1, batches: 2, tubes: 3 });
    const gm = app.sqlite.prepare("SELECT gmMicroSiemens FROM Reading r JOIN Tube t ON t.id = r.tubeId WHERE t.label = 'BX-101' AND section = 1").get() as { gmMicroSiemens: number };
    expect(gm.gmMicroSiemens).toBe(1900);
    // The instrument was left blank: the session's own instrument keys the remembered mapping.
    expect(await app.db.importMapping.count()).toBe(1);
  });

  it("reads a semicolon file with section-2 columns (one row per tube)", async () => {
    const uploadId = await uploadOk(app, "wide-semicolon.csv", { ...newSession, instrument: "Wide tester" });
    const form = await preselected(app, uploadId);
    expect(form.body).toContain("semicolon separated");
    expect(form.values).toMatchObject({ col_label: "0", col_type: "1", col_gm: "2", col_gmSection2: "3", col_plateMilliamps: "4", col_plateMilliampsSection2: "5", gmUnit: "mA/V" });
    const preview = await mapAndPreview(app, uploadId, form.values);
    expect(preview.body).toMatch(/<strong>3<\/strong> readings/);
    await commitAndWait(app, uploadId);
    const rows = app.sqlite.prepare("SELECT t.label, r.section, r.gmMicroSiemens, r.plateMilliamps FROM Reading r JOIN Tube t ON t.id = r.tubeId ORDER BY t.label, r.section").all();
    // 2.2 mA/V = 2200 µS (1 mA/V = 1000 µS, fact of SI).
    expect(rows).toEqual([
      { label: "W-1", section: 1, gmMicroSiemens: 2200, plateMilliamps: 10.5 },
      { label: "W-1", section: 2, gmMicroSiemens: 2100, plateMilliamps: 10.1 },
      { label: "W-2", section: 1, gmMicroSiemens: 2000, plateMilliamps: 9.8 },
    ]);
  });

  it("names the field for every bad upload", async () => {
    const missing = await upload(app, newSession);
    expect(missing.statusCode).toBe(422);
    expect(missing.body).toContain("File: choose a CSV file to upload.");

    const cases: Array<[string | Buffer, string]> = [
      ["", "File: x.csv is empty."],
      ["Tube,Gm\n", "File: The file has a header row but no data rows."],
      ["BX-1,2200\nBX-2,2100\n", "not column names"],
      [Buffer.from([0x50, 0x4b, 3, 4, 0, 1, 2]), "spreadsheet workbook"],
      ['Tube,Gm\n"BX-1,2200\n', "not valid CSV"],
    ];
    for (const [content, message] of cases) {
      const response = await upload(app, newSession, { name: "x.csv", content });
      expect(response.statusCode, message).toBe(422);
      expect(response.body).toContain(message);
    }

    const badSession = await upload(app, { sessionId: "abc" }, { name: "a.csv", content: fixture("bench-12au7.csv") });
    expect(badSession.statusCode).toBe(422);
    expect(badSession.body).toContain("Session: choose a session from the list");
    const noSuchSession = await upload(app, { sessionId: "9999" }, { name: "a.csv", content: fixture("bench-12au7.csv") });
    expect(noSuchSession.body).toContain("Session: there is no session #9999");
    const badNewSession = await upload(app, { date: "2026-02-30", plateVolts: "250 mA" }, { name: "a.csv", content: fixture("bench-12au7.csv") });
    expect(badNewSession.statusCode).toBe(422);
    expect(badNewSession.body).toContain("Date: not a real calendar date");
    expect(badNewSession.body).toContain("Instrument is required");
    // The conditions are checked in the same pass: every message shows at once.
    expect(badNewSession.body).toMatch(/Plate volts: .*250 mA/);
    expect(tableCounts(app)).toMatchObject({ sessions: 0 });
  });

  it("says so when the file is over the upload limit", async () => {
    const small = await makeTestApp({ uploadLimitBytes: 200 });
    try {
      const big = "Tube,Gm\n" + Array.from({ length: 40 }, (_, i) => `T-${i},2200`).join("\n");
      const response = await upload(small.app, newSession, { name: "big.csv", content: big });
      expect(response.statusCode).toBe(413);
      expect(response.body).toContain("larger than the upload limit of 200 bytes");
      expect(response.body).toContain('name="_csrf"');
    } finally {
      await small.close();
    }
  });

  it("names the field for a bad mapping, refuses forms without a CSRF token and forgets unknown uploads", async () => {
    const uploadId = await uploadOk(app, "bench-12au7.csv");
    const url = `/import/${uploadId}/mapping`;
    const noLabel = await postTo(app, url, url, { col_gm: "3" });
    expect(noLabel.statusCode).toBe(422);
    expect(noLabel.body).toContain("Label: choose the column that holds each tube");
    const twice = await postTo(app, url, url, { col_label: "0", col_gm: "3", col_plateMilliamps: "3" });
    expect(twice.body).toContain("Plate current (mA): the same column already feeds Transconductance");
    const outOfRange = await postTo(app, url, url, { col_label: "0", col_gm: "42", gmUnit: "furlongs" });
    expect(outOfRange.body).toContain("Transconductance: choose one of the file");
    expect(outOfRange.body).toContain("Transconductance unit: choose µS, µmho or mA/V");
    const emission = await postTo(app, url, url, { col_label: "0", col_emissionValue: "3" });
    expect(emission.body).toContain("Emission pass mark: choose its column");

    expect((await upload(app, newSession, { name: "a.csv", content: fixture("bench-12au7.csv") }, false)).statusCode).toBe(403);
    expect((await postTo(app, url, url, { col_label: "0", col_gm: "3" }, false)).statusCode).toBe(403);
    expect((await postTo(app, `/import/${uploadId}/commit`, url, {}, false)).statusCode).toBe(403);

    expect((await app.inject({ url: "/import/0123456789abcdef01234567/mapping" })).statusCode).toBe(404);
    expect((await app.inject({ url: "/import/not-an-id/preview" })).statusCode).toBe(404);
    expect((await app.inject({ url: "/import/jobs/0123456789abcdef01234567" })).statusCode).toBe(404);
    // Commit before preview goes back to the mapping.
    const early = await postTo(app, `/import/${uploadId}/commit`, url, {});
    expect(early.statusCode).toBe(303);
    expect(early.headers.location).toBe(url);
    expect(tableCounts(app)).toMatchObject({ sessions: 0, readings: 0 });
  });
});

describe("import API", () => {
  let app: TestApp;
  let close: () => Promise<void>;
  beforeEach(async () => ({ app, close } = await makeTestApp()));
  afterEach(async () => close());

  const post = (query: string, body: string | Buffer, type = "text/csv") =>
    app.inject({ method: "POST", url: `/api/import?${query}`, headers: { "content-type": type }, payload: body });
  const wide = () => fixture("wide-semicolon.csv").toString("utf8");
  const session = "instrument=Wide%20tester&date=2026-03-14&plateVolts=250&gridVolts=-8.5";

  it("dry-runs, commits, and refuses the same file twice", async () => {
    const dry = await post(`${session}&dryRun=true`, wide());
    expect(dry.statusCode).toBe(200);
    expect(dry.json()).toMatchObject({ dryRun: true, saved: false, rows: 2, readings: 3, newTubes: 2, updatedTubes: 0, problemCount: 0, problems: [], alreadyImported: null });
    expect(dry.json().mapping).toMatchObject({ label: "Label", gm: "gm1 (mA/V)", gmSection2: "gm2 (mA/V)", gmUnit: "mA/V" });
    expect(tableCounts(app)).toMatchObject({ sessions: 0, readings: 0, tubes: 0 });

    const saved = await post(session, wide());
    expect(saved.statusCode, saved.body).toBe(201);
    expect(saved.json()).toMatchObject({ saved: true, rows: 2, readings: 3, newTubes: 2, sessionId: 1 });
    expect(tableCounts(app)).toMatchObject({ sessions: 1, readings: 3, tubes: 2, batches: 1 });
    const w1 = app.sqlite.prepare("SELECT verdict, percent FROM Tube WHERE label = 'W-1'").get() as { verdict: string; percent: number };
    expect(w1.verdict).toBe("good");
    expect(w1.percent).toBeCloseTo((2100 / 2200) * 100, 6); // RCA RC-30 12AU7, 2200 µmho reference

    const again = await post(session, wide());
    expect(again.statusCode).toBe(409);
    expect(again.json().message).toContain("already imported");
    expect(tableCounts(app)).toMatchObject({ sessions: 1, readings: 3 });

    const dryAgain = await post(`${session}&dryRun=true`, wide());
    expect(dryAgain.json().alreadyImported).toMatchObject({ sessionId: 1, sessionDate: "2026-03-14" });
  });

  it("reports problems by row and column and saves nothing", async () => {
    const response = await post("instrument=Bench&date=2026-03-14", fixture("every-problem.csv"));
    expect(response.statusCode).toBe(422);
    const body = response.json();
    expect(body.problemCount).toBe(8);
    expect(body.problems[0]).toEqual({ row: 2, column: "Gm (umho)", reason: expect.stringContaining("ambiguous") });
    expect(tableCounts(app)).toMatchObject({ sessions: 0, readings: 0, tubes: 0, batches: 0 });
  });

  it("uses a mapping given as JSON and remembers it for the instrument", async () => {
    const csv = "Serial;Kind;Mutual\nM-1;12AU7;2150\n";
    const mapping = encodeURIComponent(JSON.stringify({ label: "Serial", type: "Kind", gm: "Mutual", gmUnit: "umho" }));
    const response = await post(`instrument=Odd%20tester&date=2026-03-14&dryRun=true&mapping=${mapping}`, csv);
    expect(response.statusCode, response.body).toBe(200);
    expect(response.json()).toMatchObject({ readings: 1, newTubes: 1, problemCount: 0 });
    const remembered = await post("instrument=Odd%20tester&date=2026-03-14", csv);
    expect(remembered.statusCode, remembered.body).toBe(201);
    expect((app.sqlite.prepare("SELECT gmMicroSiemens FROM Reading").get() as { gmMicroSiemens: number }).gmMicroSiemens).toBe(2150);
  });

  it("names the field for bad requests", async () => {
    const cases: Array<[string, string | Buffer, string, number, string]> = [
      ["date=2026-03-14", wide(), "text/csv", 400, "instrument"],
      ["instrument=X", wide(), "text/csv", 400, "date"],
      ["instrument=X&date=2026-03-14&plateVolts=lots", wide(), "text/csv", 400, "plateVolts"],
      ["sessionId=abc", wide(), "text/csv", 400, "sessionId"],
      ["sessionId=999", wide(), "text/csv", 400, "sessionId"],
      [`${session}&dryRun=maybe`, wide(), "text/csv", 400, "dryRun"],
      [`${session}&mapping=%7Bnope`, wide(), "text/csv", 400, "mapping"],
      [`${session}&mapping=${encodeURIComponent('{"gm":"Gm"}')}`, wide(), "text/csv", 400, "mapping.gm"],
      [`${session}&mapping=${encodeURIComponent('{"colour":"Label"}')}`, wide(), "text/csv", 400, "mapping.colour"],
      ["instrument=Unknown&date=2026-03-14", "A;B\n1x;2x\n", "text/csv", 400, "mapping.label"],
      [session, "", "text/csv", 400, "body"],
      [session, "Label,Gm\n", "text/csv", 422, "body"],
      [session, '{"csv":"x"}', "application/json", 415, "body"],
    ];
    for (const [query, body, type, status, field] of cases) {
      const response = await post(query, body, type);
      expect(response.statusCode, `${query} → ${response.body}`).toBe(status);
      expect(Object.keys(response.json().fields ?? {}), query).toContain(field);
    }
    expect(tableCounts(app)).toMatchObject({ sessions: 0, readings: 0, tubes: 0 });
  });

  it("is described in the OpenAPI document", async () => {
    const document = (await app.inject({ url: "/api/openapi.json" })).json();
    const operation = document.paths["/api/import"].post;
    expect(Object.keys(operation.requestBody.content)).toEqual(["text/csv"]);
    expect(operation.parameters.map((p: { name: string }) => p.name)).toEqual(expect.arrayContaining(["instrument", "sessionId", "date", "dryRun", "mapping"]));
  });
});
