import type { KorenParameters } from "./koren.ts";

export interface VoltageRange {
  min: number;
  max: number;
}

/** The region a parameter set was fitted over; outside it the model is an extrapolation. */
export interface ModelValidity {
  plateVolts: VoltageRange;
  gridVolts: VoltageRange;
  /** Pentodes only. */
  screenVolts?: VoltageRange;
  source: string;
}

export interface TubeModel {
  designation: string;
  aliases: string[];
  parameters: KorenParameters;
  /** Multiplies plate and screen current; 1 for a typical tube, below 1 for a worn one. */
  currentScale: number;
  /** k in Ig = k·Vg^1.5 for a positive grid, amps per volt^1.5. */
  gridCurrentAmpsPerVolt1p5: number;
  gridCurrentSource: string;
  validity: ModelValidity;
  /** Per section. */
  maxPlateWatts?: number;
  maxPlateWattsSource?: string;
  source: string;
}

/**
 * Koren's own grid-current network is a 2 kΩ resistor in series with a diode
 * (IS = 1 nA); 0.35 mA/V^1.5 follows it within about 20 % between +0.5 V and +2 V.
 * Approximation, not a datasheet value.
 */
const SMALL_SIGNAL_GRID_PERVEANCE = 0.35e-3;
const SMALL_SIGNAL_GRID_SOURCE =
  "approximation: k·Vg^1.5 with k = 0.35 mA/V^1.5, matched to Koren's RGI = 2 kΩ + diode (IS = 1 nA) grid network between +0.5 V and +2 V";
/** Koren's power-pentode listings use RGI = 1 kΩ; 0.7 mA/V^1.5 follows that network the same way. */
const POWER_GRID_PERVEANCE = 0.7e-3;
const POWER_GRID_SOURCE =
  "approximation: k·Vg^1.5 with k = 0.7 mA/V^1.5, matched to Koren's RGI = 1 kΩ + diode grid network of his EL34 listing";

const KOREN_LIBRARY = "Norman Koren, Improved vacuum tube models for SPICE simulations (1996/2003), Tube.lib";

export const tubeModelLibrary: Record<string, TubeModel> = {
  "12AU7": {
    designation: "12AU7",
    aliases: ["ECC82", "5814A", "6189"],
    parameters: { kind: "koren-triode", mu: 21.5, exponent: 1.3, kg1: 1180, kp: 84, kvb: 300 },
    currentScale: 1,
    gridCurrentAmpsPerVolt1p5: SMALL_SIGNAL_GRID_PERVEANCE,
    gridCurrentSource: SMALL_SIGNAL_GRID_SOURCE,
    validity: {
      plateVolts: { min: 0, max: 500 },
      gridVolts: { min: -24, max: 0 },
      source: "span of the published average plate characteristics, from memory (approximate)",
    },
    maxPlateWatts: 2.75,
    maxPlateWattsSource: "RCA 12AU7A design-maximum plate dissipation per plate, from memory",
    source: KOREN_LIBRARY,
  },
  "12AX7": {
    designation: "12AX7",
    aliases: ["ECC83", "7025"],
    parameters: { kind: "koren-triode", mu: 100, exponent: 1.4, kg1: 1060, kp: 600, kvb: 300 },
    currentScale: 1,
    gridCurrentAmpsPerVolt1p5: SMALL_SIGNAL_GRID_PERVEANCE,
    gridCurrentSource: SMALL_SIGNAL_GRID_SOURCE,
    validity: {
      plateVolts: { min: 0, max: 500 },
      gridVolts: { min: -4, max: 0 },
      source: "span of the published average plate characteristics, from memory (approximate)",
    },
    maxPlateWatts: 1.0,
    maxPlateWattsSource: "RCA 12AX7A design-maximum plate dissipation per plate, from memory",
    source: KOREN_LIBRARY,
  },
  "12AT7": {
    designation: "12AT7",
    aliases: ["ECC81", "6201"],
    parameters: { kind: "koren-triode", mu: 60, exponent: 1.35, kg1: 460, kp: 300, kvb: 300 },
    currentScale: 1,
    gridCurrentAmpsPerVolt1p5: SMALL_SIGNAL_GRID_PERVEANCE,
    gridCurrentSource: SMALL_SIGNAL_GRID_SOURCE,
    validity: {
      plateVolts: { min: 0, max: 400 },
      gridVolts: { min: -12, max: 0 },
      source: "span of the published average plate characteristics, from memory (approximate)",
    },
    maxPlateWatts: 2.5,
    maxPlateWattsSource: "RCA 12AT7 design-maximum plate dissipation per plate, from memory",
    source: KOREN_LIBRARY,
  },
  "6SN7": {
    designation: "6SN7",
    aliases: ["6SN7GT", "6SN7GTB", "ECC32"],
    // Values produced by fitKorenTriode (kvb held at 300) on the points listed in SIX_SN7_FIT_POINTS.
    parameters: { kind: "koren-triode", mu: 21.227, exponent: 1.2831, kg1: 1280.88, kp: 167.29, kvb: 300 },
    currentScale: 1,
    gridCurrentAmpsPerVolt1p5: SMALL_SIGNAL_GRID_PERVEANCE,
    gridCurrentSource: SMALL_SIGNAL_GRID_SOURCE,
    validity: {
      plateVolts: { min: 80, max: 260 },
      gridVolts: { min: -18, max: 0 },
      source: "span of the fitted datasheet points",
    },
    maxPlateWatts: 5.0,
    maxPlateWattsSource: "RCA 6SN7GTB design-maximum plate dissipation per unit, from memory",
    source:
      "Koren triode equation fitted by least squares to RCA 6SN7GTB class-A1 points (250 V/−8 V/9 mA, µ 20, 2600 µmho, 7700 Ω; 90 V/0 V/10 mA, 3000 µmho, 6700 Ω; 10 µA cut-off at −18 V/250 V and −7 V/90 V), the second point and the cut-offs from memory",
  },
  EL34: {
    designation: "EL34",
    aliases: ["6CA7"],
    parameters: { kind: "koren-pentode", mu: 11, exponent: 1.35, kg1: 650, kg2: 4200, kp: 60, kvb: 24 },
    currentScale: 1,
    gridCurrentAmpsPerVolt1p5: POWER_GRID_PERVEANCE,
    gridCurrentSource: POWER_GRID_SOURCE,
    validity: {
      plateVolts: { min: 0, max: 500 },
      gridVolts: { min: -40, max: 0 },
      screenVolts: { min: 200, max: 400 },
      source: "assumption: span of the usual published curve families at Vg2 = 250 V, from memory",
    },
    maxPlateWatts: 25,
    maxPlateWattsSource: "Philips EL34 plate dissipation rating, from memory",
    source: KOREN_LIBRARY,
  },
  "6L6GC": {
    designation: "6L6GC",
    aliases: ["6L6"],
    parameters: { kind: "koren-pentode", mu: 8.7, exponent: 1.35, kg1: 1460, kg2: 4500, kp: 48, kvb: 12 },
    currentScale: 1,
    gridCurrentAmpsPerVolt1p5: POWER_GRID_PERVEANCE,
    gridCurrentSource: `${POWER_GRID_SOURCE}; assumed equal for the 6L6GC`,
    validity: {
      plateVolts: { min: 0, max: 500 },
      gridVolts: { min: -40, max: 0 },
      screenVolts: { min: 200, max: 400 },
      source: "assumption: span of the usual published curve families at Vg2 = 250 V, from memory",
    },
    maxPlateWatts: 30,
    maxPlateWattsSource: "RCA 6L6GC design-maximum plate dissipation, from memory",
    source: KOREN_LIBRARY,
  },
};

/**
 * The points the 6SN7 set was fitted to. First-order neighbours come from the
 * published gm and rp (Ip ± gm·0.5 V, Ip ± 10 V/rp).
 */
export const SIX_SN7_FIT_POINTS = [
  { plateVolts: 250, gridVolts: -8, plateMilliamps: 9 },
  { plateVolts: 250, gridVolts: -7.5, plateMilliamps: 9 + 2.6 * 0.5 },
  { plateVolts: 250, gridVolts: -8.5, plateMilliamps: 9 - 2.6 * 0.5 },
  { plateVolts: 260, gridVolts: -8, plateMilliamps: 9 + 10 / 7.7 },
  { plateVolts: 240, gridVolts: -8, plateMilliamps: 9 - 10 / 7.7 },
  { plateVolts: 90, gridVolts: 0, plateMilliamps: 10 },
  { plateVolts: 90, gridVolts: -0.5, plateMilliamps: 10 - 3.0 * 0.5 },
  { plateVolts: 100, gridVolts: 0, plateMilliamps: 10 + 10 / 6.7 },
  { plateVolts: 80, gridVolts: 0, plateMilliamps: 10 - 10 / 6.7 },
  { plateVolts: 250, gridVolts: -18, plateMilliamps: 0.01 },
  { plateVolts: 90, gridVolts: -7, plateMilliamps: 0.01 },
];
