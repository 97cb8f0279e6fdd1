/**
 * Small tube types and stock for the build-check tests. Every datasheet value names its source
 * beside it; the readings of the invented stock tubes are invented for the scenarios.
 */
import type { TubeTypeSpec } from "../../../server/engine/tube-types/index.ts";
import type { AllocatedTube, AllocationSlot, BuildLinePlan, StockTube } from "../../../server/engine/build-check/index.ts";

const noval9APins: TubeTypeSpec["pins"] = [
  // 9A basing of the 12AU7 family (RCA RC-30 basing diagram 9A).
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

/** 12AU7: RCA RC-30 receiving tube manual — heater 12.6 V 0.15 A / 6.3 V 0.3 A; class A1 250 V, −8.5 V, 10.5 mA, 2200 µmho, µ 17. */
export const spec12AU7: TubeTypeSpec = {
  designation: "12AU7",
  aliases: ["ECC82"],
  class: "dual-triode",
  base: "B9A",
  pins: noval9APins,
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    typical: [{ plateVolts: 250, gridVolts: -8.5, plateMilliamps: 10.5, transconductanceMicroSiemens: 2200, mu: 17, plateResistanceOhms: 7700 }],
  })),
  heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } },
  maxRatings: { plateVolts: 300, plateWatts: 2.75 },
  sources: { heater: "RCA RC-30 receiving tube manual, 12AU7" },
};

/** 6SN7GT: RCA RC-30 — heater 6.3 V 0.6 A; class A1 250 V, −8 V, 9 mA, 2600 µmho, µ 20. Octal pins from the same manual. */
export const spec6SN7GT: TubeTypeSpec = {
  designation: "6SN7GT",
  aliases: [],
  class: "dual-triode",
  base: "octal",
  pins: [
    { pin: "1", element: "g1", section: 2 },
    { pin: "2", element: "a", section: 2 },
    { pin: "3", element: "k", section: 2 },
    { pin: "4", element: "g1", section: 1 },
    { pin: "5", element: "a", section: 1 },
    { pin: "6", element: "k", section: 1 },
    { pin: "7", element: "h" },
    { pin: "8", element: "h" },
  ],
  sections: [1, 2].map((index) => ({
    index,
    kind: "triode" as const,
    typical: [{ plateVolts: 250, gridVolts: -8, plateMilliamps: 9, transconductanceMicroSiemens: 2600, mu: 20, plateResistanceOhms: 7700 }],
  })),
  heater: { volts: 6.3, amps: 0.6 },
  maxRatings: { plateVolts: 450, plateWatts: 5 },
  sources: { heater: "RCA RC-30 receiving tube manual, 6SN7GT" },
};

/** 6AU6: RCA RC-30 — heater 6.3 V 0.3 A; pentode amplifier 250 V plate, 150 V screen, 68 Ω cathode, 10.6 mA plate, 4.3 mA screen, 5200 µmho. */
export const spec6AU6: TubeTypeSpec = {
  designation: "6AU6",
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
  sections: [{ index: 1, kind: "pentode", typical: [{ plateVolts: 250, gridVolts: -1, screenVolts: 150, plateMilliamps: 10.6, screenMilliamps: 4.3, transconductanceMicroSiemens: 5200 }] }],
  heater: { volts: 6.3, amps: 0.3 },
  maxRatings: { plateVolts: 300, plateWatts: 3.5 },
  sources: { heater: "RCA RC-30 receiving tube manual, 6AU6" },
};

/** 5Y3GT: RCA RC-30 — filament 5 V 2 A. */
export const spec5Y3GT: TubeTypeSpec = {
  designation: "5Y3GT",
  aliases: [],
  class: "rectifier",
  base: "octal",
  pins: [
    { pin: "2", element: "f" },
    { pin: "4", element: "a", section: 2 },
    { pin: "6", element: "a", section: 1 },
    { pin: "8", element: "f" },
  ],
  sections: [
    { index: 1, kind: "rectifier", typical: [] },
    { index: 2, kind: "rectifier", typical: [] },
  ],
  heater: { volts: 5, amps: 2, directlyHeated: true },
  maxRatings: {},
  sources: { heater: "RCA RC-30 receiving tube manual, 5Y3GT" },
};

/** 6CG7: the noval 6SN7 — heater 6.3 V 0.6 A; class A1 250 V, −8 V, 9 mA (RCA 6CG7 data, from memory). No Koren set in the model library. */
export const spec6CG7: TubeTypeSpec = {
  ...spec6SN7GT,
  designation: "6CG7",
  base: "B9A",
  pins: noval9APins.map((pin) => (pin.element === "hct" ? { pin: "9", element: "s" as const } : pin)),
  sources: { heater: "RCA 6CG7 data, from memory" },
};

/** 5963: no characteristics recorded (so no typical point and no Koren set); heater as the 12AU7 (from memory). */
export const spec5963: TubeTypeSpec = {
  ...spec12AU7,
  designation: "5963",
  aliases: [],
  sections: [1, 2].map((index) => ({ index, kind: "triode" as const, typical: [] })),
  maxRatings: {},
  sources: { heater: "from memory" },
};

export const library = [spec12AU7, spec6SN7GT, spec6AU6, spec5Y3GT, spec6CG7, spec5963];

export const GM_BASIS = "gm µS at 250 V / -8.5 V";

/** A good stock tube with the gm given per section (invented readings). */
export function stockTube(id: number, designation: string, gms: number[], extra: Partial<StockTube> = {}): StockTube {
  return {
    id,
    label: `T${String(id).padStart(3, "0")}`,
    designation,
    location: extra.location ?? `Drawer ${String.fromCharCode(65 + (id % 3))}`,
    verdict: "good",
    state: "stock",
    percentOfReference: 100,
    sections: gms.map((gm, index) => ({ section: index + 1, balanceValue: gm, balanceBasis: GM_BASIS })),
    ...extra,
  };
}

export function allocatedTube(tube: StockTube, allocationId: number, lineKey: string, slots: AllocationSlot[], extra: Partial<AllocatedTube> = {}): AllocatedTube {
  return { ...tube, state: "reserved", allocationId, lineKey, status: "reserved", slots, ...extra };
}

export const tenPercentSpares = { percent: 10, source: "common practice, no source" };
export const noSpares = { percent: 0, source: "none wanted" };

export function bistableLine(key: string, designation: string, count: number, extra: Partial<BuildLinePlan> = {}): BuildLinePlan {
  return {
    key,
    label: `Line ${key}`,
    kind: "bistable",
    designation,
    count,
    heaterSupplyIndex: 0,
    spares: noSpares,
    allowSubstitutes: false,
    acceptedSubstitutes: [],
    // The solver's documented example pair (server/engine/bistable/index.ts).
    resistors: { plateLoadOhms: 27_000, couplingOhms: 220_000, gridReturnOhms: 220_000, cathodeOhms: null },
    ...extra,
  };
}

export const supplies = {
  heater: [{ name: "6.3 V heaters", volts: 6.3, amps: 10 }],
  bPlus: { volts: 250, milliamps: 500 },
  negativeRail: { volts: -150, milliamps: 50 },
};
