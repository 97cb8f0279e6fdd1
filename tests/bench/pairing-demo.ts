/**
 * Pairing on the invented demo stock (server/cli/demo-stock.ts, seed 20261201) through the real
 * service: good tubes in stock, each section at its newest reading, a 3 % rule on gm and plate
 * current, any two sections allowed. Reports exact against sort-and-pair, per dual-triode type.
 *
 *   node --import tsx tests/bench/pairing-demo.ts
 */
import { pathToFileURL } from "node:url";
import { makeTestApp } from "../helpers/app.ts";
import { buildDemoStock } from "../../server/cli/demo-stock.ts";
import { sqlTimestamp } from "../../server/db/sql-time.ts";
import { PairingService } from "../../server/pairing/pairing-service.ts";

const DEMO_SEED = 20261201;
const TYPES = ["12AU7", "12AX7", "12AT7"];

export async function runPairingDemoBench(): Promise<string[]> {
  const { app, close } = await makeTestApp();
  try {
    const demo = buildDemoStock(DEMO_SEED);
    const now = sqlTimestamp();
    const insertTube = app.sqlite.prepare(
      "INSERT INTO Tube (label, typeId, maker, dateCode, location, state, notes, createdAt, updatedAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
    );
    const insertSession = app.sqlite.prepare(
      "INSERT INTO TestSession (date, instrument, heaterVolts, plateVolts, screenVolts, gridVolts, notes, createdAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
    );
    const insertReading = app.sqlite.prepare(
      `INSERT INTO Reading (sessionId, tubeId, section, gmMicroSiemens, plateMilliamps, emissionValue, emissionPassMark, emissionFullScale,
        gridMicroamps, leakageMicroamps, shorts, heaterOpen, noise, createdAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    );
    app.sqlite.transaction(() => {
      const tubeIds = new Map<string, number>();
      for (const tube of demo.tubes) {
        const type = app.catalog.resolve(tube.type);
        if (!type) throw new Error(`demo type ${tube.type} is missing from the library`);
        tubeIds.set(tube.label, Number(insertTube.run(tube.label, type.id, tube.maker, tube.dateCode, tube.location, tube.state, tube.notes, now, now).lastInsertRowid));
      }
      for (const session of demo.sessions) {
        const c = session.conditions;
        const sessionId = Number(insertSession.run(session.date, session.instrument, c.heaterVolts, c.plateVolts, c.screenVolts, c.gridVolts, session.notes, now).lastInsertRowid);
        for (const r of session.readings) {
          insertReading.run(sessionId, tubeIds.get(r.label), r.section, r.gmMicroSiemens, r.plateMilliamps, r.emissionValue, r.emissionPassMark, r.emissionFullScale,
            r.gridMicroamps, null, r.shorts, r.heaterOpen ? 1 : 0, r.noise, now);
        }
      }
    })();
    await app.verdicts.recompute();

    const service = new PairingService(app.db, app.sqlite, app.catalog);
    const lines: string[] = [];
    for (const type of TYPES) {
      const started = performance.now();
      const answer = service.pair({ types: [type], rule: { transconductancePercent: 3, plateCurrentPercent: 3 }, allowSameEnvelope: true, allowAcrossEnvelopes: true, setSize: 2 });
      const milliseconds = performance.now() - started;
      if (!answer.ok) throw new Error(Object.values(answer.errors).join("; "));
      const { exact, greedy, sections, tubeCount } = answer.value;
      lines.push(
        `good stages on the demo stock (${type}, ${tubeCount} good tubes, ${sections.length} sections, gm and Ia within 3 %): exact ${exact?.stats.pairsFound} vs greedy ${greedy?.stats.pairsFound} [${milliseconds.toFixed(0)} ms with loading]`,
      );
    }
    return lines;
  } finally {
    await close();
  }
}

if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) {
  for (const line of await runPairingDemoBench()) console.log(line);
}
