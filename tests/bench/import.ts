/**
 * Times a 100,000-row CSV import end to end through the import service: upload (decode and
 * parse), preview (check every row) and the chunked all-or-nothing commit with verdicts.
 * The file is invented demo data: 50,000 dual triodes, two section rows each.
 *
 * Run: node --import tsx tests/bench/import.ts
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { buildApp } from "../../server/app.ts";
import { ImportService } from "../../server/imports/import-service.ts";

export const IMPORT_BENCH_ROWS = 100_000;
export const IMPORT_GOAL_SECONDS = 10;

/** Small seeded generator so every run imports the same invented file. */
function mulberry32(seed: number) {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** An invented long-format file: label, type, section, gm in µmho, plate mA, shorts, heater. */
export function inventedReadingsCsv(rows: number, seed = 7): string {
  const random = mulberry32(seed);
  const types = ["12AU7", "ECC82", "12AU7A"];
  const lines = ["Tube,Type,Section,Gm (umho),Ia (mA),Shorts,Heater open,Remark"];
  for (let tube = 0; lines.length <= rows; tube++) {
    const label = `BN-${String(tube).padStart(6, "0")}`;
    const type = types[tube % types.length];
    for (const section of [1, 2]) {
      if (lines.length > rows) break;
      const gm = Math.round(1200 + random() * 1200);
      const plate = (gm / 210).toFixed(1);
      lines.push(`${label},${section === 1 ? type : ""},${section},${gm},${plate},,no,${tube % 97 === 0 ? "noisy" : ""}`);
    }
  }
  return lines.join("\n") + "\n";
}

export async function runImportBench(): Promise<string[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "tubeledger-import-bench-"));
  const app = await buildApp({ config: { databaseUrl: `file:${path.join(dir, "bench.db")}` } });
  try {
    // The route tree keeps its own instance; the bench drives a service on the same connections.
    const imports = new ImportService(app.sqlite, app.catalog, app.sessions, app.verdicts);
    const bytes = Buffer.from(inventedReadingsCsv(IMPORT_BENCH_ROWS));
    const fields = { instrument: "Bench tester", date: "2026-03-14", plateVolts: "250", gridVolts: "-8.5" };

    const previewStart = performance.now();
    const received = await imports.receiveUpload({ bytes, fileName: "bench.csv", fields });
    if (!received.ok) throw new Error(`upload refused: ${JSON.stringify(received.errors)}`);
    const parsedAt = performance.now();
    const upload = imports.uploads.get(received.uploadId)!;
    const { mapping } = await imports.initialMapping(upload);
    const preview = imports.preview({ table: upload.table, mapping, target: upload.target, fileHash: upload.fileHash });
    const previewSeconds = (performance.now() - previewStart) / 1000;
    if (!preview.canCommit) throw new Error(`preview found ${preview.problemCount} problems: ${JSON.stringify(preview.problems.slice(0, 3))}`);

    let progressUpdates = 0;
    const commitStart = performance.now();
    const outcome = await imports.commit(
      { table: upload.table, mapping, target: upload.target, fileName: upload.fileName, fileHash: upload.fileHash },
      () => void (progressUpdates += 1),
    );
    const commitSeconds = (performance.now() - commitStart) / 1000;
    if (!outcome.ok) throw new Error(`commit refused: ${outcome.message}`);
    const verdicts = app.sqlite.prepare("SELECT verdict, COUNT(*) AS n FROM Tube GROUP BY verdict ORDER BY verdict").all() as Array<{ verdict: string; n: number }>;
    const total = previewSeconds + commitSeconds;
    return [
      `CSV import ${IMPORT_BENCH_ROWS} rows: preview ${previewSeconds.toFixed(2)} s, commit ${commitSeconds.toFixed(2)} s (goal ≤ ${IMPORT_GOAL_SECONDS} s)`,
      `  total ${total.toFixed(2)} s ${total <= IMPORT_GOAL_SECONDS ? "— within the goal" : "— OVER the goal"}; parse ${((parsedAt - previewStart) / 1000).toFixed(2)} s; ` +
        `${outcome.readings} readings, ${outcome.newTubes} new tubes, ${progressUpdates} progress updates; verdicts ${verdicts.map((v) => `${v.verdict} ${v.n}`).join(", ")}`,
    ];
  } finally {
    await app.close();
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  for (const line of await runImportBench()) console.log(line);
}
