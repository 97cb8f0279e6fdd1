/**
 * Build check and reservation timings over a 20,000-tube stock (invented readings around each
 * type's library reference). Goal: the check of a 64-line build in ≤ 1 s. Also the throughput of
 * reserve + release on small builds, and one reservation of the whole 64-line build.
 * Run alone with `node --import tsx tests/bench/builds.ts`, or through tests/bench/run.ts.
 * Timings are measured here, never asserted in tests.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { buildApp } from "../../server/app.ts";
import { sqlTimestamp } from "../../server/db/sql-time.ts";
import { BuildService } from "../../server/builds/build-service.ts";
import { Reservations } from "../../server/builds/reservations.ts";
import { buildInputSchema, type BuildInput } from "../../server/schemas/build-schemas.ts";

const TUBE_COUNT = 20_000;
const LINE_COUNT = 64;
const CHECK_GOAL_SECONDS = 1;
const TIMED_CHECKS = 5;
const SMALL_BUILDS = 40;

/** mulberry32, seeded: the same stock on every run. */
function seeded(seed: number) {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function median(values: number[]): number {
  const sorted = [...values].sort((left, right) => left - right);
  return sorted[Math.floor(sorted.length / 2)];
}

type App = Awaited<ReturnType<typeof buildApp>>;

/** 20,000 tubes over five types, each read once at its type's first typical point (5963: emission). */
async function seedStock(app: App) {
  const random = seeded(20261201);
  const types = ["12AU7", "12AT7", "12AX7", "6SN7GT", "5963"].map((name) => app.catalog.resolve(name)!);
  const now = sqlTimestamp();
  const insertSession = app.sqlite.prepare("INSERT INTO TestSession (date, instrument, heaterVolts, plateVolts, screenVolts, gridVolts, createdAt) VALUES ('2026-09-01', 'bench', ?, ?, NULL, ?, ?)");
  const insertTube = app.sqlite.prepare("INSERT INTO Tube (label, typeId, location, state, createdAt, updatedAt) VALUES (?, ?, ?, 'stock', ?, ?)");
  const insertReading = app.sqlite.prepare(
    "INSERT INTO Reading (sessionId, tubeId, section, gmMicroSiemens, emissionValue, emissionPassMark, emissionFullScale, createdAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
  );
  app.sqlite.transaction(() => {
    const sessions = types.map((type) => {
      const point = type.spec.sections[0].typical[0];
      return Number(insertSession.run(type.spec.heater.volts, point?.plateVolts ?? 100, point?.gridVolts ?? -1, now).lastInsertRowid);
    });
    for (let index = 0; index < TUBE_COUNT; index++) {
      const typeIndex = index % types.length;
      const type = types[typeIndex];
      const id = Number(insertTube.run(`BB-${String(index).padStart(6, "0")}`, type.id, `Rack ${index % 50} / bin ${index % 7}`, now, now).lastInsertRowid);
      const reference = type.spec.sections[0].typical[0]?.transconductanceMicroSiemens;
      for (const section of [1, 2]) {
        const fraction = 0.8 + 0.3 * random();
        if (reference) insertReading.run(sessions[typeIndex], id, section, Math.round(reference * fraction), null, null, null, now);
        else insertReading.run(sessions[typeIndex], id, section, null, Math.round(60 + 35 * random()), 55, 100, now);
      }
    }
  })();
  await app.verdicts.recompute();
}

/** 64 lines: bistable registers of every type, single stages, two short lines that rank substitutes. */
function bigBuild(): BuildInput {
  const bistableTypes = ["12AU7", "12AT7", "12AX7", "6SN7GT", "5963"];
  const lines: Array<Record<string, unknown>> = [];
  for (let index = 0; index < LINE_COUNT; index++) {
    const resistors = { plateLoadOhms: 22_000 + 1000 * (index % 8), couplingOhms: 220_000, gridReturnOhms: 180_000 + 10_000 * (index % 5) };
    if (index === 10 || index === 40) lines.push({ kind: "bistable", type: "5965", count: 20, heaterSupply: 1, allowSubstitutes: true, ...resistors });
    else if (index % 4 === 3) lines.push({ kind: "single", type: ["12AX7", "12AU7", "6SN7GT"][index % 3], count: 10 + (index % 9), heaterSupply: 1, plateVolts: 200, plateMilliamps: 2 + (index % 5) });
    else lines.push({ kind: "bistable", type: bistableTypes[index % bistableTypes.length], count: 12 + (index % 17), heaterSupply: 1, ...resistors });
  }
  return buildInputSchema.parse({
    name: "Bench: 64-line machine",
    heaterSupplies: [{ name: "6.3 V bus", volts: 6.3, amps: 200 }],
    bPlus: { volts: 250, milliamps: 20_000 },
    negativeRail: { volts: -150, milliamps: 2000 },
    lines,
  });
}

export async function runBuildsBench(): Promise<string[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "tubeledger-bench-builds-"));
  const app = await buildApp({ config: { databaseUrl: `file:${path.join(dir, "bench.db")}` } });
  try {
    await seedStock(app);
    const service = new BuildService(app.db, app.sqlite, app.catalog);
    const reservations = new Reservations(app.sqlite, service.store, () => service.library(), app.catalog);
    const created = await service.create(bigBuild());
    if (!created.ok) throw new Error(`bench build refused: ${JSON.stringify(created.errors)}`);
    const buildId = created.value.id;

    let started = performance.now();
    const first = service.check(buildId)!;
    const coldSeconds = (performance.now() - started) / 1000;
    const samples: number[] = [];
    for (let run = 0; run < TIMED_CHECKS; run++) {
      started = performance.now();
      service.check(buildId);
      samples.push((performance.now() - started) / 1000);
    }
    const warmSeconds = median(samples);
    const planned = first.result.reservationPlan.length;

    // Small builds: reserve then release each, one transaction per call.
    const smallIds: number[] = [];
    for (let index = 0; index < SMALL_BUILDS; index++) {
      const small = await service.create(
        buildInputSchema.parse({
          name: `Bench small ${index}`,
          heaterSupplies: [{ name: "6.3 V", volts: 6.3, amps: 20 }],
          bPlus: { volts: 250, milliamps: 1000 },
          negativeRail: { volts: -150, milliamps: 100 },
          lines: [{ kind: "bistable", type: ["12AU7", "12AT7", "6SN7GT"][index % 3], count: 4, heaterSupply: 1, plateLoadOhms: 27_000, couplingOhms: 220_000, gridReturnOhms: 220_000 }],
        }),
      );
      if (small.ok) smallIds.push(small.value.id);
    }
    let tubesReserved = 0;
    started = performance.now();
    for (const id of smallIds) {
      const result = reservations.reserve(id);
      if (result.ok) tubesReserved += result.value.reserved.length;
    }
    const reserveSeconds = (performance.now() - started) / 1000;
    started = performance.now();
    for (const id of smallIds) reservations.release(id);
    const releaseSeconds = (performance.now() - started) / 1000;

    // The two 5965 lines are short on purpose (no 5965 in stock); accept the 12AU7 so the whole build can be reserved.
    for (const line of service.get(buildId)!.lines.filter((candidate) => candidate.designation === "5965")) await service.acceptSubstitute(buildId, line.id, "12AU7");
    started = performance.now();
    const whole = reservations.reserve(buildId);
    const wholeSeconds = (performance.now() - started) / 1000;
    const wholeText = whole.ok ? `${whole.value.reserved.length} tubes in ${wholeSeconds.toFixed(2)} s` : `refused (${Object.values(whole.errors).join("; ").slice(0, 120)}) after ${wholeSeconds.toFixed(2)} s`;

    return [
      `build check, ${LINE_COUNT} lines over ${TUBE_COUNT} tubes: first ${coldSeconds.toFixed(2)} s, then median ${warmSeconds.toFixed(2)} s of ${TIMED_CHECKS} (goal ≤ ${CHECK_GOAL_SECONDS} s); verdict ${first.result.verdict}, ${planned} tubes planned`,
      `reservations: ${smallIds.length} builds of 4 stages reserved in ${reserveSeconds.toFixed(2)} s (${(smallIds.length / reserveSeconds).toFixed(1)} reservations/s, ${(tubesReserved / reserveSeconds).toFixed(0)} tubes/s), released in ${releaseSeconds.toFixed(2)} s`,
      `reserving the whole ${LINE_COUNT}-line build in one transaction: ${wholeText}`,
    ];
  } finally {
    await app.close();
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? "").href) {
  for (const line of await runBuildsBench()) console.log(line);
}
