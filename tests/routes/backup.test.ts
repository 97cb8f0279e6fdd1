/**
 * `npm run backup` (an online copy of the SQLite file), the backup format's column list
 * against the real schema, and streaming of a large ledger.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import Database from "better-sqlite3";
import { parse } from "csv-parse/sync";
import { makeTestApp } from "../helpers/app.ts";
import { BACKUP_TABLES, columnNames } from "../../server/backup/backup-format.ts";
import { EXTERNAL_TABLES } from "../../prisma/migrator.ts";
import { defaultBackupPath, formatBytes } from "../../server/backup/online-copy.ts";
import { sqlTimestamp } from "../../server/db/sql-time.ts";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");

function runBackup(args: string[], databaseUrl: string) {
  return spawnSync(process.execPath, ["--import", "tsx", "server/cli/backup.ts", ...args], {
    cwd: root,
    env: { ...process.env, DATABASE_URL: databaseUrl },
    encoding: "utf8",
    timeout: 60_000,
  });
}

function countRows(file: string, table: string): number {
  const db = new Database(file, { readonly: true, fileMustExist: true });
  try {
    return (db.prepare(`SELECT count(*) AS n FROM "${table}"`).get() as { n: number }).n;
  } finally {
    db.close();
  }
}

describe("npm run backup", () => {
  let test: Awaited<ReturnType<typeof makeTestApp>>;
  let databaseFile: string;
  beforeAll(async () => {
    test = await makeTestApp();
    databaseFile = path.join(test.dir, "test.db");
    for (let index = 1; index <= 25; index += 1) {
      const response = await test.app.inject({ method: "POST", url: "/api/tubes", payload: { label: `B-${index}`, type: "12AU7" } });
      expect(response.statusCode).toBe(201);
    }
  });
  afterAll(async () => test.close());

  it("copies the live database (server still open, WAL) to the given path and reports its size", () => {
    // The app keeps its connections open, so recent pages may still sit in the WAL file.
    expect(fs.existsSync(`${databaseFile}-wal`)).toBe(true);
    const destination = path.join(test.dir, "copies", "ledger-copy.db");
    const result = runBackup([destination], `file:${databaseFile}`);
    expect(result.stderr).toBe("");
    expect(result.status).toBe(0);
    expect(result.stdout).toContain(destination);
    expect(result.stdout).toContain(formatBytes(fs.statSync(destination).size));
    expect(fs.existsSync(`${destination}-wal`) || fs.existsSync(`${destination}-shm`)).toBe(false);
    expect(countRows(destination, "Tube")).toBe(25);
    expect(countRows(destination, "TubeEvent")).toBe(25);
    expect(countRows(destination, "TubeType")).toBe(test.app.catalog.list().length);
  });

  it("refuses to overwrite an existing file", () => {
    const destination = path.join(test.dir, "taken.db");
    fs.writeFileSync(destination, "already here");
    const result = runBackup([destination], `file:${databaseFile}`);
    expect(result.status).toBe(1);
    expect(result.stderr).toContain("already exists; a backup never overwrites a file");
    expect(fs.readFileSync(destination, "utf8")).toBe("already here");
  });

  it("exits non-zero with a clear message when the source does not exist", () => {
    const missing = path.join(test.dir, "no-such-ledger.db");
    const result = runBackup([path.join(test.dir, "never.db")], `file:${missing}`);
    expect(result.status).toBe(1);
    expect(result.stderr).toContain(`backup: no database at ${missing}`);
    expect(fs.existsSync(path.join(test.dir, "never.db"))).toBe(false);
  });

  it("names the default copy data/backups/tubeledger-<yyyymmdd-HHMMSS>.db", () => {
    const at = new Date(2026, 4, 1, 14, 2, 3); // local time, as the file name uses
    expect(defaultBackupPath(at, "/srv/ledger")).toBe("/srv/ledger/data/backups/tubeledger-20260501-140203.db");
  });
});

describe("backup format", () => {
  it("lists exactly the columns of every table in the database, in order", async () => {
    const test = await makeTestApp();
    try {
      for (const layout of BACKUP_TABLES) {
        const columns = (test.app.sqlite.prepare(`PRAGMA table_info("${layout.name}")`).all() as Array<{ name: string }>).map((column) => column.name);
        expect(columnNames(layout), layout.name).toEqual(columns);
      }
      const tables = (test.app.sqlite.prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' AND name NOT LIKE '\\_prisma%' ESCAPE '\\'").all() as Array<{ name: string }>).map((t) => t.name);
      // The label search index is derived from Tube by triggers, so a backup leaves it out.
      expect(tables.filter((name) => !EXTERNAL_TABLES.includes(name)).sort()).toEqual(BACKUP_TABLES.map((layout) => layout.name).sort());
    } finally {
      await test.close();
    }
  });
});

describe("a large ledger", () => {
  const TUBES = 1_000;
  const SESSIONS = 10;
  const READINGS = TUBES * SESSIONS * 2; // two sections each: 20,000 section readings

  let test: Awaited<ReturnType<typeof makeTestApp>>;
  beforeAll(async () => {
    test = await makeTestApp();
    const sqlite = test.app.sqlite;
    const typeId = test.app.catalog.resolve("12AU7")!.id;
    const now = sqlTimestamp();
    sqlite.transaction(() => {
      const tube = sqlite.prepare("INSERT INTO Tube (label, typeId, notes, createdAt, updatedAt) VALUES (?, ?, ?, ?, ?)");
      for (let index = 1; index <= TUBES; index += 1) tube.run(`L-${String(index).padStart(5, "0")}`, typeId, index % 7 === 0 ? 'lot "B", box 3' : "", now, now);
      const session = sqlite.prepare("INSERT INTO TestSession (date, instrument, plateVolts, createdAt) VALUES (?, ?, ?, ?)");
      for (let index = 1; index <= SESSIONS; index += 1) session.run(`2026-01-${String(index).padStart(2, "0")}`, "Bench tester A", 250, now);
      const reading = sqlite.prepare("INSERT INTO Reading (sessionId, tubeId, section, gmMicroSiemens, createdAt) VALUES (?, ?, ?, ?, ?)");
      for (let sessionId = 1; sessionId <= SESSIONS; sessionId += 1) {
        for (let tubeId = 1; tubeId <= TUBES; tubeId += 1) for (const section of [1, 2]) reading.run(sessionId, tubeId, section, 2000 + ((tubeId * 37 + section) % 400), now);
      }
    })();
  }, 60_000);
  afterAll(async () => test.close());

  it("streams every reading as CSV and the whole ledger as a backup that restores", async () => {
    const csv = await test.app.inject({ url: "/export/readings.csv" });
    expect(csv.statusCode).toBe(200);
    const records = parse(csv.body, { columns: true }) as Array<Record<string, string>>;
    expect(records).toHaveLength(READINGS);
    expect(records[0]).toMatchObject({ label: "L-00001", section: "1", date: "2026-01-01", plate_V: "250" });

    const backup = await test.app.inject({ url: "/api/backup" });
    const document = JSON.parse(backup.body);
    expect(document.tables.Reading.rows).toHaveLength(READINGS);
    const restored = await test.app.inject({ method: "POST", url: "/api/backup/restore?confirm=replace", headers: { "content-type": "application/json" }, payload: backup.body });
    expect(restored.statusCode).toBe(200);
    expect(restored.json().rows.Reading).toBe(READINGS);
    // The label search was rebuilt from the restored tubes (its triggers are lifted during a restore).
    expect((await test.app.inject({ url: "/api/tubes?q=L-0000" })).json().total).toBe(9); // L-00001 … L-00009
  }, 60_000);
});
