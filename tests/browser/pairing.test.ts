/**
 * Pairing and the bistable page in a real browser. A small invented 12AU7 stock read at 250 V /
 * −8.5 V (the library's first 12AU7 point) is paired with a 3 % rule; the pairs table and the gm
 * histogram appear, reserving shows every chosen tube as reserved. Then /bistable with the
 * bistable engine's known latching circuit (two 12AU7, RL 27 kΩ, R1 = R2 = 220 kΩ, B+ 250 V,
 * −150 V) draws both transfer curves and says "Bistable"; the resistor helper fills its table.
 * Set BISTABLE_SHOTS_DIR to keep a screenshot of every step.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import fs from "node:fs";
import path from "node:path";
import type { Browser, Page } from "playwright-core";
import { makeTestApp } from "../helpers/app.ts";
import { browserAvailable, launchBrowser } from "../helpers/browser.ts";

const shotsDir = process.env.BISTABLE_SHOTS_DIR;
const run = browserAvailable() ? describe : describe.skip;

async function shot(page: Page, name: string) {
  if (!shotsDir) return;
  fs.mkdirSync(shotsDir, { recursive: true });
  await page.screenshot({ path: path.join(shotsDir, `${name}.png`), fullPage: true });
}

/** Invented readings: label → [gm s1 µS, Ia s1 mA, gm s2 µS, Ia s2 mA]. */
const STOCK: Record<string, [number, number, number, number]> = {
  BR01: [2000, 10.0, 2010, 11.0],
  BR02: [2020, 10.05, 2030, 11.05],
  BR03: [2200, 10.5, 2150, 10.2],
  BR04: [2180, 10.4, 2240, 11.5],
  BR05: [1900, 9.0, 1960, 9.4],
  BR06: [2300, 11.0, 2310, 11.1],
  BR07: [2090, 10.2, 2120, 10.3],
  BR08: [2400, 11.9, 2380, 11.7],
};

run("pairing and bistable pages in a real browser", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  let browser: Browser;
  let base: string;
  beforeAll(async () => {
    t = await makeTestApp();
    const session = await t.app.sessions.create({ date: "2026-11-03", instrument: "browser bench", heaterVolts: "12.6", plateVolts: "250", gridVolts: "-8.5", notes: "" } as never);
    if (!session.ok) throw new Error("session");
    for (const [label, [gm1, ia1, gm2, ia2]] of Object.entries(STOCK)) {
      const saved = await t.app.sessions.saveBenchRow(session.value.id, {
        label, type: "12AU7", createTube: true, gmUnit: "uS", heaterOpen: false,
        s1Gm: String(gm1), s1Ia: String(ia1), s2Gm: String(gm2), s2Ia: String(ia2),
      } as never);
      if (!saved.ok) throw new Error(label);
    }
    base = await t.app.listen({ port: 0, host: "127.0.0.1" });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await t?.close();
  });

  it("pairs 12AU7 sections with a 3 % rule, draws the histogram, and reserves the chosen tubes", async () => {
    const page = await browser.newPage({ viewport: { width: 1360, height: 900 } });
    await page.goto(`${base}/pairing`);
    await page.fill("input[name=type]", "12AU7");
    await page.fill("input[name=gmTolerance]", "3");
    await page.fill("input[name=iaTolerance]", "3");
    await page.click("#pairing-form button[type=submit]");
    const table = page.locator("#pairs-table");
    await table.waitFor();
    const rows = await table.locator("tbody tr").count();
    expect(rows).toBeGreaterThan(0);
    expect(Number(await page.locator("#exact-count").textContent())).toBe(rows);
    expect(Number(await page.locator("#greedy-count").textContent())).toBeLessThanOrEqual(rows);
    expect(await page.locator("svg#histogram-svg rect.bar-paired").count()).toBeGreaterThan(0);
    expect(await page.locator("svg#histogram-svg line.pair-mark").count()).toBe(rows);
    expect(page.url()).toContain("type=12AU7");
    await shot(page, "1-pairing-results");

    const buttonText = (await page.locator("#reserve-button").textContent()) ?? "";
    const tubeCount = Number(/Reserve these (\d+)/.exec(buttonText)?.[1]);
    await page.click("#reserve-button");
    const reserved = page.locator("#reserved-table");
    await reserved.waitFor();
    expect(await reserved.locator("tbody tr").count()).toBe(tubeCount);
    const states = await reserved.locator(".tube-state").allTextContents();
    expect(states.every((state) => state.trim() === "reserved")).toBe(true);
    await page.locator("#reserve-report").scrollIntoViewIfNeeded();
    await shot(page, "2-reserved");

    // Pressing it again is refused: the tubes are no longer in stock.
    await page.click("#reserve-button");
    await page.locator("#reserve-report .form-error").waitFor();
    expect(await page.locator("#reserve-report .form-error").textContent()).toContain("Nothing was reserved");
    await page.close();
  });

  it("analyses a known latching pair and draws both transfer curves with the states marked", async () => {
    const page = await browser.newPage({ viewport: { width: 1360, height: 1000 } });
    await page.goto(`${base}/bistable`);
    expect(await page.locator(".caution").first().textContent()).toContain("lethal voltages");
    // The form starts with the known-good circuit; analyse it as it stands.
    await page.click("#bistable-form button[type=submit]:not([formaction])");
    const verdict = page.locator("#bistable-verdict");
    await verdict.waitFor();
    expect(await verdict.locator("strong").first().textContent()).toBe("Bistable");
    const chart = page.locator("svg#transfer-svg");
    expect(await chart.isVisible()).toBe(true);
    for (const curve of ["path.curve-a", "path.curve-b"]) {
      const d = (await chart.locator(curve).getAttribute("d")) ?? "";
      expect(d.split("L").length).toBeGreaterThan(20);
    }
    expect(await chart.locator("[data-mark=state].stable").count()).toBe(2);
    expect(await chart.locator("[data-mark=state].unstable").count()).toBe(1);
    expect(page.url()).toContain("aPlateLoad=27k");
    await shot(page, "3-bistable");

    await page.click("text=Suggest resistor values");
    await page.locator("#suggestions-table").waitFor();
    expect(await page.locator("#suggestions-table tbody tr").count()).toBeGreaterThan(0);
    await page.locator("#resistor-results").scrollIntoViewIfNeeded();
    await shot(page, "4-resistor-helper");

    // A circuit that does not latch says so.
    await page.fill("input[name=aPlateLoad]", "10k");
    await page.fill("input[name=aCoupling]", "2.2M");
    await page.fill("input[name=aGridReturn]", "100k");
    await page.fill("input[name=negativeRail]", "-20");
    await page.click("#bistable-form button[type=submit]:not([formaction])");
    await page.locator("#bistable-verdict.not-bistable").waitFor();
    expect(await page.locator("#bistable-verdict").textContent()).toContain("only one equilibrium");
    await shot(page, "5-not-bistable");
    await page.close();
  });
});
