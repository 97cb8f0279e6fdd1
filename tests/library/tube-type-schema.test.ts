import { describe, expect, it } from "vitest";
import { tubeLibraryFileSchema, tubeTypeSpecSchema, TUBE_CLASSES, BASE_FAMILIES, PIN_ELEMENTS } from "../../server/schemas/tube-type-schema.ts";

/** Invented fixture shaped like a 7-pin pentode; not reference data. */
function validSpec(): Record<string, unknown> {
  return {
    designation: "6AU6",
    aliases: ["EF94"],
    class: "pentode",
    base: "B7G",
    basingCode: "7BK",
    pins: [
      { pin: "1", element: "g1", section: 1 },
      { pin: "2", element: "g3", section: 1 },
      { pin: "3", element: "h" },
      { pin: "4", element: "h" },
      { pin: "5", element: "a", section: 1 },
      { pin: "6", element: "g2", section: 1 },
      { pin: "7", element: "k", section: 1 },
    ],
    sections: [{ index: 1, kind: "pentode", typical: [{ plateVolts: 250, gridVolts: -1, screenVolts: 150, plateMilliamps: 10.6 }] }],
    heater: { volts: 6.3, amps: 0.3 },
    maxRatings: { plateVolts: 300 },
    sources: { pins: "from memory", heater: "RCA Receiving Tube Manual RC-30, 1975", "sections.1.typical.0": "derived: test fixture" },
  };
}

function messagesFor(spec: unknown): string[] {
  const result = tubeTypeSpecSchema.safeParse(spec);
  return result.success ? [] : result.error.issues.map((issue) => `${issue.path.join(".")}: ${issue.message}`);
}

describe("tubeTypeSpecSchema", () => {
  it("accepts a complete type", () => {
    expect(messagesFor(validSpec())).toEqual([]);
  });

  it("rejects unknown keys at every level", () => {
    expect(messagesFor({ ...validSpec(), colour: "red" }).join("\n")).toMatch(/colour/);
    const spec = validSpec();
    spec.heater = { volts: 6.3, amps: 0.3, watts: 2 };
    expect(messagesFor(spec).join("\n")).toMatch(/^heater: .*watts/m);
  });

  it("rejects designations that are not upper-case EIA or Pro Electron forms", () => {
    for (const bad of ["12au7", "12 AU7", "ECC-", "-OA2", ""]) {
      expect(messagesFor({ ...validSpec(), designation: bad }).join("\n")).toMatch(/designation must be upper-case letters and digits/);
    }
    for (const good of ["OA2", "6SN7GT", "5U4GB", "E88CC", "2D21W", "01A"]) {
      expect(messagesFor({ ...validSpec(), designation: good })).toEqual([]);
    }
  });

  it("names the field in its messages", () => {
    const spec = validSpec();
    spec.heater = { volts: -6.3, amps: 0.3 };
    expect(messagesFor(spec)).toContain("heater.volts: heater volts must not be negative");
    const zeroPlate = validSpec();
    zeroPlate.sections = [{ index: 1, kind: "pentode", typical: [{ plateVolts: 0, gridVolts: -1, screenVolts: 150, plateMilliamps: 1 }] }];
    expect(messagesFor(zeroPlate)).toContain("sections.0.typical.0.plateVolts: plate volts must be greater than zero");
    expect(messagesFor({ ...validSpec(), maxRatings: { plateWatts: -1 } })).toContain("maxRatings.plateWatts: maximum plate watts must be greater than zero");
  });

  it("rejects a pin listed twice", () => {
    const spec = validSpec();
    (spec.pins as unknown[]).push({ pin: "7", element: "nc" });
    expect(messagesFor(spec)).toContain("pins.7.pin: pin 7 is listed twice");
  });

  it("rejects a section number on heater, shield, IC and NC pins", () => {
    const spec = validSpec();
    (spec.pins as Array<Record<string, unknown>>)[2] = { pin: "3", element: "h", section: 1 };
    expect(messagesFor(spec).join("\n")).toMatch(/pins.2.section: pin section is only for section electrodes/);
  });

  it("rejects a pin naming a section that does not exist", () => {
    const spec = validSpec();
    (spec.pins as Array<Record<string, unknown>>)[4] = { pin: "5", element: "a", section: 2 };
    expect(messagesFor(spec)).toContain("pins.4.section: pin 5 names section 2, which is not in sections");
  });

  it("requires sections numbered 1, 2, 3 in order", () => {
    const spec = validSpec();
    (spec.sections as Array<Record<string, unknown>>)[0].index = 2;
    expect(messagesFor(spec).join("\n")).toMatch(/sections.0.index: section index must be 1/);
  });

  it("rejects an alias that repeats the designation or itself", () => {
    expect(messagesFor({ ...validSpec(), aliases: ["6AU6"] })).toContain("aliases.0: alias 6AU6 repeats the designation");
    expect(messagesFor({ ...validSpec(), aliases: ["EF94", "EF94"] })).toContain("aliases.1: alias EF94 is listed twice");
  });

  it("accepts a cold-cathode heater only as 0 V with 0 A, said outright", () => {
    expect(messagesFor({ ...validSpec(), heater: { volts: 0, amps: 0, coldCathode: true } })).toEqual([]);
    expect(messagesFor({ ...validSpec(), heater: { volts: 0, amps: 0 } })).toContain("heater.coldCathode: a heater of 0 V and 0 A must say coldCathode: true (no heater)");
    expect(messagesFor({ ...validSpec(), heater: { volts: 6.3, amps: 0.3, coldCathode: true } })).toContain("heater.coldCathode: a cold-cathode type has no heater: give 0 V and 0 A");
    expect(messagesFor({ ...validSpec(), heater: { volts: 0, amps: 0.3 } }).join("\n")).toMatch(/heater volts and amps must both be zero/);
  });

  it("takes glow data on regulator sections only, striking at or above operating", () => {
    const regulator = { index: 1, kind: "regulator", typical: [], glow: { operatingVolts: 150, strikingVolts: 120, minMilliamps: 30, maxMilliamps: 5 } };
    const messages = messagesFor({ ...validSpec(), sections: [regulator] });
    expect(messages).toContain("sections.0.glow.strikingVolts: glow striking volts must be at least the operating volts (a glow tube fires above the voltage it holds)");
    expect(messages).toContain("sections.0.glow.maxMilliamps: glow maximum milliamps must be above the minimum");
    const pentodeWithGlow = { ...(validSpec().sections as Record<string, unknown>[])[0], glow: { operatingVolts: 150, strikingVolts: 185, minMilliamps: 5, maxMilliamps: 30 } };
    expect(messagesFor({ ...validSpec(), sections: [pentodeWithGlow] })).toContain("sections.0.glow: glow data belong to regulator sections, not to a pentode");
  });

  it("takes a cutoff on pentode and heptode sections only", () => {
    const base = (validSpec().sections as Record<string, unknown>[])[0];
    expect(messagesFor({ ...validSpec(), sections: [{ ...base, cutoff: "remote" }], sources: { ...(validSpec().sources as object), "sections.1.cutoff": "from memory" } })).toEqual([]);
    expect(messagesFor({ ...validSpec(), sections: [{ ...base, cutoff: "soft" }] })).toContain('sections.0.cutoff: section cutoff must be "sharp" or "remote"');
    expect(messagesFor({ ...validSpec(), sections: [{ ...base, kind: "triode", cutoff: "sharp" }] })).toContain("sections.0.cutoff: cutoff describes pentode and heptode sections, not a triode");
  });

  it("refuses a section label used twice in one type", () => {
    const base = (validSpec().sections as Record<string, unknown>[])[0];
    const messages = messagesFor({ ...validSpec(), sections: [{ ...base, label: "segment a" }, { ...base, index: 2, label: "segment a" }] });
    expect(messages).toContain("sections.1.label: section label segment a is used twice");
  });

  it("requires each source to name a document with its year or say from memory", () => {
    expect(messagesFor({ ...validSpec(), sources: { pins: "a data sheet" } }).join("\n")).toMatch(/source must name a document with its year/);
    expect(messagesFor({ ...validSpec(), sources: { wiring: "from memory" } }).join("\n")).toMatch(/sources key must be a field path/);
    expect(messagesFor({ ...validSpec(), sources: { "maxRatings.plateVolts": "GE Essential Characteristics, 1973" } })).toEqual([]);
  });

  it("rejects variantOf naming the type itself", () => {
    expect(messagesFor({ ...validSpec(), variantOf: "6AU6" })).toContain("variantOf: variantOf must name another type");
  });
});

describe("tubeLibraryFileSchema", () => {
  it("accepts a comment and a list of types, and nothing else", () => {
    expect(tubeLibraryFileSchema.safeParse({ $comment: "test", types: [validSpec()] }).success).toBe(true);
    expect(tubeLibraryFileSchema.safeParse({ types: [], extra: 1 }).success).toBe(false);
  });
});

describe("form enumerations", () => {
  it("lists the classes, bases and pin elements of the engine's shape", () => {
    expect(TUBE_CLASSES).toContain("dual-triode");
    expect(BASE_FAMILIES).toEqual(["B7G", "B9A", "octal", "loctal", "subminiature", "B8G", "other"]);
    expect(PIN_ELEMENTS).toHaveLength(16);
  });
});
