import { describe, it, expect, beforeAll, afterAll } from "vitest";
import type { Browser } from "playwright-core";
import { makeTestApp } from "../helpers/app.ts";
import { browserAvailable, launchBrowser } from "../helpers/browser.ts";

const run = browserAvailable() ? describe : describe.skip;

run("bench entry in a real browser", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  let browser: Browser;
  let base: string;
  beforeAll(async () => {
    t = await makeTestApp();
    await t.app.stock.create({ label: "K-7", type: "12AU7", state: "stock", location: "Drawer 2" });
    base = await t.app.listen({ port: 0, host: "127.0.0.1" });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await t?.close();
  });

  it("opens a session and enters rows with the keyboard only, Enter saving each", async () => {
    const page = await browser.newPage();
    await page.goto(`${base}/sessions`);
    // 250 V / −8.5 V: the 12AU7 typical point (RCA RC-30), so percent of reference is shown.
    await page.fill("input[name=date]", "2026-11-28");
    await page.fill("input[name=instrument]", "Bench tester A");
    await page.fill("input[name=plateVolts]", "250");
    await page.fill("input[name=gridVolts]", "-8.5");
    await page.click("button:has-text('Open session')");
    await expect.poll(() => page.url()).toMatch(/\/sessions\/\d+$/);

    // Row 1: a known label. Type label, Tab (type fills in), Tab to gm fields, Enter.
    const label = page.locator("#bench-entry input[name=label]");
    await expect.poll(async () => page.evaluate(() => document.activeElement?.getAttribute("name"))).toBe("label");
    await page.keyboard.type("K-7");
    await page.keyboard.press("Tab");
    await expect.poll(async () => page.locator("#bench-entry input[name=type]").inputValue()).toBe("12AU7");
    // The type hint arriving must not steal the cursor: Tab continues from the type field.
    expect(await page.evaluate(() => document.activeElement?.getAttribute("name"))).toBe("type");
    await page.keyboard.press("Tab");
    await page.keyboard.type("2200");
    await page.keyboard.press("Tab");
    await page.keyboard.type("2.0 mA/V");
    await page.keyboard.press("Enter");
    await expect.poll(async () => page.locator("#bench-rows tr[data-label='K-7']").count()).toBeGreaterThan(0);
    const row = page.locator("#bench-rows tr[data-label='K-7']").first();
    // 2200 µS = 100 % of the RCA RC-30 reference; 2000 µS = 91 %.
    await expect.poll(async () => row.innerText()).toContain("100 %");
    expect(await page.locator("#bench-rows").innerText()).toContain("91 %");
    expect(await row.locator(".verdict-cell").innerText()).toBe("good");

    // The entry row is fresh and focused on the label again: no page reload happened.
    await expect.poll(async () => page.evaluate(() => document.activeElement?.getAttribute("name"))).toBe("label");
    expect(await label.inputValue()).toBe("");

    // Row 2: an unknown label with a typo in gm: message beside the field, nothing saved.
    await page.keyboard.type("NEW-1");
    await page.keyboard.press("Tab");
    await expect.poll(async () => page.locator("#type-hint").innerText()).toContain("create this tube");
    await page.keyboard.type("12AU7");
    await page.keyboard.press("Tab"); // onto the "create this tube" box, already ticked
    await page.keyboard.press("Tab");
    expect(await page.evaluate(() => document.activeElement?.getAttribute("name"))).toBe("s1Gm");
    await page.keyboard.type("2,1");
    await page.keyboard.press("Enter");
    await expect.poll(async () => page.locator("#s1Gm-error").innerText()).toContain("ambiguous");
    expect(await t.app.db.tube.findUnique({ where: { label: "NEW-1" } })).toBeNull();

    // Fix the typo and save: the tube is created and judged.
    await page.locator("#bench-entry input[name=s1Gm]").fill("2100");
    await page.locator("#bench-entry input[name=s2Gm]").fill("2150");
    await page.locator("#bench-entry input[name=s2Gm]").press("Enter");
    await expect.poll(async () => page.locator("#bench-rows tr[data-label='NEW-1']").count()).toBeGreaterThan(0);
    const created = await t.app.db.tube.findUniqueOrThrow({ where: { label: "NEW-1" } });
    expect(created.verdict).toBe("good");

    // Row 3: a 12AX7 in this 12AU7 session, with the tester's setting for it typed in the At field.
    await expect.poll(async () => page.evaluate(() => document.activeElement?.getAttribute("name"))).toBe("label");
    await page.keyboard.type("AX-9");
    await page.keyboard.press("Tab");
    await expect.poll(async () => page.locator("#type-hint").innerText()).toContain("create this tube");
    await page.keyboard.type("12AX7");
    await page.keyboard.press("Tab"); // the "create this tube" box
    for (const text of ["1500", "1600", "", ""]) {
      await page.keyboard.press("Tab"); // gm 1, gm 2, Ia 1, Ia 2
      if (text) await page.keyboard.type(text);
    }
    await page.keyboard.press("Tab");
    expect(await page.evaluate(() => document.activeElement?.getAttribute("name"))).toBe("at");
    await page.keyboard.type("@250/minus 2");
    await page.keyboard.press("Enter");
    await expect.poll(async () => page.locator("#at-error").innerText()).toContain("At grid volts");
    await page.locator("#bench-entry input[name=at]").fill("@250/-2");
    await page.locator("#bench-entry input[name=at]").press("Enter");
    await expect.poll(async () => page.locator("#bench-rows tr[data-label='AX-9']").count()).toBe(2);
    const ax9 = page.locator("#bench-rows tr[data-label='AX-9']").first();
    // 1500 / 1600 = 93.75 % → 94 % (library 12AX7 point at 250 V, −2 V: 12AX7 data sheet as transcribed on guitarkitbuilder.com).
    expect(await ax9.innerText()).toContain("94 %");
    expect(await ax9.locator(".judged-at").innerText()).toBe("plate 250 V, grid -2 V own");
    expect(await ax9.locator(".verdict-cell").innerText()).toBe("good");
    // The next row starts with the same setting, ready for the next 12AX7.
    expect(await page.locator("#bench-entry input[name=at]").inputValue()).toBe("@250/-2");
    await expect.poll(async () => page.evaluate(() => document.activeElement?.getAttribute("name"))).toBe("label");
    await page.screenshot({ path: "tests/.tmp/bench-entry.png", fullPage: true });
  });
});
