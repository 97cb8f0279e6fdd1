import { describe, expect, it } from "vitest";
import {
  convertQuantity,
  formatQuantity,
  formatTransconductance,
  fromMicroSiemens,
  MAX_TRANSCONDUCTANCE_MICROSIEMENS,
  parseQuantity,
  parseTransconductance,
  toMicroSiemens,
} from "../../../server/engine/units/index.ts";
import type { QuantityDimension } from "../../../server/engine/units/index.ts";

function microSiemensOf(text: string, defaultUnit?: "uS" | "umho" | "mA/V"): number {
  const result = parseTransconductance(text, "Transconductance", defaultUnit);
  if (!result.ok) throw new Error(result.reason);
  return result.microSiemens;
}

function reasonOf(result: { ok: true } | { ok: false; reason: string }): string {
  if (result.ok) throw new Error("expected a rejection");
  return result.reason;
}

function valueOf(text: string, dimension: QuantityDimension, options = {}): number {
  const result = parseQuantity(text, dimension, "Field", options);
  if (!result.ok) throw new Error(result.reason);
  return result.value;
}

describe("parseTransconductance — SI facts", () => {
  it("treats µS, µmho and the ASCII spellings as the same unit", () => {
    // 1 µmho = 1 µS (fact of SI: 1 mho = 1 S)
    for (const text of ["2200 µS", "2200 uS", "2200 umho", "2200 µmho", "2200 μmho", "2200µS", "2200 micromhos"]) {
      expect(microSiemensOf(text)).toBe(2200);
    }
  });

  it("converts mA/V and mS to µS by a factor of 1000", () => {
    // 1 mA/V = 1 mS = 1000 µS (fact of SI)
    expect(microSiemensOf("2.2 mA/V")).toBeCloseTo(2200, 9);
    expect(microSiemensOf("2.2 mS")).toBeCloseTo(2200, 9);
    expect(microSiemensOf("1 mmho")).toBe(1000);
    expect(toMicroSiemens(1, "mA/V")).toBe(1000);
    expect(fromMicroSiemens(1000, "mA/V")).toBe(1);
    expect(fromMicroSiemens(2200, "umho")).toBe(2200);
  });

  it("reads whole siemens and A/V (fact of SI: 1 S = 1 A/V = 10^6 µS)", () => {
    expect(microSiemensOf("0.0022 S")).toBeCloseTo(2200, 9);
    expect(microSiemensOf("0.0022 A/V")).toBeCloseTo(2200, 9);
  });
});

describe("parseTransconductance — values from the trade", () => {
  it("reads published reference values in the units their sources print", () => {
    expect(microSiemensOf("2200 µmho")).toBe(2200); // RCA RC-30, 12AU7 at 250 V, −8.5 V
    expect(microSiemensOf("1600 µmho")).toBe(1600); // RCA RC-30, 12AX7 at 250 V, −2 V
    expect(microSiemensOf("4100 µmho")).toBe(4100); // RCA RC-30, 6V6GT at 250 V / 250 V screen, −12.5 V
    expect(microSiemensOf("11.3 mA/V")).toBeCloseTo(11300, 9); // Mullard EL84 data sheet, 250 V, −7.3 V
  });

  it("applies the default unit to a bare number", () => {
    expect(microSiemensOf("2200", "umho")).toBe(2200);
    expect(microSiemensOf("2200", "uS")).toBe(2200);
    expect(microSiemensOf("11.3", "mA/V")).toBeCloseTo(11300, 9); // Mullard EL84 data sheet
  });

  it("lets a typed unit win over the default unit", () => {
    expect(microSiemensOf("2.2 mA/V", "uS")).toBeCloseTo(2200, 9); // 1 mA/V = 1000 µS, SI
  });

  it("accepts zero (a dead section reads zero) and the upper bound itself", () => {
    expect(microSiemensOf("0 µS")).toBe(0);
    expect(microSiemensOf("100 mA/V")).toBe(MAX_TRANSCONDUCTANCE_MICROSIEMENS);
  });
});

describe("parseTransconductance — rejections name the field", () => {
  const cases: Array<[string, string]> = [
    ["2,2", "Transconductance: '2,2' is ambiguous — use a point for decimals"],
    ["2,200 µS", "is ambiguous"],
    ["2.2.0 mA/V", "more than one decimal point"],
    ["2 200 µS", "digits separated by a space"],
    ["2200", "has no unit"],
    ["2200 xS", "unknown unit 'xS'"],
    ["", "empty"],
    ["   ", "empty"],
    ["NaN", "not a number"],
    ["Infinity", "not a number"],
    ["abc", "not a number"],
    ["-2200 µS", "negative"],
    ["2.2 MS", "reads as mega"],
    ["2.2 MA/V", "reads as mega"],
    ["150 mA/V", "above 100000 µS"],
    ["1e400 µS", "too large"],
    ["2M2 µS", "unknown unit"],
  ];
  it.each(cases)("rejects %j", (text, fragment) => {
    const reason = reasonOf(parseTransconductance(text, "Transconductance"));
    expect(reason.startsWith("Transconductance: ")).toBe(true);
    expect(reason).toContain(fragment);
  });

  it("reports the slip of a mA/V figure typed into a µS field set to mA/V", () => {
    // 2200 "mA/V" would be 2.2 S: a factor-1000 unit slip, caught by the upper bound.
    expect(reasonOf(parseTransconductance("2200", "Section 1 gm", "mA/V"))).toContain("Section 1 gm: '2200' is above");
  });

  it("takes a tighter upper bound from options", () => {
    expect(reasonOf(parseTransconductance("20 mA/V", "Gm", undefined, { maxMicroSiemens: 15_000 }))).toContain("above");
  });

  it("rejects non-string input without throwing", () => {
    expect(reasonOf(parseTransconductance(undefined as unknown as string, "Gm"))).toBe("Gm: no value given");
  });
});

describe("parseQuantity — voltages", () => {
  it("reads V, mV, kV and signed bias", () => {
    expect(valueOf("250", "volts")).toBe(250);
    expect(valueOf("250 V", "volts")).toBe(250);
    expect(valueOf("250V", "volts")).toBe(250);
    expect(valueOf("250 volts", "volts")).toBe(250);
    expect(valueOf("250 mV", "volts")).toBeCloseTo(0.25, 12); // SI: m = 10^-3
    expect(valueOf("1.5 kV", "volts")).toBeCloseTo(1500, 9); // SI: k = 10^3
    expect(valueOf("1.5 KV", "volts")).toBeCloseTo(1500, 9); // trade spelling of kilo
    expect(valueOf("-8.5 V", "volts", { allowNegative: true })).toBe(-8.5); // RCA RC-30, 12AU7 bias
    expect(valueOf("\u22128.5 V", "volts", { allowNegative: true })).toBe(-8.5); // typographic minus
    expect(valueOf("+250 V", "volts")).toBe(250);
  });

  it("rejects a negative value unless the field allows it", () => {
    expect(reasonOf(parseQuantity("-8.5 V", "volts", "Plate voltage"))).toBe(
      "Plate voltage: '-8.5 V' is negative; this field takes values of zero or more",
    );
  });

  it("rejects a unit of another quantity, naming what it is", () => {
    expect(reasonOf(parseQuantity("10 mA", "volts", "Plate voltage"))).toBe(
      "Plate voltage: '10 mA' is a current; this field takes a voltage (mV, V or kV)",
    );
    expect(reasonOf(parseQuantity("1 kohm", "volts", "B+"))).toContain("is a resistance");
  });

  it("rejects a bare prefix and prefixes a voltage field does not use", () => {
    expect(reasonOf(parseQuantity("1.5k", "volts", "B+"))).toContain("needs a unit after 'k'");
    expect(reasonOf(parseQuantity("1 MV", "volts", "B+"))).toContain("unit 'MV' is not accepted here");
    expect(reasonOf(parseQuantity("2k5", "volts", "B+"))).toContain("is for resistors");
  });

  it("applies min and max given in the field's unit", () => {
    expect(valueOf("300 V", "volts", { max: 300 })).toBe(300);
    expect(reasonOf(parseQuantity("301 V", "volts", "Plate voltage", { max: 300 }))).toBe(
      "Plate voltage: '301 V' is above the limit of 300 V",
    );
    expect(reasonOf(parseQuantity("-60 V", "volts", "Negative rail", { allowNegative: true, min: -50 }))).toBe(
      "Negative rail: '-60 V' is below the limit of -50 V",
    );
    expect(reasonOf(parseQuantity("60 kV", "volts", "B+"))).toContain("above the limit of 50 kV");
  });
});

describe("parseQuantity — currents convert to the requested dimension", () => {
  it("reads mA, µA, nA and A (SI prefixes)", () => {
    expect(valueOf("10.5", "milliamps")).toBe(10.5); // RCA RC-30, 12AU7 plate current
    expect(valueOf("10.5 mA", "milliamps")).toBe(10.5);
    expect(valueOf("10.5ma", "milliamps")).toBe(10.5);
    expect(valueOf("2.5 mA", "microamps")).toBeCloseTo(2500, 9);
    expect(valueOf("50 nA", "microamps")).toBeCloseTo(0.05, 12);
    expect(valueOf("0.5 A", "milliamps")).toBeCloseTo(500, 9);
    expect(valueOf("300 µA", "milliamps")).toBeCloseTo(0.3, 12);
    expect(valueOf("300 uA", "amps")).toBeCloseTo(0.0003, 15);
    expect(valueOf("0.3 A", "amps")).toBe(0.3); // RCA RC-30, 12AU7 heater current with the halves in parallel at 6.3 V
  });

  it("rejects mega on a current", () => {
    expect(reasonOf(parseQuantity("1 MA", "milliamps", "Plate current"))).toContain("Plate current: unit 'MA'");
  });

  it("converts between current dimensions and refuses other pairs", () => {
    expect(convertQuantity(2.5, "milliamps", "microamps")).toBeCloseTo(2500, 9);
    expect(convertQuantity(1500, "microamps", "amps")).toBeCloseTo(0.0015, 15);
    expect(convertQuantity(2.5, "milliamps", "volts")).toBeNull();
  });
});

describe("parseQuantity — resistances and the m/M question", () => {
  it("reads Ω, k, K, M, meg and resistor marking", () => {
    expect(valueOf("470", "ohms")).toBe(470);
    expect(valueOf("470 Ω", "ohms")).toBe(470);
    expect(valueOf("470 \u2126", "ohms")).toBe(470); // ohm sign, U+2126
    expect(valueOf("470R", "ohms")).toBe(470);
    expect(valueOf("470 ohms", "ohms")).toBe(470);
    expect(valueOf("4.7k", "ohms")).toBeCloseTo(4700, 9);
    expect(valueOf("4.7K", "ohms")).toBeCloseTo(4700, 9);
    expect(valueOf("4.7 kΩ", "ohms")).toBeCloseTo(4700, 9);
    expect(valueOf("4.7 kohm", "ohms")).toBeCloseTo(4700, 9);
    expect(valueOf("4.7 kilohms", "ohms")).toBeCloseTo(4700, 9);
    expect(valueOf("4k7", "ohms")).toBeCloseTo(4700, 9);
    expect(valueOf("4k7Ω", "ohms")).toBeCloseTo(4700, 9);
    expect(valueOf("2R2", "ohms")).toBeCloseTo(2.2, 12);
    expect(valueOf("1M5", "ohms")).toBeCloseTo(1_500_000, 6);
    expect(valueOf("1M", "ohms")).toBe(1_000_000);
    expect(valueOf("1 MΩ", "ohms")).toBe(1_000_000);
    expect(valueOf("1 Mohm", "ohms")).toBe(1_000_000);
    expect(valueOf("1 meg", "ohms")).toBe(1_000_000);
    expect(valueOf("1MEG", "ohms")).toBe(1_000_000);
    expect(valueOf("2.2 megohms", "ohms")).toBeCloseTo(2_200_000, 6);
    expect(valueOf("10 GΩ", "ohms")).toBe(10_000_000_000);
  });

  it("rejects lowercase m on a resistance as a likely megohm typo", () => {
    for (const text of ["1m", "1 mΩ", "1mohm", "1 m ohm"]) {
      expect(reasonOf(parseQuantity(text, "ohms", "Grid leak"))).toBe(
        `Grid leak: '${text}' — lowercase m means milli; for megohms write M, MΩ or meg`,
      );
    }
  });

  it("rejects unknown units and ambiguous numbers", () => {
    expect(reasonOf(parseQuantity("4.7 kx", "ohms", "Plate load"))).toContain("unknown unit 'kx'");
    expect(reasonOf(parseQuantity("4,7k", "ohms", "Plate load"))).toContain("Plate load: '4,7k' is ambiguous");
    expect(reasonOf(parseQuantity("4.7.1k", "ohms", "Plate load"))).toContain("more than one decimal point");
    expect(reasonOf(parseQuantity("4.7k7", "ohms", "Plate load"))).toContain("unknown unit");
  });
});

describe("parseQuantity — watts", () => {
  it("reads W, mW, kW", () => {
    expect(valueOf("12 W", "watts")).toBe(12); // Mullard EL84 data sheet, maximum anode dissipation
    expect(valueOf("500 mW", "watts")).toBeCloseTo(0.5, 12);
    expect(valueOf("1.2 kW", "watts")).toBeCloseTo(1200, 9);
    expect(reasonOf(parseQuantity("3 V", "watts", "Plate dissipation"))).toContain("is a voltage");
  });

  it("rejects an unknown dimension without throwing", () => {
    expect(reasonOf(parseQuantity("3", "furlongs" as QuantityDimension, "Length"))).toContain("unknown dimension");
  });
});

describe("formatters", () => {
  it("formats transconductance in each unit", () => {
    expect(formatTransconductance(2200, "uS")).toBe("2200 µS");
    expect(formatTransconductance(2200, "umho")).toBe("2200 µmho");
    expect(formatTransconductance(2200, "mA/V")).toBe("2.2 mA/V"); // 1 mA/V = 1000 µS, SI
    expect(formatTransconductance(11300, "mA/V")).toBe("11.3 mA/V"); // Mullard EL84 data sheet
    expect(formatTransconductance(2215.4, "umho")).toBe("2215 µmho");
    expect(formatTransconductance(1234.5678, "mA/V")).toBe("1.235 mA/V");
    expect(formatTransconductance(null)).toBe("—");
    expect(formatTransconductance(Number.NaN)).toBe("—");
  });

  it("formats quantities with engineering prefixes", () => {
    expect(formatQuantity(4700, "ohms")).toBe("4.7 kΩ");
    expect(formatQuantity(1_000_000, "ohms")).toBe("1 MΩ");
    expect(formatQuantity(470, "ohms")).toBe("470 Ω");
    expect(formatQuantity(0.5, "ohms")).toBe("0.5 Ω"); // no milliohms, matching the parser
    expect(formatQuantity(250, "volts")).toBe("250 V");
    expect(formatQuantity(-8.5, "volts")).toBe("-8.5 V");
    expect(formatQuantity(0.25, "volts")).toBe("250 mV");
    expect(formatQuantity(1500, "volts")).toBe("1.5 kV");
    expect(formatQuantity(10.5, "milliamps")).toBe("10.5 mA");
    expect(formatQuantity(0.05, "milliamps")).toBe("50 µA");
    expect(formatQuantity(1500, "milliamps")).toBe("1.5 A");
    expect(formatQuantity(0.05, "microamps")).toBe("50 nA");
    expect(formatQuantity(0, "milliamps")).toBe("0 mA");
    expect(formatQuantity(12, "watts")).toBe("12 W");
    expect(formatQuantity(undefined, "watts")).toBe("—");
  });

  it("carries a rounded 1000 up to the next prefix", () => {
    expect(formatQuantity(999.96, "volts")).toBe("1 kV");
    expect(formatQuantity(999_999.9, "ohms")).toBe("1 MΩ");
  });

  it("takes the number of significant digits", () => {
    expect(formatQuantity(4712, "ohms", 2)).toBe("4.7 kΩ");
    expect(formatTransconductance(2215, "mA/V", 2)).toBe("2.2 mA/V");
  });

  it("round-trips through the parser", () => {
    const samples: Array<[number, QuantityDimension]> = [
      [4700, "ohms"],
      [1_000_000, "ohms"],
      [470, "ohms"],
      [250, "volts"],
      [0.25, "volts"],
      [10.5, "milliamps"],
      [0.05, "milliamps"],
      [3.5, "microamps"],
      [12, "watts"],
    ];
    for (const [value, dimension] of samples) {
      expect(valueOf(formatQuantity(value, dimension), dimension)).toBeCloseTo(value, 9);
    }
    for (const unit of ["uS", "umho", "mA/V"] as const) {
      expect(microSiemensOf(formatTransconductance(11300, unit))).toBeCloseTo(11300, 9);
    }
  });
});
