/**
 * Builds in a real browser: plan a register of 5963 bistable stages (lines added and removed in
 * place), read the check (short of 5963, 12AU7 offered), accept the substitute, reserve, and
 * read the pick list. Stock readings are invented; the 12AU7 reference (2200 µS at 250 V /
 * −8.5 V) and the 5963 data come from the library (data/tube-types/dual-triodes-noval.json).
 * Set BUILD_SHOTS_DIR to keep a screenshot of every step.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import fs from "node:fs";
import path from "node:path";
import type { Browser, Page } from "playwright-core";
import { makeTestApp } from "../helpers/app.ts";
import { browserAvailable, launchBrowser } from "../helpers/browser.ts";
import { sqlTimestamp } from "../../server/db/sql-time.ts";

const shotsDir = process.env.BUILD_SHOTS_DIR;
const run = browserAvailable() ? describe : describe.skip;

async function shot(page: Page, name: string) {
  if (!shotsDir) return;
  fs.mkdirSync(shotsDir, { recursive: true });
  await page.screenshot({ path: path.join(shotsDir, `${name}.png`), fullPage: true });
}

type App = Awaited<ReturnType<typeof makeTestApp>>["app"];

/** Two 5963 read for emission and eight 12AU7 read for gm, in three drawers. */
async function seedStock(app: App) {
  const now = sqlTimestamp();
  const session = (plateVolts: number, gridVolts: number, heaterVolts: number) =>
    Number(app.sqlite.prepare("INSERT INTO TestSession (date, instrument, heaterVolts, plateVolts, gridVolts, createdAt) VALUES ('2026-10-01', 'bench', ?, ?, ?, ?)").run(heaterVolts, plateVolts, gridVolts, now).lastInsertRowid);
  const gmSession = session(250, -8.5, 12.6);
  const emissionSession = session(100, -1, 6.3);
  const insertTube = app.sqlite.prepare("INSERT INTO Tube (label, typeId, location, state, createdAt, updatedAt) VALUES (?, ?, ?, 'stock', ?, ?)");
  const insertReading = app.sqlite.prepare(
    "INSERT INTO Reading (sessionId, tubeId, section, gmMicroSiemens, emissionValue, emissionPassMark, emissionFullScale, createdAt) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
  );
  app.sqlite.transaction(() => {
    const t5963 = app.catalog.resolve("5963")!.id;
    const t12AU7 = app.catalog.resolve("12AU7")!.id;
    [[80, 81], [70, 71]].forEach((values, index) => {
      const id = Number(insertTube.run(`CG-${index + 1}`, t5963, "Drawer C", now, now).lastInsertRowid);
      values.forEach((value, section) => insertReading.run(emissionSession, id, section + 1, null, value, 55, 100, now));
    });
    for (let index = 0; index < 8; index++) {
      const id = Number(insertTube.run(`AU-${index + 1}`, t12AU7, `Drawer ${index % 2 === 0 ? "B" : "A"}`, now, now).lastInsertRowid);
      for (const section of [1, 2]) insertReading.run(gmSession, id, section, 1700 + 120 * index + section, null, null, null, now);
    }
  })();
  await app.verdicts.recompute();
}

run("builds in a real browser", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  let browser: Browser;
  let base: string;
  beforeAll(async () => {
    t = await makeTestApp();
    await seedStock(t.app);
    base = await t.app.listen({ port: 0, host: "127.0.0.1" });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await t?.close();
  });

  it("plans a register, sees the shortfall, accepts 12AU7, reserves and prints the pick list", async () => {
    const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    await page.goto(`${base}/builds`);
    await shot(page, "1-builds-empty");
    await page.click("text=Plan a new build");
    await page.waitForURL(`${base}/builds/new`);

    await page.fill("input[name=name]", "Six-bit register");
    await page.fill("input[name='heaterSupplies.0.name']", "6.3 V bus");
    await page.fill("input[name='heaterSupplies.0.amps']", "5 A");
    await page.fill("input[name='bPlus.volts']", "250 V");
    await page.fill("input[name='bPlus.milliamps']", "200");
    await page.fill("input[name='negativeRail.volts']", "-150");
    await page.fill("input[name='negativeRail.milliamps']", "20");
    await page.fill("input[name='lines.0.count']", "6");
    await page.fill("input[name='lines.0.type']", "5963");
    await page.fill("input[name='lines.0.plateLoadOhms']", "27k");
    await page.fill("input[name='lines.0.couplingOhms']", "220k");
    await page.fill("input[name='lines.0.gridReturnOhms']", "220k");
    await page.fill("input[name='lines.0.sparesPercent']", "0");
    await page.fill("input[name='lines.0.sparesSource']", "no spares for the trial");
    await page.check("input[name='lines.0.allowSubstitutes']");
    // The single-stage fields stay hidden for a bistable line.
    expect(await page.locator("input[name='lines.0.plateVolts']").isVisible()).toBe(false);

    // A second line arrives in place (htmx) with what was typed kept, and goes again.
    await page.click("button[value=add-line]");
    await page.locator("fieldset#line-2").waitFor();
    expect(await page.inputValue("input[name='lines.0.type']")).toBe("5963");
    await page.selectOption("select[name='lines.1.kind']", "single");
    expect(await page.locator("input[name='lines.1.plateVolts']").isVisible()).toBe(true);
    await shot(page, "2-editor-two-lines");
    await page.click("button[value=remove-line-1]");
    await page.locator("fieldset#line-2").waitFor({ state: "detached" });

    // A typo is named beside its field and nothing is saved.
    await page.fill("input[name='lines.0.couplingOhms']", "1m");
    await page.click("#build-form .editor-actions button[value=save]");
    await page.locator("[id='lines.0.couplingOhms-error']").waitFor();
    expect(await page.locator("[id='lines.0.couplingOhms-error']").textContent()).toContain("lowercase m means milli");
    await shot(page, "3-editor-error");
    await page.fill("input[name='lines.0.couplingOhms']", "220k");
    await page.click("#build-form .editor-actions button[value=save]");
    await page.waitForURL(/\/builds\/\d+\?done=created$/);

    // The check: 2 balanced 5963 pairs against 6 stages → 4 short; the 12AU7 could close it.
    const verdict = page.locator("#build-verdict");
    expect(await verdict.locator("h2").textContent()).toContain("Short");
    expect(await page.locator(".line-report .shortfall").first().textContent()).toContain("4 stages");
    expect(await page.locator(".caution").first().textContent()).toContain("lethal voltages");
    expect(await page.locator(".budget-chart svg .budget-row").count()).toBe(4);
    const offer = page.locator('tr[data-substitute="12AU7"]');
    expect(await offer.textContent()).toContain("closes the gap");
    await shot(page, "4-check-short");

    await offer.locator("button", { hasText: "Accept 12AU7" }).click();
    await page.waitForURL(/done=accepted$/);
    expect(await verdict.locator("h2").textContent()).toContain("Ready with substitutes");
    await shot(page, "5-check-with-substitute");

    await page.click("#reserve-button");
    await page.waitForURL(/done=reserved&n=\d+$/);
    const reserved = Number(/n=(\d+)$/.exec(page.url())![1]);
    expect(reserved).toBeGreaterThanOrEqual(6);
    expect(await page.locator(".notice").textContent()).toContain(`Reserved ${reserved} tubes`);
    expect(await page.locator("#install-form tbody tr").count()).toBe(reserved);
    await shot(page, "6-check-reserved");

    await page.click("text=Pick list >> nth=0");
    await page.waitForURL(/\/pick-list$/);
    const locations = await page.locator("#pick-list tbody tr td:first-child").allTextContents();
    expect(locations).toHaveLength(reserved);
    expect([...locations].sort((a, b) => a.localeCompare(b, "en", { numeric: true }))).toEqual(locations);
    await shot(page, "7-pick-list");
    await page.emulateMedia({ media: "print" });
    expect(await page.locator("nav").isVisible()).toBe(false);
    expect(await page.locator(".build-actions").isVisible()).toBe(false);
    expect(await page.locator("#pick-list").isVisible()).toBe(true);
    await shot(page, "8-pick-list-print");
    await page.emulateMedia({ media: "screen" });

    await page.goto(`${base}/builds`);
    expect(await page.locator("#build-list tbody tr").count()).toBe(1);
    await shot(page, "9-builds-list");
    await page.close();
  });
});
