import { describe, it, expect } from "vitest";
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import Database from "better-sqlite3";

describe("npm run demo", () => {
  it("loads the invented stock once and refuses to load it twice", () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "tubeledger-demo-"));
    const env = { ...process.env, DATABASE_URL: `file:${path.join(dir, "demo.db")}` };
    try {
      const first = execFileSync(process.execPath, ["--import", "tsx", "server/cli/demo.ts"], { env, encoding: "utf8" });
      expect(first).toContain("356 tubes, 3 sessions");
      const second = execFileSync(process.execPath, ["--import", "tsx", "server/cli/demo.ts"], { env, encoding: "utf8" });
      expect(second).toContain("already loaded");
      const db = new Database(path.join(dir, "demo.db"), { readonly: true });
      const verdicts = db.prepare("SELECT verdict, COUNT(*) AS n FROM Tube GROUP BY verdict").all() as Array<{ verdict: string; n: number }>;
      db.close();
      const byVerdict = Object.fromEntries(verdicts.map((v) => [v.verdict, v.n]));
      // Every page has something to show: all five verdicts occur in the demo.
      for (const verdict of ["good", "worn", "failed", "untested", "not-comparable"]) expect(byVerdict[verdict], verdict).toBeGreaterThan(0);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }, 120_000);
});
