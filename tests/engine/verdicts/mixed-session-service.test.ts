/**
 * The verdict service on a sitting that tests a box of mixed types: the session is set for the
 * 12AU7, and the other types' rows carry the tester's setting for their own type. Reference
 * points are the reference library's (data/tube-types), whose sources are named beside each value.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { makeTestApp } from "../../helpers/app.ts";
import { judgeTube, judgedConditions, lowestPercent } from "../../../server/verdicts/verdict-service.ts";
import { sqlTimestamp } from "../../../server/db/sql-time.ts";
import { DEFAULT_VERDICT_THRESHOLDS } from "../../../server/engine/verdicts/index.ts";

// Library points used below:
// 12AU7 at 250 V, −8.5 V: 2200 µS (data/tube-types/dual-triodes-noval.json; its source: from memory).
// 12AX7 at 250 V, −2 V: 1600 µS (dual-triodes-noval.json; source: 12AX7 data sheet, class A1 characteristics,
//   as transcribed on guitarkitbuilder.com).
// 6AU6 at 250 V plate, 150 V screen, −1 V grid: 5200 µS, heater 6.3 V (data/tube-types/pentodes.json; source: from memory).

let test: Awaited<ReturnType<typeof makeTestApp>>;
let sessionId: number;

const blankRow = { gmUnit: "uS" as const, createTube: true, heaterOpen: false };

beforeAll(async () => {
  test = await makeTestApp();
  const created = await test.app.sessions.create({ date: "2026-12-02", instrument: "Bench tester A", plateVolts: "250", gridVolts: "-8.5", heaterVolts: "12.6" });
  if (!created.ok) throw new Error(JSON.stringify(created.errors));
  sessionId = created.value.id;
  const save = async (row: Record<string, unknown>) => {
    const saved = await test.app.sessions.saveBenchRow(sessionId, { ...blankRow, ...row } as Parameters<typeof test.app.sessions.saveBenchRow>[1]);
    if (!saved.ok) throw new Error(JSON.stringify(saved.errors));
  };
  await save({ label: "MX-1", type: "12AU7", s1Gm: "2200", s2Gm: "2000" });
  await save({ label: "MX-2", type: "12AX7", s1Gm: "1500", s2Gm: "1600", at: "@250/-2" });
  await save({ label: "MX-3", type: "12AX7", s1Gm: "1500", s2Gm: "1600" });
  // The 6AU6 runs on 6.3 V, so its row gives the heater too (the session's 12.6 V would not match its rating).
  await save({ label: "MX-4", type: "6AU6", s1Gm: "3380", at: "@250/150/-1 h6.3" });
});
afterAll(async () => test?.close());

const tube = (label: string) => test.app.db.tube.findUniqueOrThrow({ where: { label } });

describe("a mixed-type sitting with per-row conditions", () => {
  it("the session's own type is judged at the session's conditions", async () => {
    const mx1 = await tube("MX-1");
    expect(mx1.verdict).toBe("good");
    // 2000 / 2200 = 90.909… % (lowest section), library 12AU7 point.
    expect(mx1.percent).toBeCloseTo((2000 / 2200) * 100, 9);
  });

  it("another type with its own conditions gets a real verdict, not 'not comparable'", async () => {
    const mx2 = await tube("MX-2");
    expect(mx2.verdict).toBe("good");
    // 1500 / 1600 = 93.75 %, library 12AX7 point at 250 V, −2 V.
    expect(mx2.percent).toBeCloseTo(93.75, 9);
    // The same readings without the row's conditions: not comparable at 250 V, −8.5 V.
    expect((await tube("MX-3")).verdict).toBe("not-comparable");
  });

  it("a pentode row with plate, screen, grid and heater of its own is judged against its point", async () => {
    const mx4 = await tube("MX-4");
    // 3380 / 5200 = 65 %, below the 70 % wear line (default thresholds, common practice).
    expect(mx4.verdict).toBe("worn");
    expect(mx4.percent).toBeCloseTo(65, 9);
  });

  it("the session's rows say which conditions each reading was judged at", async () => {
    const rows = await test.app.sessions.rows(sessionId);
    const judged = Object.fromEntries(rows.map((row) => [row.label, row.readings.map((reading) => reading.judgedAt)]));
    expect(judged["MX-1"][0]).toMatchObject({ source: "session", plateVolts: 250, gridVolts: -8.5, heaterVolts: 12.6, screenVolts: null });
    expect(judged["MX-2"][1]).toMatchObject({ source: "own", plateVolts: 250, gridVolts: -2, heaterVolts: 12.6 });
    expect(judged["MX-4"][0]).toMatchObject({ source: "own", plateVolts: 250, screenVolts: 150, gridVolts: -1, heaterVolts: 6.3, text: "plate 250 V, grid -1 V, screen 150 V, heater 6.3 V" });
  });

  it("judgeTube applies the field-by-field rule to stored rows", () => {
    const spec = test.app.catalog.resolve("12AX7")!.spec;
    const session = { heaterVolts: 12.6, plateVolts: 250, screenVolts: null, gridVolts: -8.5 };
    const stored = {
      section: 1, gmMicroSiemens: 1200, plateMilliamps: null, emissionValue: null, emissionPassMark: null, emissionFullScale: null,
      gridMicroamps: null, leakageMicroamps: null, shorts: "", heaterOpen: 0, heaterVolts: null, plateVolts: null, screenVolts: null, gridVolts: -2,
    };
    expect(judgedConditions(session, stored)).toEqual({ heaterVolts: 12.6, plateVolts: 250, screenVolts: null, gridVolts: -2 });
    const result = judgeTube(spec, session, [stored], DEFAULT_VERDICT_THRESHOLDS);
    // 1200 / 1600 = 75 %, library 12AX7 point at 250 V, −2 V.
    expect(result.sections[0].percentOfReference).toBeCloseTo(75, 9);
    expect(lowestPercent(result)).toBeCloseTo(75, 9);
  });

  it("the raw-SQL recompute inside an open transaction reads each row's conditions", async () => {
    const sqlite = test.app.sqlite;
    const typeId = test.app.catalog.resolve("12AX7")!.id;
    const now = sqlTimestamp();
    sqlite.exec("BEGIN IMMEDIATE");
    try {
      const tubeId = Number(sqlite.prepare("INSERT INTO Tube (label, typeId, createdAt, updatedAt) VALUES (?, ?, ?, ?)").run("MX-5", typeId, now, now).lastInsertRowid);
      const insert = sqlite.prepare("INSERT INTO Reading (sessionId, tubeId, section, gmMicroSiemens, plateVolts, gridVolts, createdAt) VALUES (?, ?, ?, ?, ?, ?, ?)");
      insert.run(sessionId, tubeId, 1, 1040, 250, -2, now);
      insert.run(sessionId, tubeId, 2, 1600, 250, -2, now);
      test.app.verdicts.recomputeWith(DEFAULT_VERDICT_THRESHOLDS, [tubeId]);
      sqlite.exec("COMMIT");
    } catch (error) {
      if (sqlite.inTransaction) sqlite.exec("ROLLBACK");
      throw error;
    }
    const mx5 = await tube("MX-5");
    // 1040 / 1600 = 65 %: worn below 70 % (library 12AX7 point at 250 V, −2 V; default thresholds).
    expect(mx5.verdict).toBe("worn");
    expect(mx5.percent).toBeCloseTo(65, 9);
    // Recomputing everything (no ids) gives the same answers.
    await test.app.verdicts.recompute();
    expect((await tube("MX-2")).verdict).toBe("good");
    expect((await tube("MX-5")).percent).toBeCloseTo(65, 9);
  });
});
