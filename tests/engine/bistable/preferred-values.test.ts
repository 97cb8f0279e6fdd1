import { describe, expect, it } from "vitest";
import { E12_MANTISSAS, E24_MANTISSAS, preferredValuesInRange } from "../../../server/engine/bistable/index.ts";

describe("IEC 60063 preferred values", () => {
  it("has 12 and 24 values per decade with the standard mantissas", () => {
    // IEC 60063 E12 and E24 series.
    expect(E12_MANTISSAS).toEqual([10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82]);
    expect(E24_MANTISSAS).toEqual([
      10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
    ]);
    // IEC 60063: every E12 value is also an E24 value.
    for (const mantissa of E12_MANTISSAS) expect(E24_MANTISSAS).toContain(mantissa);
  });

  it("lists 12/24 values in each decade of a range", () => {
    expect(preferredValuesInRange("E12", 1000, 9999)).toHaveLength(12);
    expect(preferredValuesInRange("E24", 1000, 9999)).toHaveLength(24);
    expect(preferredValuesInRange("E12", 10_000, 999_999)).toHaveLength(24);
    expect(preferredValuesInRange("E24", 1, 9.99)).toHaveLength(24);
  });

  it("gives exact ohm values, ascending, inside the bounds", () => {
    expect(preferredValuesInRange("E12", 10_000, 33_000)).toEqual([10000, 12000, 15000, 18000, 22000, 27000, 33000]);
    const values = preferredValuesInRange("E24", 4_700, 1_000_000);
    expect(values[0]).toBe(4700);
    expect(values[values.length - 1]).toBe(1_000_000);
    expect(values).toContain(47_000);
    expect(values).toContain(910_000);
    for (let index = 1; index < values.length; index++) expect(values[index]).toBeGreaterThan(values[index - 1]);
    expect(preferredValuesInRange("E12", 4.7, 6.8)).toEqual([4.7, 5.6, 6.8]);
  });

  it("returns nothing for an inverted range and refuses a non-positive one", () => {
    expect(preferredValuesInRange("E12", 5000, 4000)).toEqual([]);
    expect(() => preferredValuesInRange("E12", 0, 100)).toThrow(RangeError);
  });
});
