import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { makeTestApp, postForm } from "../helpers/app.ts";

let t: Awaited<ReturnType<typeof makeTestApp>>;
let sessionId: number;
beforeAll(async () => {
  t = await makeTestApp();
  // 250 V plate, −8.5 V grid: the 12AU7 typical operating point (RCA RC-30: 10.5 mA, 2200 µmho).
  const response = await postForm(t.app, "/sessions", { date: "2026-11-30", instrument: "Bench tester A", plateVolts: "250 V", gridVolts: "-8.5", heaterVolts: "12.6" }, { from: "/sessions" });
  expect(response.statusCode).toBe(303);
  sessionId = Number(String(response.headers.location).split("/").pop());
});
afterAll(async () => { await t.close(); });

const row = (fields: Record<string, string>) => ({ gmUnit: "uS", ...fields });

describe("bench sessions", () => {
  it("rejects a bad session form naming the field", async () => {
    for (const [fields, text] of [
      [{ date: "2026-13-01", instrument: "X" }, "Date: not a real calendar date"],
      [{ date: "yesterday", instrument: "X" }, "Date: use YYYY-MM-DD"],
      [{ date: "2026-11-30", instrument: "" }, "Instrument is required"],
      [{ date: "2026-11-30", instrument: "X", plateVolts: "10 mA" }, "Plate volts"],
      [{ date: "2026-11-30", instrument: "X", gridVolts: "-8,5" }, "Grid bias"],
    ] as const) {
      const response = await postForm(t.app, "/sessions", fields as Record<string, string>, { from: "/sessions" });
      expect(response.statusCode, JSON.stringify(fields)).toBe(422);
      expect(response.body).toContain(text);
    }
    expect(await t.app.db.testSession.count()).toBe(1);
  });

  it("saves a row for a new label when asked to create it, and judges it at once", async () => {
    const refused = await postForm(t.app, `/sessions/${sessionId}/readings`, row({ label: "R-1", type: "12AU7", s1Gm: "2200", s2Gm: "2.0 mA/V" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(refused.statusCode).toBe(422);
    expect(refused.body).toContain("not in stock yet");
    expect(await t.app.db.tube.count()).toBe(0);

    const saved = await postForm(t.app, `/sessions/${sessionId}/readings`, row({ label: "R-1", type: "12AU7", createTube: "1", s1Gm: "2200", s2Gm: "2.0 mA/V", s1Ia: "10.5", s2Ia: "9.8 mA" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(saved.statusCode).toBe(200);
    // 2200 µS is 100 % and 2000 µS is 91 % of the RCA RC-30 12AU7 reference (2200 µmho at 250 V, −8.5 V).
    expect(saved.body).toContain("100 %");
    expect(saved.body).toContain("91 %");
    expect(saved.body).toContain("verdict-good");
    // (2200 − 2000) / 2100 = 9.5 %: the balance formula (max − min) / mean, worked by hand.
    expect(saved.body).toContain("sections differ by 9.5 %");
    const tube = await t.app.db.tube.findUniqueOrThrow({ where: { label: "R-1" } });
    expect(tube.verdict).toBe("good");
    expect(await t.app.db.reading.count({ where: { tubeId: tube.id } })).toBe(2);
  });

  it("fills in the type of a known label", async () => {
    const response = await t.app.inject({ url: `/sessions/${sessionId}/lookup?label=R-1`, headers: { "hx-request": "true" } });
    expect(response.body).toContain(`data-type="12AU7"`);
    expect(response.body).toContain("known tube");
    const unknown = await t.app.inject({ url: `/sessions/${sessionId}/lookup?label=NEW-9`, headers: { "hx-request": "true" } });
    expect(unknown.body).toContain("create this tube");
  });

  it("re-entering a tube replaces its readings in the session; worn below 70 %", async () => {
    // 1.4 mA/V = 1400 µS = 64 % of 2200: worn (wear threshold 70 %, common practice).
    const saved = await postForm(t.app, `/sessions/${sessionId}/readings`, row({ label: "R-1", s1Gm: "1.4", s2Gm: "2100", gmUnit: "mA/V" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(saved.statusCode).toBe(422); // 2100 mA/V is beyond any receiving tube
    expect(saved.body).toContain("Section 2 transconductance");
    const ok = await postForm(t.app, `/sessions/${sessionId}/readings`, row({ label: "R-1", s1Gm: "1.4", s2Gm: "2.1", gmUnit: "mA/V" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(ok.statusCode).toBe(200);
    const tube = await t.app.db.tube.findUniqueOrThrow({ where: { label: "R-1" } });
    expect(await t.app.db.reading.count({ where: { tubeId: tube.id } })).toBe(2);
    expect(tube.verdict).toBe("worn");
    expect(tube.percent).toBeCloseTo((1400 / 2200) * 100, 5);
  });

  it("marks a hard failure: shorts, gas and an open heater", async () => {
    await t.app.stock.create({ label: "R-2", type: "12AU7", state: "stock" });
    const ok = await postForm(t.app, `/sessions/${sessionId}/readings`, row({ label: "R-2", s1Gm: "2200", s2Gm: "2200", s2Shorts: "k-g1" }), { from: `/sessions/${sessionId}`, htmx: true });
    expect(ok.statusCode).toBe(200);
    expect((await t.app.db.tube.findUniqueOrThrow({ where: { label: "R-2" } })).verdict).toBe("failed");
    const reading = await t.app.db.reading.findFirstOrThrow({ where: { tube: { label: "R-2" }, section: 2 } });
    expect(reading.shorts).toBe("g1-k");
  });

  it("rejects typos next to the field and saves nothing", async () => {
    await t.app.stock.create({ label: "P-1", type: "6AU6", state: "stock" });
    const before = await t.app.db.reading.count();
    for (const [fields, field, text] of [
      [{ label: "R-2", s1Gm: "2,2" }, "s1Gm", "ambiguous"],
      [{ label: "R-2", s1Gm: "2200 furlongs" }, "s1Gm", "unknown unit"],
      [{ label: "R-2", s1Gm: "2200", s1Shorts: "g1k" }, "s1Shorts", "not a pair of elements"],
      [{ label: "R-2", s1Ia: "10 V" }, "s1Ia", "plate current"],
      [{ label: "R-2", s1Emission: "60" }, "emissionPassMark", "needed when emission is entered"],
      [{ label: "P-1", s1Gm: "4000", s2Gm: "4000" }, "s2Gm", "only 1 section"],
      [{ label: "R-2" }, "s1Gm", "enter at least one reading"],
      [{ label: "NOPE-1", s1Gm: "2200" }, "type", "new label"],
      [{ label: "R-2", type: "12AX7", s1Gm: "1600" }, "type", "recorded as 12AU7"],
      [{ label: "", s1Gm: "1" }, "label", "Label is required"],
    ] as const) {
      const response = await postForm(t.app, `/sessions/${sessionId}/readings`, row(fields as Record<string, string>), { from: `/sessions/${sessionId}`, htmx: true });
      expect(response.statusCode, JSON.stringify(fields)).toBe(422);
      expect(response.body, JSON.stringify(fields)).toContain(text);
      expect(response.body).toContain('aria-invalid="true"');
    }
    expect(await t.app.db.reading.count()).toBe(before);
    expect((await postForm(t.app, `/sessions/99999/readings`, row({ label: "R-2", s1Gm: "1" }), { from: `/sessions/${sessionId}` })).statusCode).toBe(404);
  });

  it("marks readings taken at other conditions as not comparable", async () => {
    const created = await t.app.inject({ method: "POST", url: "/api/sessions", payload: { date: "2026-12-01", instrument: "Bench tester B", plateVolts: 150, gridVolts: -3 } });
    expect(created.statusCode).toBe(201);
    const other = created.json().id;
    const saved = await t.app.inject({ method: "POST", url: `/api/sessions/${other}/readings`, payload: { label: "R-3", type: "12AU7", createTube: true, s1Gm: 1800, s2Gm: 1750 } });
    expect(saved.statusCode).toBe(201);
    expect(saved.json().verdict).toBe("not-comparable");
    expect(saved.json().sections[0].notComparableReason).toContain("plate 150 V");
    const bad = await t.app.inject({ method: "POST", url: `/api/sessions/${other}/readings`, payload: { label: "R-3", s1Gm: "2,2" } });
    expect(bad.statusCode).toBe(422);
    expect(bad.json().fields.s1Gm).toContain("ambiguous");
    expect((await t.app.inject({ method: "POST", url: "/api/sessions", payload: { date: "x" } })).statusCode).toBe(422);
  });

  it("shows the tube page with its chart, readings and history", async () => {
    const tube = await t.app.db.tube.findUniqueOrThrow({ where: { label: "R-1" } });
    const page = await t.app.inject({ url: `/tubes/${tube.id}` });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain("<svg");
    expect(page.body).toContain("wear threshold 70 %");
    expect(page.body).toContain("Bench tester A");
  });
});

describe("settings", () => {
  it("changing the wear threshold re-judges every tube", async () => {
    const form = { wornBelowPercent: "60", failedBelowPercent: "50", emissionWornMarginPercentOfFullScale: "10", maxImbalancePercent: "10", maxGridCurrentMicroamps: "1", maxLeakageMicroamps: "5", plateVoltsTolerancePercent: "5", screenVoltsTolerancePercent: "5", gridVoltsToleranceVolts: "0.25", heaterVoltsTolerancePercent: "5" };
    const saved = await postForm(t.app, "/settings", form, { from: "/settings" });
    expect(saved.statusCode).toBe(303);
    // R-1 reads 64 % on section 1: worn under a 70 % rule, good under 60 %.
    expect((await t.app.db.tube.findUniqueOrThrow({ where: { label: "R-1" } })).verdict).toBe("good");
    const bad = await postForm(t.app, "/settings", { ...form, wornBelowPercent: "abc" }, { from: "/settings" });
    expect(bad.statusCode).toBe(422);
    expect(bad.body).toContain("enter a number");
    const outOfRange = await postForm(t.app, "/settings", { ...form, wornBelowPercent: "250", failedBelowPercent: "" }, { from: "/settings" });
    expect(outOfRange.statusCode).toBe(422);
    expect(outOfRange.body).toMatch(/id="wornBelowPercent-error"[^>]*>Worn below \(percent of reference transconductance\): must be between/);
    expect(outOfRange.body).toMatch(/id="failedBelowPercent-error"[^>]*>[^<]*enter a number/);
    const inverted = await postForm(t.app, "/settings", { ...form, wornBelowPercent: "40" }, { from: "/settings" });
    expect(inverted.statusCode).toBe(422);
    expect(inverted.body).toContain("must not exceed the worn-below threshold");
    expect((await t.app.settings.thresholds()).wornBelowPercent).toBe(60);
  });
});
