/**
 * Substitutes in a real browser: pick 12AU7, describe the socket, submit, read the ranked table
 * (a direct fit on top) and the caution, open the "why not" list and find an excluded type with
 * its reason; then a type page with its SVG pin diagram, and the add-a-type form's errors.
 *
 * Check values follow from the reference library (data/tube-types/dual-triodes-noval.json):
 * 6DJ8 maximum plate volts 130 V (source there: "from memory"), so a 250 V circuit excludes it.
 * Set SUBSTITUTE_SHOTS_DIR to keep a screenshot of every step.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import fs from "node:fs";
import path from "node:path";
import type { Browser, Locator, Page } from "playwright-core";
import { makeTestApp } from "../helpers/app.ts";
import { browserAvailable, launchBrowser } from "../helpers/browser.ts";

const shotsDir = process.env.SUBSTITUTE_SHOTS_DIR;
const run = browserAvailable() ? describe : describe.skip;

/** A full-page screenshot, or the viewport scrolled to the top of `part`. */
async function shot(page: Page, name: string, part?: Locator) {
  if (!shotsDir) return;
  fs.mkdirSync(shotsDir, { recursive: true });
  if (part) {
    await part.evaluate((element) => element.scrollIntoView({ block: "start" }));
    await page.screenshot({ path: path.join(shotsDir, `${name}.png`) });
  } else await page.screenshot({ path: path.join(shotsDir, `${name}.png`), fullPage: true });
}

run("substitutes in a real browser", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  let browser: Browser;
  let base: string;
  beforeAll(async () => {
    t = await makeTestApp();
    base = await t.app.listen({ port: 0, host: "127.0.0.1" });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await t?.close();
  });

  it("ranks substitutes for a 12AU7 socket and explains the excluded types", async () => {
    const page = await browser.newPage({ viewport: { width: 1360, height: 900 } });
    await page.goto(`${base}/substitutes`);
    expect(await page.locator(".caution").first().isVisible()).toBe(true);
    expect(await page.locator(".caution").first().textContent()).toContain("lethal voltages");

    await page.fill("input[name=type]", "12AU7");
    await page.press("input[name=type]", "Tab");
    // The section rows follow the type: 12AU7 has two triode sections (library data).
    await page.locator("#section-rows th", { hasText: "Section 2 · triode" }).waitFor();
    await page.check("input[name=supply][value=parallel]");
    await page.fill("input[name=heaterVolts]", "12.6");
    await page.check("input[name=values][value=circuit]");
    for (const section of [1, 2]) {
      await page.fill(`input[name=s${section}PlateVolts]`, "250 V");
      await page.fill(`input[name=s${section}PlateMilliamps]`, "8");
    }
    await page.check("input[name=allowRewire]");
    await shot(page, "1-form-filled");
    await page.click("#substitute-form button[type=submit]");

    const table = page.locator("#ranked-table");
    await table.waitFor();
    const firstRow = table.locator("tbody tr").first();
    expect(await firstRow.getAttribute("data-designation")).toBe("12AU7");
    expect((await firstRow.locator(".fit").first().textContent())?.trim()).toBe("direct");
    // 12AT7: same 9A basing and 12.6 V 0.15 A heater in the library, so a direct fit.
    const row12AT7 = table.locator('tr[data-designation="12AT7"]');
    expect((await row12AT7.locator(".fit").first().textContent())?.trim()).toBe("direct");
    expect(await page.locator("#substitute-results .caution").isVisible()).toBe(true);
    expect(page.url()).toContain("type=12AU7");
    await shot(page, "2-ranked", page.locator("#substitute-results"));

    const whyNot = page.locator("details#why-not");
    expect(await whyNot.getAttribute("open")).toBeNull();
    await whyNot.locator("summary").click();
    const reasons = whyNot.locator("dt", { hasText: /^6DJ8$/ }).locator("xpath=following-sibling::dd[1]");
    expect(await reasons.isVisible()).toBe(true);
    expect(await reasons.textContent()).toContain("above 6DJ8's 130 V");
    await shot(page, "3-why-not", whyNot);
    await page.close();
  });

  it("shows a type page with its pin diagram", async () => {
    const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
    await page.goto(`${base}/types/ecc82`);
    expect(new URL(page.url()).pathname).toBe("/types/12AU7");
    const diagram = page.locator("svg#pin-diagram");
    expect(await diagram.isVisible()).toBe(true);
    // 12AU7 is a noval (B9A) type: nine pins, pin 9 the heater centre tap (library data).
    expect(await diagram.locator("g.pin").count()).toBe(9);
    expect(await diagram.locator("g.pin-heater").count()).toBe(3);
    expect(await diagram.textContent()).toContain("gap");
    await shot(page, "4-type-page");
    await page.click("text=Find substitutes for this type");
    await page.locator("#ranked-table").waitFor();
    await page.close();
  });

  it("shows every problem of a bad new type beside its field", async () => {
    const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    await page.goto(`${base}/types/new`);
    await page.fill("input[name=designation]", "12au7");
    await page.selectOption("select[name=class]", "dual-triode");
    await page.selectOption("select[name=base]", "B9A");
    await page.fill("textarea[name=pins]", "1=a:2\n2=g1:2\n2=k:2\n4=h\n5=h\n6=a:1\n7=g1:1\n8=k:1\n9=hct");
    await page.fill("input[name=heaterVolts]", "12.6");
    await page.fill("input[name=heaterAmps]", "0.15 A");
    await page.selectOption("select[name=s1Kind]", "triode");
    await page.fill("input[name=s1PlateVolts]", "250");
    await page.click("#type-form button[type=submit]");
    await page.locator("#type-form .form-error").waitFor();
    expect(await page.locator("#s1GridVolts-error").textContent()).toContain("grid volts is required");
    expect(await page.locator("#designation-error").textContent()).toContain("12AU7 is already in the library");
    expect(await page.locator("#pins-error").textContent()).toContain("line 3: pin 2 is listed twice");
    expect(await page.locator("#source-error").textContent()).toContain("Source is required");
    await shot(page, "5-new-type-errors");
    await page.close();
  });
});
