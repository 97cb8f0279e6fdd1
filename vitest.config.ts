import { defineConfig } from "vitest/config";

export default defineConfig({
  test: {
    include: ["tests/**/*.test.ts"],
    testTimeout: 30_000,
    hookTimeout: 60_000,
    // Route and browser tests each open their own SQLite file; two workers fit the 2-core machines.
    maxWorkers: 2,
  },
});
