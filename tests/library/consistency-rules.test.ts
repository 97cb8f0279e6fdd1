/**
 * One deliberately broken type per library rule: each must be reported, and the unbroken
 * fixture must pass. Fixture values are invented test data shaped like a 12AU7, not reference data.
 */
import { describe, expect, it } from "vitest";
import type { TubeTypeSpec } from "../../server/engine/tube-types/index.ts";
import { checkLibraryConsistency } from "../../server/library/load-library.ts";

function twinTriode(overrides: Partial<TubeTypeSpec> = {}): TubeTypeSpec {
  return {
    designation: "TEST1",
    aliases: ["TEST1A"],
    class: "dual-triode",
    base: "B9A",
    basingCode: "9A",
    pins: [
      { pin: "1", element: "a", section: 2 },
      { pin: "2", element: "g1", section: 2 },
      { pin: "3", element: "k", section: 2 },
      { pin: "4", element: "h" },
      { pin: "5", element: "h" },
      { pin: "6", element: "a", section: 1 },
      { pin: "7", element: "g1", section: 1 },
      { pin: "8", element: "k", section: 1 },
      { pin: "9", element: "hct" },
    ],
    sections: [
      { index: 1, kind: "triode", typical: [{ plateVolts: 250, gridVolts: -8.5, plateMilliamps: 10.5, transconductanceMicroSiemens: 2200, mu: 17, plateResistanceOhms: 7700 }] },
      { index: 2, kind: "triode", typical: [] },
    ],
    heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } },
    maxRatings: { plateVolts: 300, plateWatts: 2.75 },
    sources: { aliases: "from memory", pins: "from memory", heater: "from memory", maxRatings: "from memory", "sections.1.typical.0": "from memory" },
    ...overrides,
  };
}

function pentode(overrides: Partial<TubeTypeSpec> = {}): TubeTypeSpec {
  return {
    designation: "TEST2",
    aliases: [],
    class: "pentode",
    base: "B7G",
    pins: [
      { pin: "1", element: "g1", section: 1 },
      { pin: "2", element: "g3", section: 1 },
      { pin: "3", element: "h" },
      { pin: "4", element: "h" },
      { pin: "5", element: "a", section: 1 },
      { pin: "6", element: "g2", section: 1 },
      { pin: "7", element: "k", section: 1 },
    ],
    sections: [{ index: 1, kind: "pentode", typical: [{ plateVolts: 250, gridVolts: -1, screenVolts: 150, plateMilliamps: 10 }] }],
    heater: { volts: 6.3, amps: 0.3 },
    maxRatings: { plateWatts: 3 },
    sources: { pins: "from memory", heater: "from memory", maxRatings: "from memory", "sections.1.typical.0": "from memory" },
    ...overrides,
  };
}

function problemsOf(...types: TubeTypeSpec[]): string[] {
  return checkLibraryConsistency(types);
}

describe("checkLibraryConsistency fixtures", () => {
  it("passes the unbroken fixtures", () => {
    expect(problemsOf(twinTriode(), pentode())).toEqual([]);
  });
});

describe("names", () => {
  it("reports a designation used twice", () => {
    expect(problemsOf(twinTriode(), twinTriode({ aliases: [] })).join("\n")).toMatch(/designation TEST1 is used by 2 types/);
  });
  it("reports an alias claimed by two types", () => {
    const problems = problemsOf(twinTriode(), pentode({ aliases: ["TEST1A"] }));
    expect(problems.join("\n")).toMatch(/alias TEST1A is claimed by TEST1 and TEST2/);
  });
  it("reports an alias equal to another type's designation", () => {
    expect(problemsOf(twinTriode(), pentode({ aliases: ["TEST1"] })).join("\n")).toMatch(/TEST2: alias TEST1 is the designation of another type/);
  });
  it("compares names case-insensitively", () => {
    expect(problemsOf(twinTriode(), pentode({ aliases: ["test1a"] })).join("\n")).toMatch(/claimed by TEST1 and TEST2/);
  });
});

describe("variantOf", () => {
  it("reports a variant of a type not in the library", () => {
    expect(problemsOf(twinTriode({ variantOf: "NOSUCH" })).join("\n")).toMatch(/variantOf names NOSUCH, which is not a designation/);
  });
  it("reports a variant chain that loops", () => {
    const first = twinTriode({ variantOf: "TEST2" });
    const second = pentode({ variantOf: "TEST3" });
    const third = pentode({ designation: "TEST3", variantOf: "TEST1" });
    expect(problemsOf(first, second, third).join("\n")).toMatch(/variantOf chain loops back \(TEST1 → TEST2 → TEST3 → TEST1\)/);
  });
  it("accepts a variant chain that ends", () => {
    expect(problemsOf(twinTriode({ variantOf: "TEST2" }), pentode())).toEqual([]);
  });
});

describe("pins", () => {
  it("reports a pin label used twice", () => {
    const spec = twinTriode();
    spec.pins[8] = { pin: "8", element: "hct" };
    expect(problemsOf(spec).join("\n")).toMatch(/pin 8 is used 2 times/);
  });
  it("reports a missing pin of a standard base", () => {
    const spec = twinTriode();
    spec.pins = spec.pins.filter((pin) => pin.pin !== "9");
    spec.heater = { volts: 12.6, amps: 0.15 };
    expect(problemsOf(spec).join("\n")).toMatch(/pin 9 of the B9A base is missing/);
  });
  it("reports a pin the base does not have, but allows a top cap", () => {
    const spec = twinTriode();
    spec.pins.push({ pin: "10", element: "nc" });
    expect(problemsOf(spec).join("\n")).toMatch(/pin 10 is not a pin of the B9A base/);
    const capped = pentode();
    capped.pins.push({ pin: "cap", element: "nc" });
    expect(problemsOf(capped)).toEqual([]);
  });
});

describe("sections complete", () => {
  it("reports a triode section without a cathode", () => {
    const spec = twinTriode();
    spec.pins[2] = { pin: "3", element: "nc" };
    expect(problemsOf(spec).join("\n")).toMatch(/section 2 \(triode\) lacks k/);
  });
  it("accepts a cathode shared by every section (no section number)", () => {
    const spec = twinTriode();
    spec.pins[2] = { pin: "3", element: "k" };
    spec.pins[7] = { pin: "8", element: "nc" };
    expect(problemsOf(spec)).toEqual([]);
  });
  it("reports a pentode without g3 unless the notes describe it", () => {
    const spec = pentode();
    spec.pins[1] = { pin: "2", element: "nc" };
    expect(problemsOf(spec).join("\n")).toMatch(/section 1 \(pentode\) lacks g3/);
    expect(problemsOf({ ...spec, notes: "g3 is joined to the cathode inside." })).toEqual([]);
  });
  it("reports a pentode without a screen grid", () => {
    const spec = pentode();
    spec.pins[5] = { pin: "6", element: "nc" };
    expect(problemsOf(spec).join("\n")).toMatch(/section 1 \(pentode\) lacks g2/);
  });
  it("reports a diode without a plate", () => {
    const spec: TubeTypeSpec = {
      ...pentode({ designation: "TEST4", class: "diode" }),
      pins: [
        { pin: "1", element: "k", section: 1 },
        { pin: "2", element: "nc" },
        { pin: "3", element: "h" },
        { pin: "4", element: "h" },
        { pin: "5", element: "nc" },
        { pin: "6", element: "nc" },
        { pin: "7", element: "nc" },
      ],
      sections: [{ index: 1, kind: "diode", typical: [] }],
      maxRatings: {},
      sources: { pins: "from memory", heater: "from memory" },
    };
    expect(problemsOf(spec).join("\n")).toMatch(/section 1 \(diode\) lacks a/);
  });
  it("requires filament pins, not a cathode, on a directly heated type", () => {
    const spec = twinTriode({ heater: { volts: 5, amps: 2, directlyHeated: true } });
    const text = problemsOf(spec).join("\n");
    expect(text).toMatch(/section 1 \(triode\) lacks f/);
    expect(text).toMatch(/directly heated type needs two filament \(f\) pins/);
    expect(text).toMatch(/directly heated type has no separate cathode/);
  });
});

describe("heater", () => {
  it("reports filament pins on an indirectly heated type", () => {
    const spec = pentode();
    spec.pins[2] = { pin: "3", element: "f" };
    const text = problemsOf(spec).join("\n");
    expect(text).toMatch(/needs two heater \(h\) pins/);
    expect(text).toMatch(/uses h and hct, not f and fct/);
  });
  it("reports a 0 V heater on a type that is not cold-cathode", () => {
    expect(problemsOf(pentode({ heater: { volts: 0, amps: 0 } })).join("\n")).toMatch(/only cold-cathode regulators and thyratrons/);
  });
  it("reports a centre tap without its pin", () => {
    const spec = twinTriode();
    spec.pins[8] = { pin: "9", element: "nc" };
    expect(problemsOf(spec).join("\n")).toMatch(/heater.centreTap is given but no pin is hct or fct/);
  });
  it("reports halves that do not add up to the whole heater", () => {
    const spec = twinTriode({ heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.45 } } } });
    expect(problemsOf(spec).join("\n")).toMatch(/heater half amps 0.45 is not twice 0.15/);
  });
});

describe("class", () => {
  it("reports a class that does not match the sections", () => {
    expect(problemsOf(twinTriode({ class: "triode" })).join("\n")).toMatch(/class triode needs one triode, but the sections are triode, triode/);
  });
});

describe("typical operating points", () => {
  it("reports a point that dissipates more than the maximum plate watts", () => {
    const spec = twinTriode({ maxRatings: { plateWatts: 2 } });
    // 250 V × 10.5 mA = 2.625 W > 2 W
    expect(problemsOf(spec).join("\n")).toMatch(/dissipates 2.63 W at the plate, above the maximum 2 W/);
  });
  it("allows a point on the limit within the rounding allowance", () => {
    // 250 V × 10.5 mA = 2.625 W, within 2 % of 2.6 W
    expect(problemsOf(twinTriode({ maxRatings: { plateWatts: 2.6 } }))).toEqual([]);
  });
  it("reports a point above the maximum plate volts", () => {
    expect(problemsOf(twinTriode({ maxRatings: { plateVolts: 200 } })).join("\n")).toMatch(/250 V on the plate, above the maximum 200 V/);
  });
  it("reports µ far from gm·rp (Barkhausen)", () => {
    const spec = twinTriode();
    // gm typed in mA/V by mistake: 2.2 × 7700 / 1e6 ≈ 0.017, nowhere near µ = 17
    spec.sections[0].typical[0].transconductanceMicroSiemens = 2.2;
    expect(problemsOf(spec).join("\n")).toMatch(/differs from µ = 17 by more than 15 % \(Barkhausen/);
  });
  it("accepts µ within 15 % of gm·rp", () => {
    const spec = twinTriode();
    // 2200 µS × 8800 Ω = 19.36, 13.9 % above µ = 17: arithmetic on the invented fixture
    spec.sections[0].typical[0].plateResistanceOhms = 8800;
    expect(problemsOf(spec)).toEqual([]);
  });
  it("reports a pentode point without screen volts", () => {
    const spec = pentode();
    delete spec.sections[0].typical[0].screenVolts;
    expect(problemsOf(spec).join("\n")).toMatch(/typical point 0 of a pentode needs screenVolts/);
  });
});

describe("sources", () => {
  it("reports a value group without a source", () => {
    const spec = twinTriode({ sources: { aliases: "from memory", pins: "from memory", maxRatings: "from memory", "sections.1.typical.0": "from memory" } });
    expect(problemsOf(spec).join("\n")).toMatch(/no source for heater/);
  });
  it("reports a source naming a field that has no value", () => {
    const spec = twinTriode();
    spec.sources["maxRatings.screenVolts"] = "from memory";
    spec.sources["sections.2.typical.0"] = "from memory";
    const text = problemsOf(spec).join("\n");
    expect(text).toMatch(/sources names maxRatings.screenVolts, which has no value/);
    expect(text).toMatch(/sources names sections.2.typical.0, which has no value/);
  });
  it("accepts per-field keys in place of a group key", () => {
    const spec = twinTriode();
    delete spec.sources.maxRatings;
    spec.sources["maxRatings.plateVolts"] = "from memory";
    expect(problemsOf(spec).join("\n")).toMatch(/no source for maxRatings.plateWatts/);
    spec.sources["maxRatings.plateWatts"] = "from memory";
    expect(problemsOf(spec)).toEqual([]);
  });
});

// Invented test shapes (like the fixtures above): a heptode, a glow regulator and a display.
/** The pentode fixture rewired as a pentagrid converter: signal grid g3 on pin 1, g4 and g5 joined inside. */
function heptode(overrides: Partial<TubeTypeSpec> = {}): TubeTypeSpec {
  return pentode({
    designation: "TEST3",
    class: "heptode",
    pins: pentode().pins.map((pin) => (pin.pin === "1" ? { ...pin, element: "g3" } : pin.pin === "2" ? { ...pin, element: "g1" } : pin)),
    sections: [{ index: 1, kind: "heptode", typical: [{ plateVolts: 250, gridVolts: -1.5, screenVolts: 100, plateMilliamps: 3 }] }],
    notes: "g4 is joined to g2 inside and g5 to the cathode.",
    ...overrides,
  });
}

function glowRegulator(overrides: Partial<TubeTypeSpec> = {}): TubeTypeSpec {
  return {
    designation: "TEST4",
    aliases: [],
    class: "voltage-regulator",
    base: "B7G",
    pins: [
      { pin: "1", element: "a", section: 1 },
      { pin: "2", element: "k", section: 1 },
      { pin: "3", element: "nc" },
      { pin: "4", element: "nc" },
      { pin: "5", element: "nc" },
      { pin: "6", element: "nc" },
      { pin: "7", element: "nc" },
    ],
    sections: [{ index: 1, kind: "regulator", typical: [], glow: { operatingVolts: 150, strikingVolts: 185, minMilliamps: 5, maxMilliamps: 30 } }],
    heater: { volts: 0, amps: 0, coldCathode: true },
    maxRatings: { outputMilliamps: 30 },
    sources: { pins: "from memory", heater: "from memory", maxRatings: "from memory", "sections.1.glow": "from memory" },
    ...overrides,
  };
}

describe("heptodes, regulators, displays and per-section ratings", () => {
  it("accepts a heptode whose g4 and g5 are described in notes, and reports them missing otherwise", () => {
    expect(problemsOf(heptode())).toEqual([]);
    expect(problemsOf(heptode({ notes: "" })).join("\n")).toMatch(/section 1 \(heptode\) lacks g4 \(on a pin, or described in notes when joined inside\), g5/);
  });
  it("requires glow data on a regulator section, within the output rating", () => {
    expect(problemsOf(glowRegulator())).toEqual([]);
    const withoutGlow = glowRegulator();
    delete withoutGlow.sections[0].glow;
    delete withoutGlow.sources["sections.1.glow"];
    expect(problemsOf(withoutGlow).join("\n")).toMatch(/needs glow data: operating and striking volts, current range/);
    const overRated = glowRegulator({ maxRatings: { outputMilliamps: 20 } });
    expect(problemsOf(overRated).join("\n")).toMatch(/regulates up to 30 mA, above the maximum output 20 mA/);
  });
  it("checks typical points against a section's own ratings and wants them sourced", () => {
    const spec = twinTriode();
    spec.sections[0].maxRatings = { plateWatts: 2 };
    // 250 V × 10.5 mA = 2.625 W against the section's own 2 W (arithmetic)
    const text = problemsOf(spec).join("\n");
    expect(text).toMatch(/section 1 typical point 0 dissipates 2.63 W at the plate, above the maximum 2 W/);
    expect(text).toMatch(/no source for sections.1.maxRatings.plateWatts/);
  });
  it("wants every segment of a multi-segment display labelled", () => {
    const display: TubeTypeSpec = {
      designation: "TEST5",
      aliases: [],
      class: "vacuum-fluorescent",
      base: "subminiature",
      pins: [
        { pin: "fil-1", element: "f" },
        { pin: "fil-2", element: "f" },
        { pin: "grid", element: "g1" },
        { pin: "seg-a", element: "a", section: 1 },
        { pin: "seg-b", element: "a", section: 2 },
      ],
      sections: [
        { index: 1, kind: "indicator", label: "segment a", typical: [] },
        { index: 2, kind: "indicator", typical: [] },
      ],
      heater: { volts: 1, amps: 0.05, directlyHeated: true },
      maxRatings: {},
      sources: { pins: "from memory", heater: "from memory" },
    };
    expect(problemsOf(display)).toEqual(["TEST5: section 2 needs a label: the segments of a display are not interchangeable"]);
  });
});
