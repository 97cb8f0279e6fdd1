import { describe, it, expect } from "vitest";
import { checkDrift } from "../../prisma/migrator.ts";

describe("migrations", () => {
  it("produce exactly the schema in schema.prisma (no drift)", async () => {
    const { exitCode, sql } = await checkDrift();
    expect(sql).toContain("empty migration");
    expect(exitCode).toBe(0);
  });
});
