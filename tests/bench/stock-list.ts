/**
 * Benchmark: the stock list page with 20,000 tubes and 200,000 readings under 20 concurrent
 * clients on loopback (autocannon). Goal: p50 ≤ 30 ms, p99 ≤ 150 ms, no errors.
 * The server runs as `npm start` does, in its own process, so the load generator does not
 * share its event loop.
 */
import { spawn } from "node:child_process";
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
    await app.close();
    const server = spawn(process.execPath, ["--import", "tsx", "server/server.ts"], {
      env: { ...process.env, PORT: "0", HOST: "127.0.0.1", DATABASE_URL: `file:${path.join(dir, "bench.db")}`, TUBELEDGER_TOKEN: "" },
      stdio: ["ignore", "pipe", "inherit"],
    });
    let result: autocannon.Result;
    let peakRss = 0;
    try {
      const address = await new Promise<string>((resolve, reject) => {
        server.stdout.on("data", (chunk: Buffer) => {
          const match = /serving on (http:\/\/\S+)/.exec(chunk.toString());
          if (match) resolve(match[1].replace("localhost", "127.0.0.1"));
        });
        server.once("exit", (code) => reject(new Error(`server exited with ${code}`)));
      });
      const sampler = setInterval(() => {
        try {
          const status = fs.readFileSync(`/proc/${server.pid}/status`, "utf8");
          const kilobytes = Number(/VmHWM:\s+(\d+)/.exec(status)?.[1] ?? 0);
          peakRss = Math.max(peakRss, kilobytes * 1024);
        } catch {
          // not on Linux, or the server is gone: no figure
        }
      }, 200);
      result = await autocannon({
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
    } finally {
      server.kill("SIGTERM");
    }
    const errors = result.errors + result.non2xx + result.timeouts;
    return [
      `stock list, ${tubeCount} tubes / ${tubeCount * 2 * sessionsCount} readings, 20 clients for 10 s: p50 ${result.latency.p50} ms, p99 ${result.latency.p99} ms, ${result.requests.total} requests, ${errors} errors (goals p50 ≤ 30 ms, p99 ≤ 150 ms, 0 errors)`,
      `verdict recompute over all ${tubeCount} tubes: ${recomputeSeconds.toFixed(2)} s`,
      `peak RSS of the server process during the stock-list run: ${(peakRss / 1024 / 1024).toFixed(0)} MB`,
    ];
  } finally {
    await app.close().catch(() => {});
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1]).href) {
  for (const line of await runStockListBench()) console.log(line);
}
