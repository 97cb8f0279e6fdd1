/** Launches Debian's Chromium through playwright-core; CI must have it, a developer may not. */
import fs from "node:fs";
import { chromium, type Browser } from "playwright-core";

export const chromiumPath = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";

/** True when browser tests can run here; on CI a missing browser is a failure, not a skip. */
export function browserAvailable(): boolean {
  const present = fs.existsSync(chromiumPath);
  if (!present && process.env.CI === "true") throw new Error(`Chromium not found at ${chromiumPath}; .ci/run must install it`);
  return present;
}

export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: chromiumPath,
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--no-first-run", "--disable-sync", "--disable-dev-shm-usage"],
  });
}
