/**
 * Tube types for the substitution tests, written from datasheet values. Each value names the
 * data sheet it comes from; every one is recalled, not copied from a document at hand, so each
 * says "from memory". Values marked "low confidence" are not used for any check value.
 */
import type { PinAssignment, TubeTypeSpec } from "../../../server/engine/tube-types/index.ts";

// ── Basings ──────────────────────────────────────────────────────────────────────────────────

/**
 * EIA basing 9A (noval dual triode, centre-tapped heater): 1 plate 2, 2 grid 2, 3 cathode 2,
 * 4 and 5 heater ends, 6 plate 1, 7 grid 1, 8 cathode 1, 9 heater centre tap.
 * Source: RCA 12AU7 / 12AX7 / 12AT7 data sheets, basing diagram 9A (from memory).
 */
function basing9A(): PinAssignment[] {
  return [
    { pin: "1", element: "a", section: 2 },
    { pin: "2", element: "g1", section: 2 },
    { pin: "3", element: "k", section: 2 },
    { pin: "4", element: "h" },
    { pin: "5", element: "h" },
    { pin: "6", element: "a", section: 1 },
    { pin: "7", element: "g1", section: 1 },
    { pin: "8", element: "k", section: 1 },
    { pin: "9", element: "hct" },
  ];
}

/**
 * EIA basing 9AJ (noval dual triode, plain heater, internal shield): electrodes on the same
 * pins as 9A, heater across 4–5 only, pin 9 the internal shield between the sections.
 * Source: RCA 6CG7 and 6DJ8 data sheets, basing diagram 9AJ (from memory).
 */
function basing9AJ(): PinAssignment[] {
  return [
    { pin: "1", element: "a", section: 2 },
    { pin: "2", element: "g1", section: 2 },
    { pin: "3", element: "k", section: 2 },
    { pin: "4", element: "h" },
    { pin: "5", element: "h" },
    { pin: "6", element: "a", section: 1 },
    { pin: "7", element: "g1", section: 1 },
    { pin: "8", element: "k", section: 1 },
    { pin: "9", element: "s" },
  ];
}

/**
 * EIA basing 8BD (octal dual triode): 1 grid 2, 2 plate 2, 3 cathode 2, 4 grid 1, 5 plate 1,
 * 6 cathode 1, 7 and 8 heater. Source: RCA 6SN7GT data sheet, basing 8BD (from memory).
 */
function basing8BD(): PinAssignment[] {
  return [
    { pin: "1", element: "g1", section: 2 },
    { pin: "2", element: "a", section: 2 },
    { pin: "3", element: "k", section: 2 },
    { pin: "4", element: "g1", section: 1 },
    { pin: "5", element: "a", section: 1 },
    { pin: "6", element: "k", section: 1 },
    { pin: "7", element: "h" },
    { pin: "8", element: "h" },
  ];
}

/**
 * EIA basing 7BK (miniature pentode): 1 grid 1, 2 grid 3 (and internal shield), 3 and 4 heater,
 * 5 plate, 6 grid 2, 7 cathode. Source: RCA 6AU6 and 6BA6 data sheets, basing 7BK (from memory).
 */
function basing7BK(): PinAssignment[] {
  return [
    { pin: "1", element: "g1", section: 1 },
    { pin: "2", element: "g3", section: 1 },
    { pin: "3", element: "h" },
    { pin: "4", element: "h" },
    { pin: "5", element: "a", section: 1 },
    { pin: "6", element: "g2", section: 1 },
    { pin: "7", element: "k", section: 1 },
  ];
}

// ── Noval dual triodes, basing 9A ────────────────────────────────────────────────────────────

export const tube12AU7: TubeTypeSpec = {
  designation: "12AU7",
  aliases: ["ECC82", "12AU7A"],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9A",
  pins: basing9A(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    typical: [
      // RCA 12AU7 data sheet, class A1 amplifier, each unit (from memory)
      { plateVolts: 250, gridVolts: -8.5, plateMilliamps: 10.5, transconductanceMicroSiemens: 2200, mu: 17, plateResistanceOhms: 7700 },
      // RCA 12AU7 data sheet, class A1 amplifier at 100 V (from memory)
      { plateVolts: 100, gridVolts: 0, plateMilliamps: 11.8, transconductanceMicroSiemens: 3100, mu: 19.5, plateResistanceOhms: 6250 },
    ],
  })),
  // RCA 12AU7 data sheet: 12.6 V 0.15 A series, 6.3 V 0.3 A parallel (from memory)
  heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } },
  // RCA 12AU7 data sheet, design-centre maxima per unit: 300 V, 2.75 W, 20 mA cathode, 200 V heater–cathode (from memory)
  maxRatings: { plateVolts: 300, plateWatts: 2.75, cathodeMilliamps: 20, heaterCathodeVolts: 200 },
  sources: {
    pins: "RCA 12AU7 data sheet, basing 9A (from memory)",
    heater: "RCA 12AU7 data sheet (from memory)",
    maxRatings: "RCA 12AU7 data sheet, design-centre maxima (from memory)",
    sections: "RCA 12AU7 data sheet, class A1 characteristics (from memory)",
    aliases: "Pro Electron ECC82; 12AU7A is the later uprated issue (from memory)",
  },
};

export const tube12AX7: TubeTypeSpec = {
  designation: "12AX7",
  aliases: ["ECC83", "12AX7A"],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9A",
  pins: basing9A(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    typical: [
      // RCA 12AX7 data sheet, class A1 amplifier at 250 V (from memory)
      { plateVolts: 250, gridVolts: -2, plateMilliamps: 1.2, transconductanceMicroSiemens: 1600, mu: 100, plateResistanceOhms: 62500 },
      // RCA 12AX7 data sheet, class A1 amplifier at 100 V (from memory)
      { plateVolts: 100, gridVolts: -1, plateMilliamps: 0.5, transconductanceMicroSiemens: 1250, mu: 100, plateResistanceOhms: 80000 },
    ],
  })),
  // RCA 12AX7 data sheet: same heater arrangement as 12AU7 (from memory)
  heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } },
  // RCA 12AX7 data sheet, design-centre maxima: 300 V, 1 W per unit, 180 V heater–cathode (from memory)
  maxRatings: { plateVolts: 300, plateWatts: 1, heaterCathodeVolts: 180 },
  sources: {
    pins: "RCA 12AX7 data sheet, basing 9A (from memory)",
    heater: "RCA 12AX7 data sheet (from memory)",
    maxRatings: "RCA 12AX7 data sheet (from memory)",
    sections: "RCA 12AX7 data sheet, class A1 characteristics (from memory)",
    aliases: "Pro Electron ECC83 (from memory)",
  },
};

export const tube12AT7: TubeTypeSpec = {
  designation: "12AT7",
  aliases: ["ECC81"],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9A",
  pins: basing9A(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    typical: [
      // RCA 12AT7 data sheet, class A1 amplifier at 250 V, 200 Ω cathode resistor (from memory)
      { plateVolts: 250, gridVolts: -2, plateMilliamps: 10, transconductanceMicroSiemens: 5500, mu: 60, plateResistanceOhms: 10900, cathodeResistorOhms: 200 },
      // RCA 12AT7 data sheet, class A1 amplifier at 100 V, 270 Ω cathode resistor (≈ −1 V) (from memory)
      { plateVolts: 100, gridVolts: -1, plateMilliamps: 3.7, transconductanceMicroSiemens: 4000, mu: 62, plateResistanceOhms: 15000, cathodeResistorOhms: 270 },
    ],
  })),
  // RCA 12AT7 data sheet: 12.6 V 0.15 A / 6.3 V 0.3 A (from memory)
  heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } },
  // RCA 12AT7 data sheet, design-centre maxima: 300 V, 2.5 W per unit, 90 V heater–cathode (from memory)
  maxRatings: { plateVolts: 300, plateWatts: 2.5, heaterCathodeVolts: 90 },
  sources: {
    pins: "RCA 12AT7 data sheet, basing 9A (from memory)",
    heater: "RCA 12AT7 data sheet (from memory)",
    maxRatings: "RCA 12AT7 data sheet (from memory)",
    sections: "RCA 12AT7 data sheet, class A1 characteristics (from memory)",
    aliases: "Pro Electron ECC81 (from memory)",
  },
};

export const tube5814A: TubeTypeSpec = {
  designation: "5814A",
  aliases: [],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9A",
  pins: basing9A(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // 5814A data sheet (GE), class A1 amplifier: same point as 12AU7 (from memory)
    typical: [{ plateVolts: 250, gridVolts: -8.5, plateMilliamps: 10.5, transconductanceMicroSiemens: 2200, mu: 17, plateResistanceOhms: 7700 }],
  })),
  // 5814A data sheet (GE): 12.6 V 0.175 A / 6.3 V 0.35 A (from memory)
  heater: { volts: 12.6, amps: 0.175, centreTap: { half: { volts: 6.3, amps: 0.35 } } },
  // 5814A data sheet (GE): 330 V, 3.3 W per unit, 200 V heater–cathode (from memory, low confidence on the watts)
  maxRatings: { plateVolts: 330, plateWatts: 3.3, heaterCathodeVolts: 200 },
  variantOf: "12AU7",
  notes: "Ruggedized, long-life version of the 12AU7 with a heavier heater.",
  sources: {
    pins: "GE 5814A data sheet, basing 9A (from memory)",
    heater: "GE 5814A data sheet (from memory)",
    maxRatings: "GE 5814A data sheet (from memory, watts low confidence)",
    sections: "GE 5814A data sheet (from memory)",
  },
};

export const tube12BH7: TubeTypeSpec = {
  designation: "12BH7",
  aliases: ["12BH7A"],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9A",
  pins: basing9A(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // RCA 12BH7A data sheet, class A1 amplifier (from memory)
    typical: [{ plateVolts: 250, gridVolts: -10.5, plateMilliamps: 11.5, transconductanceMicroSiemens: 3100, mu: 16.5, plateResistanceOhms: 5300 }],
  })),
  // RCA 12BH7A data sheet: 12.6 V 0.3 A / 6.3 V 0.6 A (from memory)
  heater: { volts: 12.6, amps: 0.3, centreTap: { half: { volts: 6.3, amps: 0.6 } } },
  // RCA 12BH7A data sheet: 300 V, 3.5 W per unit, 200 V heater–cathode (from memory)
  maxRatings: { plateVolts: 300, plateWatts: 3.5, heaterCathodeVolts: 200 },
  sources: {
    pins: "RCA 12BH7A data sheet, basing 9A (from memory)",
    heater: "RCA 12BH7A data sheet (from memory)",
    maxRatings: "RCA 12BH7A data sheet (from memory)",
    sections: "RCA 12BH7A data sheet (from memory)",
    aliases: "from memory",
  },
};

export const tube5965: TubeTypeSpec = {
  designation: "5965",
  aliases: [],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9A",
  pins: basing9A(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // 5965 data sheet (computer-service twin triode), typical operation (from memory, low confidence)
    typical: [{ plateVolts: 150, gridVolts: -2, plateMilliamps: 8.2, transconductanceMicroSiemens: 6500, mu: 47, plateResistanceOhms: 7250 }],
  })),
  // 5965 data sheet: 12.6 V 0.225 A / 6.3 V 0.45 A (from memory, low confidence)
  heater: { volts: 12.6, amps: 0.225, centreTap: { half: { volts: 6.3, amps: 0.45 } } },
  // 5965 data sheet: 330 V, 2.2 W per unit (from memory, low confidence)
  maxRatings: { plateVolts: 330, plateWatts: 2.2 },
  notes: "Computer-service twin triode; values low confidence and not used for check values.",
  sources: {
    pins: "5965 data sheet, basing 9A (from memory)",
    heater: "5965 data sheet (from memory, low confidence)",
    maxRatings: "5965 data sheet (from memory, low confidence)",
    sections: "5965 data sheet (from memory, low confidence)",
  },
};

// ── Noval dual triodes, basing 9AJ ───────────────────────────────────────────────────────────

export const tube6CG7: TubeTypeSpec = {
  designation: "6CG7",
  aliases: ["6FQ7"],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9AJ",
  pins: basing9AJ(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // RCA 6CG7 data sheet, class A1 amplifier: the 6SN7GT point in a noval envelope (from memory)
    typical: [{ plateVolts: 250, gridVolts: -8, plateMilliamps: 9, transconductanceMicroSiemens: 2600, mu: 20, plateResistanceOhms: 7700 }],
  })),
  // RCA 6CG7 data sheet: 6.3 V 0.6 A, controlled warm-up 11 s for series strings (from memory)
  heater: { volts: 6.3, amps: 0.6, warmUpSeconds: 11 },
  // RCA 6CG7 data sheet: 330 V, 3.5 W per unit, 200 V heater–cathode (from memory)
  maxRatings: { plateVolts: 330, plateWatts: 3.5, heaterCathodeVolts: 200 },
  sources: {
    pins: "RCA 6CG7 data sheet, basing 9AJ (from memory)",
    heater: "RCA 6CG7 data sheet (from memory)",
    maxRatings: "RCA 6CG7 data sheet (from memory)",
    sections: "RCA 6CG7 data sheet (from memory)",
    aliases: "6FQ7 is the later issue of the same design (from memory)",
  },
};

export const tube6DJ8: TubeTypeSpec = {
  designation: "6DJ8",
  aliases: ["ECC88"],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9AJ",
  pins: basing9AJ(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // Amperex 6DJ8 data sheet, typical characteristics (from memory)
    typical: [{ plateVolts: 90, gridVolts: -1.3, plateMilliamps: 15, transconductanceMicroSiemens: 12500, mu: 33, plateResistanceOhms: 2640 }],
  })),
  // Amperex 6DJ8 data sheet: 6.3 V 0.365 A (from memory)
  heater: { volts: 6.3, amps: 0.365 },
  // Amperex 6DJ8 data sheet: 130 V plate, 1.8 W per unit, 25 mA cathode (from memory)
  maxRatings: { plateVolts: 130, plateWatts: 1.8, cathodeMilliamps: 25 },
  sources: {
    pins: "Amperex 6DJ8 data sheet, basing 9AJ (from memory)",
    heater: "Amperex 6DJ8 data sheet (from memory)",
    maxRatings: "Amperex 6DJ8 data sheet (from memory)",
    sections: "Amperex 6DJ8 data sheet (from memory)",
    aliases: "Pro Electron ECC88 (from memory)",
  },
};

export const tube6922: TubeTypeSpec = {
  designation: "6922",
  aliases: ["E88CC"],
  class: "dual-triode",
  base: "B9A",
  basingCode: "9AJ",
  pins: basing9AJ(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // Amperex 6922 data sheet, typical characteristics: as 6DJ8 (from memory)
    typical: [{ plateVolts: 90, gridVolts: -1.3, plateMilliamps: 15, transconductanceMicroSiemens: 12500, mu: 33, plateResistanceOhms: 2640 }],
  })),
  // Amperex 6922 data sheet: 6.3 V 0.3 A (from memory)
  heater: { volts: 6.3, amps: 0.3 },
  // Amperex 6922 data sheet: 220 V plate, 1.5 W per unit, 22 mA cathode (from memory)
  maxRatings: { plateVolts: 220, plateWatts: 1.5, cathodeMilliamps: 22 },
  variantOf: "6DJ8",
  notes: "Special-quality, long-life version of the 6DJ8.",
  sources: {
    pins: "Amperex 6922 data sheet, basing 9AJ (from memory)",
    heater: "Amperex 6922 data sheet (from memory)",
    maxRatings: "Amperex 6922 data sheet (from memory)",
    sections: "Amperex 6922 data sheet (from memory)",
    aliases: "Pro Electron E88CC (from memory)",
  },
};

// ── Octal and loctal dual triodes ────────────────────────────────────────────────────────────

export const tube6SN7GT: TubeTypeSpec = {
  designation: "6SN7GT",
  aliases: ["6SN7"],
  class: "dual-triode",
  base: "octal",
  basingCode: "8BD",
  pins: basing8BD(),
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // RCA 6SN7GT data sheet, class A1 amplifier (from memory)
    typical: [{ plateVolts: 250, gridVolts: -8, plateMilliamps: 9, transconductanceMicroSiemens: 2600, mu: 20, plateResistanceOhms: 7700 }],
  })),
  // RCA 6SN7GT data sheet: 6.3 V 0.6 A (from memory)
  heater: { volts: 6.3, amps: 0.6 },
  // RCA 6SN7GT data sheet: 450 V, 3.5 W per unit, 200 V heater–cathode (from memory)
  maxRatings: { plateVolts: 450, plateWatts: 3.5, heaterCathodeVolts: 200 },
  sources: {
    pins: "RCA 6SN7GT data sheet, basing 8BD (from memory)",
    heater: "RCA 6SN7GT data sheet (from memory)",
    maxRatings: "RCA 6SN7GT data sheet (from memory)",
    sections: "RCA 6SN7GT data sheet (from memory)",
    aliases: "from memory",
  },
};

export const tube7N7: TubeTypeSpec = {
  designation: "7N7",
  aliases: [],
  class: "dual-triode",
  base: "loctal",
  basingCode: "8AC",
  // Sylvania 7N7 data sheet, basing 8AC: 1 heater, 2 plate 2, 3 grid 2, 4 cathode 2, 5 cathode 1, 6 grid 1, 7 plate 1, 8 heater (from memory, low confidence)
  pins: [
    { pin: "1", element: "h" },
    { pin: "2", element: "a", section: 2 },
    { pin: "3", element: "g1", section: 2 },
    { pin: "4", element: "k", section: 2 },
    { pin: "5", element: "k", section: 1 },
    { pin: "6", element: "g1", section: 1 },
    { pin: "7", element: "a", section: 1 },
    { pin: "8", element: "h" },
  ],
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    // Sylvania 7N7 data sheet, class A1 amplifier: the 6SN7GT point (from memory)
    typical: [{ plateVolts: 250, gridVolts: -8, plateMilliamps: 9, transconductanceMicroSiemens: 2600, mu: 20, plateResistanceOhms: 7700 }],
  })),
  // Sylvania 7N7 data sheet: 6.3 V 0.6 A (from memory)
  heater: { volts: 6.3, amps: 0.6 },
  // Sylvania 7N7 data sheet: 300 V, 2.5 W per unit (from memory)
  maxRatings: { plateVolts: 300, plateWatts: 2.5 },
  sources: {
    pins: "Sylvania 7N7 data sheet, basing 8AC (from memory, low confidence)",
    heater: "Sylvania 7N7 data sheet (from memory)",
    maxRatings: "Sylvania 7N7 data sheet (from memory)",
    sections: "Sylvania 7N7 data sheet (from memory)",
  },
};

// ── Miniature pentodes, basing 7BK ───────────────────────────────────────────────────────────

export const tube6AU6: TubeTypeSpec = {
  designation: "6AU6",
  aliases: ["6AU6A", "EF94"],
  class: "pentode",
  base: "B7G",
  basingCode: "7BK",
  pins: basing7BK(),
  sections: [
    {
      index: 1,
      kind: "pentode",
      // RCA 6AU6A data sheet, class A1 amplifier, 68 Ω cathode resistor; rp "1 MΩ approx." (from memory)
      typical: [{ plateVolts: 250, gridVolts: -1, screenVolts: 150, plateMilliamps: 10.6, screenMilliamps: 4.3, transconductanceMicroSiemens: 5200, plateResistanceOhms: 1_000_000, cathodeResistorOhms: 68 }],
    },
  ],
  // RCA 6AU6A data sheet: 6.3 V 0.3 A (from memory)
  heater: { volts: 6.3, amps: 0.3 },
  // RCA 6AU6A data sheet: 330 V plate, 3.5 W plate (from memory)
  maxRatings: { plateVolts: 330, plateWatts: 3.5 },
  sources: {
    pins: "RCA 6AU6A data sheet, basing 7BK (from memory)",
    heater: "RCA 6AU6A data sheet (from memory)",
    maxRatings: "RCA 6AU6A data sheet (from memory)",
    sections: "RCA 6AU6A data sheet (from memory)",
    aliases: "Pro Electron EF94 (from memory)",
  },
};

export const tube6BA6: TubeTypeSpec = {
  designation: "6BA6",
  aliases: ["EF93"],
  class: "pentode",
  base: "B7G",
  basingCode: "7BK",
  pins: basing7BK(),
  sections: [
    {
      index: 1,
      kind: "pentode",
      // RCA 6BA6 data sheet, class A1 amplifier, 68 Ω cathode resistor, remote cut-off (from memory)
      typical: [{ plateVolts: 250, gridVolts: -1, screenVolts: 100, plateMilliamps: 11, screenMilliamps: 4.2, transconductanceMicroSiemens: 4400, plateResistanceOhms: 1_000_000, cathodeResistorOhms: 68 }],
    },
  ],
  // RCA 6BA6 data sheet: 6.3 V 0.3 A (from memory)
  heater: { volts: 6.3, amps: 0.3 },
  // RCA 6BA6 data sheet: 300 V plate, 3 W plate (from memory)
  maxRatings: { plateVolts: 300, plateWatts: 3 },
  sources: {
    pins: "RCA 6BA6 data sheet, basing 7BK (from memory)",
    heater: "RCA 6BA6 data sheet (from memory)",
    maxRatings: "RCA 6BA6 data sheet (from memory)",
    sections: "RCA 6BA6 data sheet (from memory)",
    aliases: "Pro Electron EF93 (from memory)",
  },
};

// ── Constructed case ─────────────────────────────────────────────────────────────────────────

/**
 * Not a real type: a 12AU7 electrode map with pin 9 an internal connection and a plain 6.3 V
 * 0.3 A heater across 4–5, constructed to exercise the internal-connection rule.
 */
export const constructedInternalConnectionTriode: TubeTypeSpec = {
  designation: "TEST-IC9",
  aliases: [],
  class: "dual-triode",
  base: "B9A",
  pins: [...basing9A().slice(0, 8), { pin: "9", element: "ic" }],
  sections: tube12AU7.sections,
  heater: { volts: 6.3, amps: 0.3 },
  maxRatings: { plateVolts: 300, plateWatts: 2.75 },
  sources: { pins: "constructed test case", heater: "constructed test case", maxRatings: "constructed test case", sections: "copied from the 12AU7 fixture" },
  userAdded: true,
};

/** Every real type above, in one library. */
export const fixtureLibrary: TubeTypeSpec[] = [
  tube12AU7,
  tube12AX7,
  tube12AT7,
  tube5814A,
  tube12BH7,
  tube5965,
  tube6CG7,
  tube6DJ8,
  tube6922,
  tube6SN7GT,
  tube7N7,
  tube6AU6,
  tube6BA6,
];
