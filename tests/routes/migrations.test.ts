import { describe, it, expect } from "vitest";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import Database from "better-sqlite3";
import { applyMigrations, checkDrift, readMigrationList } from "../../prisma/migrator.ts";

describe("migrations", () => {
  it("produce exactly the schema in schema.prisma (no drift)", async () => {
    const { exitCode, sql } = await checkDrift();
    expect(sql).toContain("empty migration");
    expect(exitCode).toBe(0);
  });

  it("apply once, then leave a database that another process holds alone", async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "tubeledger-migrate-"));
    const url = `file:${path.join(dir, "m.db")}`;
    try {
      const applied = await applyMigrations(url);
      expect(applied).toEqual(readMigrationList().migrationDirectories.map((entry) => entry.path));
      // Another connection (a running server) holds the write lock: nothing is pending, so nothing waits for it.
      const holder = new Database(path.join(dir, "m.db"));
      holder.pragma("journal_mode = WAL");
      holder.exec("BEGIN IMMEDIATE");
      try {
        expect(await applyMigrations(url)).toEqual([]);
      } finally {
        holder.exec("ROLLBACK");
        holder.close();
      }
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
