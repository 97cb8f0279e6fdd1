/**
 * Export & backup: the downloads (stock and readings as CSV/JSON, the full backup), the
 * restore form and API with their refusals, and the backup → restore → backup round trip.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { parse } from "csv-parse/sync";
import { makeTestApp, csrfFor } from "../helpers/app.ts";
import { VERDICT_THRESHOLD_DESCRIPTIONS } from "../../server/engine/verdicts/index.ts";
import { BACKUP_TABLES, columnNames } from "../../server/backup/backup-format.ts";

type TestApp = Awaited<ReturnType<typeof makeTestApp>>;
type App = TestApp["app"];

// ── Data ───────────────────────────────────────────────────────────────────────────────────

/** Notes that need CSV quoting: a comma, double quotes and a line break. */
const AWKWARD_NOTES = 'Bought at a swap meet, "as new"\nbox torn';

async function api(app: App, method: "POST" | "PATCH", url: string, payload: unknown) {
  const response = await app.inject({ method, url, payload: payload as Record<string, unknown> });
  if (response.statusCode >= 300) throw new Error(`${method} ${url} → ${response.statusCode} ${response.body}`);
  return response.json();
}

/**
 * A ledger with something in every table and every kind of value: tubes in all four states,
 * history, a user-added type, sessions with and without conditions, readings with every field
 * and with nulls, shorts and an open heater, an import mapping and batch, changed settings.
 */
async function seedLedger(app: App) {
  const base = app.catalog.resolve("12AU7")!.spec;
  app.catalog.addUserType({ ...base, designation: "TL12", aliases: [], notes: "house-numbered dual triode" });

  const first = await api(app, "POST", "/api/tubes", { label: "T-001", type: "12AU7", maker: "RCA", dateCode: "57-22", location: "Drawer A", notes: AWKWARD_NOTES });
  await api(app, "POST", "/api/tubes", { label: "T-002", type: "ECC83", state: "reserved", location: "Drawer B" });
  await api(app, "POST", "/api/tubes", { label: "T-003", type: "6AU6", state: "installed", notes: "in the counter chassis" });
  await api(app, "POST", "/api/tubes", { label: "T-004", type: "12AU7", state: "retired", notes: "ohmic, retired" });
  await api(app, "POST", "/api/tubes", { label: "T-005", type: "TL12" });
  await api(app, "PATCH", `/api/tubes/${first.id}`, { location: "Shelf 2", note: "moved, with a comma" });
  await api(app, "PATCH", `/api/tubes/${first.id}`, { state: "reserved", note: "for stage 3" });

  const withConditions = await api(app, "POST", "/api/sessions", { date: "2026-03-01", instrument: "Bench tester A", heaterVolts: "12.6", plateVolts: "250 V", gridVolts: "-8.5" });
  const bare = await api(app, "POST", "/api/sessions", { date: "2026-04-15", instrument: "Bench tester, B", notes: 'cold morning, "drafty"' });

  const rows = (id: number) => `/api/sessions/${id}/readings`;
  await api(app, "POST", rows(withConditions.id), {
    label: "T-001", s1Gm: "2200", s1Ia: "10.5", s1Gas: "0.2", s1Leakage: "1.5", s2Gm: "2100", s2Ia: "10.1", noise: "slight hum, when tapped",
  });
  await api(app, "POST", rows(withConditions.id), { label: "T-002", s1Gm: "1.6", gmUnit: "mA/V", s1Shorts: "g1-k, h-k", heaterOpen: "1" });
  await api(app, "POST", rows(withConditions.id), { label: "T-003", s1Emission: "72", emissionPassMark: "60", emissionFullScale: "100", s1Gm: "4200" });
  await api(app, "POST", rows(bare.id), { label: "T-001", s1Gm: "2000" });
  await api(app, "POST", rows(bare.id), { label: "T-005", s1Gm: "2150", s2Gm: "2180" });
  await api(app, "POST", rows(bare.id), { label: "T-006", type: "12AU7", createTube: "1", location: "Bench", s2Leakage: "3" });

  // A build plan with one line; its allocations are written directly (one installed, one only reserved).
  const build = await api(app, "POST", "/api/builds", {
    name: "Counter, 4 bits", heaterSupplies: [{ name: "6.3 V bus", volts: 6.3, amps: 5 }], bPlus: { volts: 250, milliamps: 120 },
    negativeRail: { volts: -150, milliamps: 20 },
    lines: [{ kind: "bistable", type: "12AU7", count: 4, heaterSupply: 1, sparesPercent: 10, plateLoadOhms: 27_000, couplingOhms: 220_000, gridReturnOhms: 220_000 }],
  });
  const lineId = (app.sqlite.prepare("SELECT id FROM BuildLine WHERE buildId = ?").get(build.id) as { id: number }).id;
  const insertAllocation = app.sqlite.prepare("INSERT INTO BuildAllocation (buildId, lineId, tubeId, slots, status, position, createdAt, installedAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?)");
  insertAllocation.run(build.id, lineId, first.id, "1A,1B", "installed", "stage 1", "2026-04-20T10:00:00.000+00:00", "2026-04-21T09:30:00.000+00:00");
  insertAllocation.run(build.id, lineId, (app.sqlite.prepare("SELECT id FROM Tube WHERE label = 'T-006'").get() as { id: number }).id, "2A", "reserved", "", "2026-04-20T10:00:00.000+00:00", null);

  // The importer's own service belongs to another part of the app; its two tables are written directly here.
  app.sqlite.prepare("INSERT INTO ImportMapping (instrument, mapping) VALUES (?, ?)").run("Bench tester A", JSON.stringify({ label: "Tube", gm: "Gm (umho)" }));
  app.sqlite
    .prepare("INSERT INTO ImportBatch (fileHash, fileName, sessionId, rows, createdAt) VALUES (?, ?, ?, ?, ?)")
    .run("a3f1c2", "march, bench.csv", withConditions.id, 3, "2026-03-01T18:00:00.000+00:00");

  const { token, cookie } = await csrfFor(app, "/settings");
  const thresholds = Object.fromEntries(VERDICT_THRESHOLD_DESCRIPTIONS.map((d) => [d.key, String(d.key === "maxLeakageMicroamps" ? d.default + 1 : d.default)]));
  const saved = await app.inject({
    method: "POST", url: "/settings", headers: { "content-type": "application/x-www-form-urlencoded", cookie },
    payload: new URLSearchParams({ ...thresholds, _csrf: token }).toString(),
  });
  expect(saved.statusCode).toBe(303);
  return { sessions: [withConditions.id, bare.id] };
}

// ── Helpers ────────────────────────────────────────────────────────────────────────────────

interface Backup {
  format: string;
  version: number;
  createdAt: string;
  tables: Record<string, { columns: string[]; rows: unknown[][] }>;
}

async function backupOf(app: App, url = "/api/backup"): Promise<Backup> {
  const response = await app.inject({ url });
  expect(response.statusCode).toBe(200);
  return JSON.parse(response.body);
}

function withoutCreatedAt(backup: Backup) {
  const { createdAt: _createdAt, ...rest } = backup;
  return rest;
}

/** A multipart/form-data body, as a browser sends the restore form. */
function multipartBody(fields: Record<string, string>, file?: { name: string; content: string | Buffer }) {
  const boundary = "----tubeledgerTestBoundary7MA4YWxk";
  const parts: Buffer[] = [];
  for (const [name, value] of Object.entries(fields)) {
    parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${name}"\r\n\r\n${value}\r\n`));
  }
  if (file) {
    parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${file.name}"\r\nContent-Type: application/json\r\n\r\n`));
    parts.push(Buffer.isBuffer(file.content) ? file.content : Buffer.from(file.content));
    parts.push(Buffer.from("\r\n"));
  }
  parts.push(Buffer.from(`--${boundary}--\r\n`));
  return { payload: Buffer.concat(parts), contentType: `multipart/form-data; boundary=${boundary}` };
}

async function restoreThroughForm(app: App, options: { confirm?: boolean; file?: { name: string; content: string | Buffer }; csrf?: boolean } = {}) {
  const { token, cookie } = await csrfFor(app, "/export");
  const fields: Record<string, string> = {};
  if (options.csrf !== false) fields._csrf = token;
  if (options.confirm !== false) fields.confirm = "1";
  const body = multipartBody(fields, options.file);
  return app.inject({ method: "POST", url: "/export/restore", headers: { "content-type": body.contentType, cookie }, payload: body.payload });
}

function csvRecords(text: string): Record<string, string>[] {
  return parse(text, { columns: true, skip_empty_lines: true });
}

const today = () => {
  const now = new Date();
  return `${now.getFullYear()}-${String(now.getMonth() + 1).padStart(2, "0")}-${String(now.getDate()).padStart(2, "0")}`;
};

// ── Tests ──────────────────────────────────────────────────────────────────────────────────

describe("export downloads", () => {
  let test: TestApp;
  beforeAll(async () => {
    test = await makeTestApp();
    await seedLedger(test.app);
  });
  afterAll(async () => test.close());

  it("shows the export page with downloads, holdings and a restore form", async () => {
    const page = await test.app.inject({ url: "/export" });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain("<title>Export &amp; backup · Tubeledger</title>");
    expect(page.body).toMatch(/href="\/export" aria-current="page"/);
    for (const href of ["/export/tubes.csv", "/export/tubes.json", "/export/readings.csv", "/export/readings.json", "/export/backup.json"]) expect(page.body).toContain(`href="${href}"`);
    expect(page.body).toContain('enctype="multipart/form-data"');
    expect(page.body).toMatch(/name="_csrf" value="[^"]+"/);
    expect(page.body).toContain('name="confirm"');
    expect(page.body).toMatch(/<th scope="row">Tubes<\/th><td class="num">6<\/td>/);
  });

  it("streams the stock as CSV with a dated file name, one row per tube, notes quoted", async () => {
    const response = await test.app.inject({ url: "/export/tubes.csv" });
    expect(response.statusCode).toBe(200);
    expect(response.headers["content-type"]).toBe("text/csv; charset=utf-8");
    expect(response.headers["content-disposition"]).toBe(`attachment; filename="tubeledger-stock-${today()}.csv"`);
    expect(response.body.split("\n")[0]).toBe("label,type,maker,date_code,location,state,verdict,percent_of_reference,notes");
    // The comma, quotes and line break survive: the field is quoted and inner quotes doubled.
    expect(response.body).toContain('"Bought at a swap meet, ""as new""\nbox torn"');
    const records = csvRecords(response.body);
    expect(records).toHaveLength(6);
    const first = records.find((r) => r.label === "T-001")!;
    expect(first).toMatchObject({ type: "12AU7", maker: "RCA", date_code: "57-22", location: "Shelf 2", state: "reserved", notes: AWKWARD_NOTES });
    expect(records.map((r) => r.state).sort()).toEqual(["installed", "reserved", "reserved", "retired", "stock", "stock"]);
    expect(records.find((r) => r.label === "T-005")!.type).toBe("TL12");
  });

  it("streams the stock as a JSON array", async () => {
    const response = await test.app.inject({ url: "/export/tubes.json" });
    expect(response.headers["content-type"]).toBe("application/json; charset=utf-8");
    expect(response.headers["content-disposition"]).toBe(`attachment; filename="tubeledger-stock-${today()}.json"`);
    const tubes = response.json() as Array<Record<string, unknown>>;
    expect(tubes).toHaveLength(6);
    expect(tubes[0]).toMatchObject({ label: "T-001", type: "12AU7", notes: AWKWARD_NOTES, state: "reserved" });
    expect(Object.keys(tubes[0])).toEqual(["id", "label", "type", "maker", "dateCode", "location", "state", "verdict", "percentOfReference", "notes"]);
  });

  it("streams readings as CSV, one row per section reading, with session columns", async () => {
    const response = await test.app.inject({ url: "/export/readings.csv" });
    expect(response.statusCode).toBe(200);
    expect(response.headers["content-type"]).toBe("text/csv; charset=utf-8");
    expect(response.headers["content-disposition"]).toBe(`attachment; filename="tubeledger-readings-${today()}.csv"`);
    expect(response.body.split("\n")[0]).toBe(
      "label,type,section,gm (uS),plate_mA,emission,pass_mark,full_scale,gas_uA,leakage_uA,shorts,heater_open,noise," +
        "reading_heater_V,reading_plate_V,reading_screen_V,reading_grid_V,date,instrument,heater_V,plate_V,screen_V,grid_V,session_id",
    );
    const records = csvRecords(response.body);
    const stored = (test.app.sqlite.prepare("SELECT count(*) AS n FROM Reading").get() as { n: number }).n;
    expect(records).toHaveLength(stored);
    // March: T-001 (2 sections), T-002 (2: an open heater marks both), T-003 (1); April: T-001 (1), T-005 (2), T-006 (section 2 only).
    expect(stored).toBe(9);
    const shorted = records.find((r) => r.label === "T-002")!;
    expect(shorted).toMatchObject({ type: "12AX7", section: "1", "gm (uS)": "1600", shorts: "g1-k,h-k", heater_open: "1", plate_mA: "", date: "2026-03-01", heater_V: "12.6", plate_V: "250", grid_V: "-8.5", screen_V: "" });
    expect(response.body).toContain('"g1-k,h-k"');
    const emission = records.find((r) => r.label === "T-003")!;
    expect(emission).toMatchObject({ emission: "72", pass_mark: "60", full_scale: "100", "gm (uS)": "4200", heater_open: "0" });
    const noisy = records.find((r) => r.label === "T-001" && r.section === "1" && r.date === "2026-03-01")!;
    expect(noisy).toMatchObject({ "gm (uS)": "2200", plate_mA: "10.5", gas_uA: "0.2", leakage_uA: "1.5", noise: "slight hum, when tapped", instrument: "Bench tester A" });
    expect(records.filter((r) => r.instrument === "Bench tester, B")).toHaveLength(4);
    // Ordered by session date, then label, then section.
    expect(records.map((r) => `${r.date} ${r.label} ${r.section}`)).toEqual([
      "2026-03-01 T-001 1", "2026-03-01 T-001 2", "2026-03-01 T-002 1", "2026-03-01 T-002 2", "2026-03-01 T-003 1",
      "2026-04-15 T-001 1", "2026-04-15 T-005 1", "2026-04-15 T-005 2", "2026-04-15 T-006 2",
    ]);
  });

  it("writes a readings CSV that the importer reads back, every reading field intact", async () => {
    const exported = csvRecords((await test.app.inject({ url: "/export/readings.csv" })).body);
    // The importer fills one session per file, so one session's rows go back in.
    const march = exported.filter((r) => r.date === "2026-03-01");
    const header = Object.keys(march[0]);
    const { stringify } = await import("csv-stringify/sync");
    const file = stringify([header, ...march.map((r) => header.map((h) => r[h]))]);
    const target = await makeTestApp();
    try {
      const query = new URLSearchParams({ instrument: "Bench tester A", date: "2026-03-01", heaterVolts: "12.6", plateVolts: "250", gridVolts: "-8.5" });
      const imported = await target.app.inject({ method: "POST", url: `/api/import?${query}`, headers: { "content-type": "text/csv" }, payload: file });
      expect(imported.statusCode, imported.body).toBe(201);
      expect(imported.json()).toMatchObject({ saved: true, readings: march.length, newTubes: 3, problemCount: 0 });
      const again = csvRecords((await target.app.inject({ url: "/export/readings.csv" })).body);
      const readingColumns = header.filter((h) => h !== "session_id");
      expect(again.map((r) => readingColumns.map((h) => r[h]))).toEqual(march.map((r) => readingColumns.map((h) => r[h])));
    } finally {
      await target.close();
    }
  });

  it("streams readings as a JSON array with booleans and nulls", async () => {
    const response = await test.app.inject({ url: "/export/readings.json" });
    const readings = response.json() as Array<Record<string, unknown>>;
    expect(readings).toHaveLength(9);
    const shorted = readings.find((r) => r.label === "T-002")!;
    expect(shorted).toMatchObject({ heaterOpen: true, shorts: "g1-k,h-k", gmMicroSiemens: 1600, plateMilliamps: null, screenVolts: null, gridVolts: -8.5, instrument: "Bench tester A" });
    expect(readings.find((r) => r.label === "T-003")!.heaterOpen).toBe(false);
  });

  it("serves the same downloads through the API, csv or json", async () => {
    const csv = await test.app.inject({ url: "/api/export/tubes?format=csv" });
    expect(csv.headers["content-type"]).toBe("text/csv; charset=utf-8");
    expect(csvRecords(csv.body)).toHaveLength(6);
    const json = await test.app.inject({ url: "/api/export/readings?format=json" });
    expect(json.headers["content-type"]).toBe("application/json; charset=utf-8");
    expect(json.json()).toHaveLength(9);
    const readingsCsv = await test.app.inject({ url: "/api/export/readings?format=csv" });
    expect(csvRecords(readingsCsv.body)).toHaveLength(9);
  });

  it("refuses an unknown format with 400 naming the parameter", async () => {
    const response = await test.app.inject({ url: "/api/export/tubes?format=xml" });
    expect(response.statusCode).toBe(400);
    expect(response.json().fields.format).toBe("format must be csv or json");
  });

  it("offers the full backup on the page and in the API, every table with every column", async () => {
    const page = await test.app.inject({ url: "/export/backup.json" });
    expect(page.headers["content-type"]).toBe("application/json; charset=utf-8");
    expect(page.headers["content-disposition"]).toBe(`attachment; filename="tubeledger-backup-${today()}.json"`);
    const fromPage = JSON.parse(page.body) as Backup;
    const fromApi = await backupOf(test.app);
    expect(withoutCreatedAt(fromPage)).toEqual(withoutCreatedAt(fromApi));
    expect(fromApi.format).toBe("tubeledger-backup");
    expect(fromApi.version).toBe(2);
    for (const layout of BACKUP_TABLES) expect(fromApi.tables[layout.name].columns).toEqual(columnNames(layout));
    expect(fromApi.tables.Tube.rows).toHaveLength(6);
    expect(fromApi.tables.Reading.rows).toHaveLength(9);
    expect(fromApi.tables.ImportMapping.rows).toHaveLength(1);
    expect(fromApi.tables.ImportBatch.rows).toHaveLength(1);
    expect(fromApi.tables.Setting.rows).toHaveLength(1);
    expect(fromApi.tables.TubeType.rows.length).toBe(test.app.catalog.list().length);
    const heaterOpenColumn = fromApi.tables.Reading.columns.indexOf("heaterOpen");
    expect(fromApi.tables.Reading.rows.filter((row) => row[heaterOpenColumn] === true)).toHaveLength(2);
  });

  it("lists the export and backup operations in the OpenAPI document", async () => {
    const document = (await test.app.inject({ url: "/api/openapi.json" })).json();
    expect(Object.keys(document.paths)).toEqual(expect.arrayContaining(["/api/export/tubes", "/api/export/readings", "/api/backup", "/api/backup/restore"]));
    expect(document.paths["/api/backup/restore"].post.parameters[0].name).toBe("confirm");
  });
});

describe("restore", () => {
  let source: TestApp;
  let backup: Backup;
  beforeAll(async () => {
    source = await makeTestApp();
    await seedLedger(source.app);
    backup = await backupOf(source.app);
  });
  afterAll(async () => source.close());

  it("round-trips exactly: backup, restore into a fresh ledger, backup again", async () => {
    const target = await makeTestApp();
    try {
      // The target starts with a tube of its own, which the restore must remove.
      await api(target.app, "POST", "/api/tubes", { label: "GONE-1", type: "6AU6" });
      const response = await restoreThroughForm(target.app, { file: { name: "ledger.json", content: JSON.stringify(backup) } });
      expect(response.statusCode).toBe(303);
      expect(response.headers.location).toMatch(/^\/export\?restored=1&from=/);
      const again = await backupOf(target.app);
      expect(again.createdAt).not.toBe("");
      expect(withoutCreatedAt(again)).toEqual(withoutCreatedAt(backup));

      // The app's services see the restored ledger: catalog, settings and stock.
      expect(target.app.catalog.resolve("TL12")?.userAdded).toBe(true);
      expect((await target.app.settings.thresholds()).maxLeakageMicroamps).toBe(
        VERDICT_THRESHOLD_DESCRIPTIONS.find((d) => d.key === "maxLeakageMicroamps")!.default + 1,
      );
      expect((await target.app.inject({ url: "/api/tubes?q=GONE" })).json().total).toBe(0);
      const page = await target.app.inject({ url: response.headers.location as string });
      expect(page.body).toMatch(/Restored the backup made \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC\./);
      // New rows continue after the restored ids.
      const created = await api(target.app, "POST", "/api/tubes", { label: "NEW-1", type: "6AU6" });
      expect(created.id).toBe(Math.max(...backup.tables.Tube.rows.map((row) => row[0] as number)) + 1);
    } finally {
      await target.close();
    }
  });

  it("round-trips through the API as well", async () => {
    const target = await makeTestApp();
    try {
      const response = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", payload: backup as unknown as Record<string, unknown> });
      expect(response.statusCode).toBe(200);
      const summary = response.json();
      expect(summary).toMatchObject({ restored: true, backupCreatedAt: backup.createdAt, referenceTypesRefreshed: 0 });
      expect(summary.rows).toMatchObject({ Tube: 6, Reading: 9, TestSession: 2, ImportMapping: 1, ImportBatch: 1, Setting: 1 });
      expect(withoutCreatedAt(await backupOf(target.app))).toEqual(withoutCreatedAt(backup));
    } finally {
      await target.close();
    }
  });

  it("puts back reference types an older backup lacks and keeps user-added types", async () => {
    const target = await makeTestApp();
    try {
      const older = structuredClone(backup);
      const typeIdColumn = older.tables.Tube.columns.indexOf("typeId");
      const used = new Set(older.tables.Tube.rows.map((row) => row[typeIdColumn]));
      const designation = older.tables.TubeType.columns.indexOf("designation");
      const dropped = older.tables.TubeType.rows.filter((row) => !used.has(row[0])).slice(0, 3).map((row) => row[designation] as string);
      older.tables.TubeType.rows = older.tables.TubeType.rows.filter((row) => !dropped.includes(row[designation] as string));
      const response = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", payload: older as unknown as Record<string, unknown> });
      expect(response.statusCode).toBe(200);
      expect(response.json().referenceTypesRefreshed).toBe(3);
      for (const name of dropped) expect(target.app.catalog.resolve(name)?.userAdded).toBe(false);
      expect(target.app.catalog.resolve("TL12")?.userAdded).toBe(true);
      expect(target.app.catalog.list()).toHaveLength(backup.tables.TubeType.rows.length);
    } finally {
      await target.close();
    }
  });

  describe("refusals leave the ledger unchanged", () => {
    let target: TestApp;
    let before: Backup;
    beforeAll(async () => {
      target = await makeTestApp();
      await api(target.app, "POST", "/api/tubes", { label: "KEEP-1", type: "12AU7", notes: "must survive" });
      before = await backupOf(target.app);
    });
    afterAll(async () => target.close());

    const unchanged = async () => expect(withoutCreatedAt(await backupOf(target.app))).toEqual(withoutCreatedAt(before));
    const file = (content: string) => ({ name: "ledger.json", content });

    it("without the confirmation: 422 naming the confirm field", async () => {
      const response = await restoreThroughForm(target.app, { confirm: false, file: file(JSON.stringify(backup)) });
      expect(response.statusCode).toBe(422);
      expect(response.body).toContain('id="confirm-error"');
      expect(response.body).toContain("Confirm: tick “replace everything in this ledger” to restore");
      await unchanged();
    });

    it("without a file: 422 naming the file field", async () => {
      const response = await restoreThroughForm(target.app, {});
      expect(response.statusCode).toBe(422);
      expect(response.body).toContain('id="file-error"');
      expect(response.body).toContain("Backup file: choose a backup file (.json) to restore");
      const empty = await restoreThroughForm(target.app, { file: file("") });
      expect(empty.statusCode).toBe(422);
      expect(empty.body).toContain("Backup file: the chosen file is empty");
      await unchanged();
    });

    it("without the CSRF token: 403", async () => {
      const response = await restoreThroughForm(target.app, { csrf: false, file: file(JSON.stringify(backup)) });
      expect(response.statusCode).toBe(403);
      await unchanged();
    });

    it("a truncated file: 422, not valid JSON", async () => {
      const text = JSON.stringify(backup);
      const response = await restoreThroughForm(target.app, { file: file(text.slice(0, Math.floor(text.length / 2))) });
      expect(response.statusCode).toBe(422);
      expect(response.body).toContain("Backup file: not valid JSON — the file may be cut short or damaged");
      await unchanged();
    });

    it("a file of another format or version: 422 saying so", async () => {
      const foreign = await restoreThroughForm(target.app, { file: file(JSON.stringify({ format: "spreadsheet", tables: {} })) });
      expect(foreign.statusCode).toBe(422);
      expect(foreign.body).toContain("Backup file: not a Tubeledger backup (format must be &quot;tubeledger-backup&quot;)");
      const newer = await restoreThroughForm(target.app, { file: file(JSON.stringify({ ...backup, version: 3 })) });
      expect(newer.statusCode).toBe(422);
      expect(newer.body).toContain("backup version 3 is not one this ledger reads (it reads versions 1 and 2)");
      await unchanged();
    });

    it("a row of the wrong type: 422 naming table, row and column", async () => {
      const broken = structuredClone(backup);
      broken.tables.Reading.rows[2][broken.tables.Reading.columns.indexOf("gmMicroSiemens")] = "2200 uS";
      const response = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", payload: broken as unknown as Record<string, unknown> });
      expect(response.statusCode).toBe(422);
      expect(response.json().problems).toEqual(["Reading row 3, column gmMicroSiemens: gmMicroSiemens must be a number or null"]);
      await unchanged();
    });

    it("a row pointing at a missing tube: 422 naming the dangling reference", async () => {
      const dangling = structuredClone(backup);
      dangling.tables.Reading.rows[0][dangling.tables.Reading.columns.indexOf("tubeId")] = 9999;
      const response = await restoreThroughForm(target.app, { file: file(JSON.stringify(dangling)) });
      expect(response.statusCode).toBe(422);
      expect(response.body).toContain("Reading row 1, column tubeId: tubeId 9999 names no row of Tube");
      await unchanged();
    });

    it("a column missing or renamed, or two rows with one label: 422", async () => {
      const renamed = structuredClone(backup);
      renamed.tables.Tube.columns[1] = "name";
      const first = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", payload: renamed as unknown as Record<string, unknown> });
      expect(first.statusCode).toBe(422);
      expect(first.json().problems[0]).toMatch(/^table Tube, columns: must be exactly id, label, typeId/);
      const twice = structuredClone(backup);
      twice.tables.Tube.rows[1][twice.tables.Tube.columns.indexOf("label")] = "T-001";
      const second = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", payload: twice as unknown as Record<string, unknown> });
      expect(second.statusCode).toBe(422);
      expect(second.json().problems).toContain("Tube row 2, column label: label T-001 is used by two rows");
      await unchanged();
    });

    it("the API without ?confirm=replace: 422 naming confirm; no body: 422 naming backup", async () => {
      const response = await target.app.inject({ method: "POST", url: "/api/backup/restore", payload: backup as unknown as Record<string, unknown> });
      expect(response.statusCode).toBe(422);
      expect(response.json().fields.confirm).toBe("confirm: add ?confirm=replace to replace everything in this ledger");
      const empty = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", headers: { "content-type": "application/json" }, payload: "null" });
      expect(empty.statusCode).toBe(422);
      expect(empty.json().fields.backup).toMatch(/^backup:/);
      const garbled = await target.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", headers: { "content-type": "application/json" }, payload: '{"format":' });
      expect(garbled.statusCode).toBe(400);
      await unchanged();
    });
  });
});
