/** The label-search index when bulk writes lift its triggers: rebuilt afterwards, triggers back, rollback safe. */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { makeTestApp } from "../helpers/app.ts";
import { withLabelSearchDeferred } from "../../server/db/label-search.ts";
import { sqlTimestamp } from "../../server/db/sql-time.ts";

let t: Awaited<ReturnType<typeof makeTestApp>>;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(async () => {
  await t.close();
});

const triggerCount = () => (t.app.sqlite.prepare("SELECT COUNT(*) AS n FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'Tube_label_search_%'").get() as { n: number }).n;
const search = async (q: string) => ((await t.app.inject({ url: `/api/tubes?q=${encodeURIComponent(q)}` })).json() as { total: number }).total;

describe("withLabelSearchDeferred", () => {
  it("refuses to run outside a transaction", async () => {
    await expect(withLabelSearchDeferred(t.app.sqlite, () => 1)).rejects.toThrow(/needs an open transaction/);
    expect(triggerCount()).toBe(3);
  });

  it("indexes what was written while the triggers were lifted, and puts them back", async () => {
    const typeId = t.app.catalog.resolve("12AU7")!.id;
    const insert = t.app.sqlite.prepare("INSERT INTO Tube (label, typeId, state, createdAt, updatedAt) VALUES (?, ?, 'stock', ?, ?)");
    const now = sqlTimestamp();
    t.app.sqlite.exec("BEGIN IMMEDIATE");
    await withLabelSearchDeferred(t.app.sqlite, () => {
      expect(triggerCount()).toBe(0);
      for (const label of ["BULK-ALPHA", "BULK-BETA", "BULK-GAMMA"]) insert.run(label, typeId, now, now);
    });
    t.app.sqlite.exec("COMMIT");
    expect(triggerCount()).toBe(3);
    expect(await search("bulk-")).toBe(3);
    // The triggers work again for the next single write.
    insert.run("BULK-DELTA", typeId, now, now);
    expect(await search("bulk-")).toBe(4);
  });

  it("leaves index and triggers as they were when the transaction rolls back", async () => {
    const typeId = t.app.catalog.resolve("12AU7")!.id;
    const now = sqlTimestamp();
    t.app.sqlite.exec("BEGIN IMMEDIATE");
    await withLabelSearchDeferred(t.app.sqlite, () => {
      t.app.sqlite.prepare("INSERT INTO Tube (label, typeId, state, createdAt, updatedAt) VALUES ('GONE-ONE', ?, 'stock', ?, ?)").run(typeId, now, now);
    });
    t.app.sqlite.exec("ROLLBACK");
    expect(triggerCount()).toBe(3);
    expect(await search("gone-one")).toBe(0);
    expect(await search("bulk-")).toBe(4);
  });
});
