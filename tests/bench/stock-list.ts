/**
 * Benchmark: the stock list page with 20,000 tubes and 200,000 readings under 20 concurrent
 * clients on loopback (autocannon). Goal: p50 ≤ 30 ms, p99 ≤ 150 ms, no errors.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import autocannon from "autocannon";
import { buildApp } from "../../server/app.ts";
import { sqlTimestamp } from "../../server/db/sql-time.ts";

const tubeCount = 20_000;
const sessionsCount = 5;

export async function runStockListBench(): Promise<string[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "tubeledger-bench-"));
  const app = await buildApp({ config: { databaseUrl: `file:${path.join(dir, "bench.db")}` } });
  try {
    const types = ["12AU7", "12AX7", "12AT7", "6SN7GT", "5963"].map((name) => app.catalog.resolve(name)!);
    const now = sqlTimestamp();
    const insertTube = app.sqlite.prepare("INSERT INTO Tube (label, typeId, location, state, createdAt, updatedAt) VALUES (?, ?, ?, 'stock', ?, ?)");
    const insertSession = app.sqlite.prepare("INSERT INTO TestSession (date, instrument, plateVolts, gridVolts, createdAt) VALUES (?, 'bench', 250, -8.5, ?)");
    const insertReading = app.sqlite.prepare("INSERT INTO Reading (sessionId, tubeId, section, gmMicroSiemens, createdAt) VALUES (?, ?, ?, ?, ?)");
    app.sqlite.transaction(() => {
      for (let i = 0; i < tubeCount; i++) insertTube.run(`B-${String(i).padStart(6, "0")}`, types[i % types.length].id, `Drawer ${i % 40}`, now, now);
      for (let s = 0; s < sessionsCount; s++) {
        const sessionId = Number(insertSession.run(`2026-0${s + 1}-15`, now).lastInsertRowid);
        // 20,000 tubes × 2 sections × 5 sessions = 200,000 readings.
        for (let tube = 1; tube <= tubeCount; tube++) for (const section of [1, 2]) insertReading.run(sessionId, tube, section, 1500 + ((tube * 37 + section * 11 + s) % 900), now);
      }
    })();
    const started = performance.now();
    await app.verdicts.recompute();
    const recomputeSeconds = (performance.now() - started) / 1000;
    const address = await app.listen({ port: 0, host: "127.0.0.1" });
    let peakRss = process.memoryUsage().rss;
    const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 50);
    const result = await autocannon({
      url: address,
      connections: 20,
      duration: 10,
      requests: [
        { method: "GET", path: "/tubes" },
        { method: "GET", path: "/tubes?type=12AX7&verdict=good&page=7" },
        { method: "GET", path: "/tubes?q=B-0123&state=stock" },
        { method: "GET", path: "/tubes?location=Drawer%2017&page=3", headers: { "hx-request": "true" } },
      ],
    });
    clearInterval(sampler);
    const errors = result.errors + result.non2xx + result.timeouts;
    return [
      `stock list, ${tubeCount} tubes / ${tubeCount * 2 * sessionsCount} readings, 20 clients for 10 s: p50 ${result.latency.p50} ms, p99 ${result.latency.p99} ms, ${result.requests.total} requests, ${errors} errors (goals p50 ≤ 30 ms, p99 ≤ 150 ms, 0 errors)`,
      `verdict recompute over all ${tubeCount} tubes: ${recomputeSeconds.toFixed(2)} s`,
      `peak RSS during the stock-list run: ${(peakRss / 1024 / 1024).toFixed(0)} MB`,
    ];
  } finally {
    await app.close();
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1]).href) {
  for (const line of await runStockListBench()) console.log(line);
}
