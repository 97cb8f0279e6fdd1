/** Verdict thresholds: the engine's defaults overlaid by what the owner saved on the settings page. */
import type { PrismaClient } from "../../generated/prisma/client.ts";
import { DEFAULT_VERDICT_THRESHOLDS, type VerdictThresholds } from "../engine/verdicts/index.ts";

const thresholdsKey = "verdictThresholds";

export class SettingsService {
  private cached: VerdictThresholds | null = null;

  constructor(private readonly db: PrismaClient) {}

  async thresholds(): Promise<VerdictThresholds> {
    if (this.cached) return this.cached;
    const row = await this.db.setting.findUnique({ where: { key: thresholdsKey } });
    const saved = row ? (JSON.parse(row.value) as Partial<VerdictThresholds>) : {};
    this.cached = { ...DEFAULT_VERDICT_THRESHOLDS, ...saved };
    return this.cached;
  }

  /** Drops the cached thresholds, e.g. after a restore replaced the Setting table underneath. */
  forget(): void {
    this.cached = null;
  }

  /** Saves only the values that differ from the defaults, so improved defaults still reach the owner. */
  async saveThresholds(values: VerdictThresholds): Promise<void> {
    const changed: Partial<Record<keyof VerdictThresholds, number>> = {};
    for (const key of Object.keys(DEFAULT_VERDICT_THRESHOLDS) as Array<keyof VerdictThresholds>) {
      if (values[key] !== DEFAULT_VERDICT_THRESHOLDS[key]) changed[key] = values[key] as number;
    }
    await this.db.setting.upsert({
      where: { key: thresholdsKey },
      create: { key: thresholdsKey, value: JSON.stringify(changed) },
      update: { value: JSON.stringify(changed) },
    });
    this.cached = null;
  }
}
