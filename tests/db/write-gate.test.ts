/** Writes that start while a bulk write holds the raw connection's transaction wait their turn without freezing the server. */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { makeTestApp } from "../helpers/app.ts";
import { BulkWriteGate, bulkWriteGate } from "../../server/db/write-gate.ts";

describe("BulkWriteGate", () => {
  it("runs bulk writes one at a time and lets idle() wait for the running one", async () => {
    const gate = new BulkWriteGate();
    const order: string[] = [];
    let finishFirst!: () => void;
    const first = gate.hold(() => new Promise<string>((resolve) => (finishFirst = () => resolve("first"))).then((value) => (order.push("first done"), value)));
    const second = gate.hold(async () => (order.push("second ran"), "second"));
    const waiting = gate.idle().then(() => order.push("idle"));
    await new Promise((resolve) => setTimeout(resolve, 10));
    expect(gate.busy).toBe(true);
    expect(order).toEqual([]);
    finishFirst();
    expect(await first).toBe("first");
    expect(await second).toBe("second");
    await waiting;
    expect(order[0]).toBe("first done");
    expect(order).toContain("second ran");
    expect(gate.busy).toBe(false);
  });

  it("opens again after a bulk write fails, and passes the error on", async () => {
    const gate = new BulkWriteGate();
    await expect(gate.hold(async () => { throw new Error("broken file"); })).rejects.toThrow("broken file");
    expect(gate.busy).toBe(false);
    expect(await gate.hold(async () => 7)).toBe(7);
  });
});

describe("a write during a bulk transaction", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  beforeAll(async () => {
    t = await makeTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it("waits for the bulk write to commit while other requests are answered", async () => {
    const sqlite = t.app.sqlite;
    let commit!: () => void;
    const bulk = bulkWriteGate(sqlite).hold(async () => {
      sqlite.exec("BEGIN IMMEDIATE");
      await new Promise<void>((resolve) => (commit = resolve));
      sqlite.exec("COMMIT");
    });
    await new Promise((resolve) => setTimeout(resolve, 5));

    let created = false;
    const write = t.app.inject({ method: "POST", url: "/api/tubes", payload: { label: "GATE-1", type: "12AU7" } }).then((response) => ((created = true), response));
    const started = performance.now();
    const read = await t.app.inject({ url: "/api/tubes?q=GATE" });
    // The server still answers while the write waits; a write stuck in SQLite's busy handler would hold the event loop for its 15 s timeout.
    expect(read.statusCode).toBe(200);
    expect(performance.now() - started).toBeLessThan(5000);
    await new Promise((resolve) => setTimeout(resolve, 50));
    expect(created).toBe(false);

    commit();
    await bulk;
    const response = await write;
    expect(response.statusCode, response.body).toBe(201);
    expect((await t.app.inject({ url: "/api/tubes?q=GATE-1" })).json().total).toBe(1);
  });
});
