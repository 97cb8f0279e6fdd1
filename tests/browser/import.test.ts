/**
 * CSV import in a real browser: a file with a mistake shows the problem by row and column, the
 * corrected file previews clean, saving shows progress and then the result, and the session
 * page shows the readings with their verdicts.
 *
 * Fixture readings are invented; the reference is the RCA RC-30 12AU7 typical point
 * (250 V plate, −8.5 V grid, 2200 µmho), so percent of reference is computed.
 * Set IMPORT_SHOTS_DIR to keep a screenshot of every step.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import type { Browser, Page } from "playwright-core";
import { makeTestApp } from "../helpers/app.ts";
import { browserAvailable, launchBrowser } from "../helpers/browser.ts";

const fixtures = path.join(path.dirname(fileURLToPath(import.meta.url)), "../fixtures/import");
const shotsDir = process.env.IMPORT_SHOTS_DIR;
const run = browserAvailable() ? describe : describe.skip;

async function shot(page: Page, name: string) {
  if (!shotsDir) return;
  fs.mkdirSync(shotsDir, { recursive: true });
  await page.screenshot({ path: path.join(shotsDir, `${name}.png`), fullPage: true });
}

run("CSV import in a real browser", () => {
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

  async function uploadFile(page: Page, fileName: string) {
    await page.goto(`${base}/import`);
    await page.setInputFiles("input[name=file]", path.join(fixtures, fileName));
    await page.fill("input[name=instrument]", "Bench tester A");
    await page.fill("input[name=date]", "2026-03-14");
    await page.fill("input[name=plateVolts]", "250");
    await page.fill("input[name=gridVolts]", "-8.5");
  }

  it("shows a problem, takes the corrected file, saves with progress and links to the verdicts", async () => {
    const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });

    await uploadFile(page, "bench-12au7-with-error.csv");
    await shot(page, "1-upload");
    await page.click("button:has-text('Upload and map columns')");
    await expect.poll(() => page.url()).toMatch(/\/import\/[0-9a-f]{24}\/mapping$/);
    expect(await page.locator("#col_label").inputValue()).toBe("0"); // the "Tube" column, guessed from its name
    expect(await page.locator("#gmUnit").inputValue()).toBe("umho"); // from the header "Gm (umho)"
    await shot(page, "2-mapping");
    await page.click("button:has-text('Check every row')");
    await expect.poll(() => page.url()).toMatch(/\/preview$/);

    const problems = page.locator("#import-problems tbody tr");
    expect(await problems.count()).toBe(1);
    const cells = await problems.first().locator("td").allInnerTexts();
    expect(cells[0]).toBe("3"); // the header is row 1; "2,1" is on the third line of the file
    expect(cells[1]).toBe("Gm (umho)");
    expect(cells[2]).toContain("'2,1' is ambiguous");
    expect(await page.locator("#import-commit").count()).toBe(0);
    await shot(page, "3-preview-problem");

    await page.click("a:has-text('Upload a corrected file')");
    await uploadFile(page, "bench-12au7.csv");
    await page.click("button:has-text('Upload and map columns')");
    await expect.poll(() => page.url()).toMatch(/\/mapping$/);
    expect(await page.locator("main").innerText()).toContain("Preselected from the mapping remembered for Bench tester A");
    await page.click("button:has-text('Check every row')");
    await expect.poll(() => page.url()).toMatch(/\/preview$/);
    expect(await page.locator(".import-counts li.import-count-ok").innerText()).toMatch(/^0\s+problems$/);
    expect(await page.locator("#import-sample tbody tr").count()).toBe(6);
    await shot(page, "4-preview-clean");

    // Hold the commit at its start so the progress state is on screen before it finishes.
    const settings = t.app.settings;
    const thresholds = settings.thresholds.bind(settings);
    let release!: () => void;
    const gate = new Promise<void>((resolve) => (release = resolve));
    settings.thresholds = async () => {
      await gate;
      return thresholds();
    };
    await page.click("button:has-text('Save all 6 readings')");
    await expect.poll(() => page.url()).toMatch(/\/import\/jobs\/[0-9a-f]{24}$/);
    expect(await page.locator("#import-job").getAttribute("data-state")).toBe("running");
    expect(await page.locator("#import-job progress").count()).toBe(1);
    await shot(page, "5-progress");
    settings.thresholds = thresholds;
    release();

    // htmx polls the fragment and swaps in the result without a reload.
    await expect.poll(() => page.locator("#import-job").getAttribute("data-state"), { timeout: 10_000 }).toBe("done");
    expect(await page.locator("#import-job").innerText()).toContain("6 readings from 6 rows are in the ledger: 3 new tubes");
    await shot(page, "6-saved");

    await page.click("#import-session-link");
    await expect.poll(() => page.url()).toMatch(/\/sessions\/\d+$/);
    const table = page.locator("#bench-rows");
    const bx101 = table.locator("tr[data-label='BX-101']").first();
    // 2150 and 2100 µmho against 2200 µmho: 98 % and 95 % (RCA RC-30 12AU7 reference, arithmetic).
    expect(await table.locator("tr[data-label='BX-101']").allInnerTexts()).toEqual([expect.stringContaining("98 %"), expect.stringContaining("95 %")]);
    expect(await bx101.locator(".verdict-cell").innerText()).toBe("good");
    // 1400 µmho = 64 %, below the default 70 % wear mark (rule of thumb, no source).
    expect(await table.locator("tr[data-label='BX-102']").first().locator(".verdict-cell").innerText()).toBe("worn");
    await shot(page, "7-session");
    await page.close();
  });
});
