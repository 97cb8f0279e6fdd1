/**
 * `npm run demo`: loads an invented demo stock (a few hundred tubes, three test sessions) so
 * every page has something to show. Every maker, label, location and reading here is invented.
 */
import { buildApp } from "../app.ts";
import { configFromEnvironment } from "../config.ts";
import { buildDemoStock, demoBuild } from "./demo-stock.ts";
import { BuildService } from "../builds/build-service.ts";
import { buildInputSchema } from "../schemas/build-schemas.ts";
import { sqlTimestamp } from "../db/sql-time.ts";

const config = configFromEnvironment();
const app = await buildApp({ config });
try {
  const already = app.sqlite.prepare("SELECT COUNT(*) AS n FROM Tube WHERE label LIKE 'DEMO-%'").get() as { n: number };
  if (already.n > 0) {
    console.log(`The demo stock is already loaded (${already.n} tubes labelled DEMO-…). Nothing changed.`);
  } else {
    const demo = buildDemoStock(20261201);
    const now = sqlTimestamp();
    const insertTube = app.sqlite.prepare(
      "INSERT INTO Tube (label, typeId, maker, dateCode, location, state, notes, createdAt, updatedAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
    );
    const insertEvent = app.sqlite.prepare("INSERT INTO TubeEvent (tubeId, at, kind, fromValue, toValue, note) VALUES (?, ?, 'created', '', ?, 'demo stock')");
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
        const id = Number(insertTube.run(tube.label, type.id, tube.maker, tube.dateCode, tube.location, tube.state, tube.notes, now, now).lastInsertRowid);
        insertEvent.run(id, now, tube.state);
        tubeIds.set(tube.label, id);
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
    const readings = demo.sessions.reduce((sum, s) => sum + s.readings.length, 0);
    console.log(`Loaded the invented demo stock: ${demo.tubes.length} tubes, ${demo.sessions.length} sessions, ${readings} readings.`);
  }
  const builds = new BuildService(app.db, app.sqlite, app.catalog);
  if (!builds.list().some((build) => build.name === demoBuild.name)) {
    const created = await builds.create(buildInputSchema.parse(demoBuild));
    console.log(created.ok ? `Added the invented demo build "${demoBuild.name}" (see /builds/${created.value.id}).` : `Demo build not added: ${Object.values(created.errors).join("; ")}`);
  }
} finally {
  await app.close();
}
