/**
 * Section specs of a few real types, with the published typical operating points the
 * verdict tests compare against. Each value's source is beside it.
 */
import type { HeaterSpec, OperatingPoint, SectionSpec } from "../../../server/engine/tube-types/index.ts";

/** RCA RC-30 receiving tube manual, 12AU7 class A1 amplifier, each section. */
export const twelveAu7At250Volts: OperatingPoint = {
  plateVolts: 250,
  gridVolts: -8.5,
  plateMilliamps: 10.5,
  transconductanceMicroSiemens: 2200,
  mu: 17,
  plateResistanceOhms: 7700,
};

/** RCA RC-30, 12AU7 class A1 at 100 V, 0 V grid (from memory). */
export const twelveAu7At100Volts: OperatingPoint = {
  plateVolts: 100,
  gridVolts: 0,
  plateMilliamps: 11.8,
  transconductanceMicroSiemens: 3100,
};

export const twelveAu7Sections: SectionSpec[] = [
  { index: 1, kind: "triode", typical: [twelveAu7At250Volts, twelveAu7At100Volts] },
  { index: 2, kind: "triode", typical: [twelveAu7At250Volts, twelveAu7At100Volts] },
];

/** RCA RC-30, 12AU7 heater: 12.6 V at 0.15 A, or 6.3 V at 0.3 A with the halves in parallel. */
export const twelveAu7Heater: HeaterSpec = { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } };

/** RCA RC-30, 12AX7 class A1 at 250 V, −2 V. */
export const twelveAx7At250Volts: OperatingPoint = {
  plateVolts: 250,
  gridVolts: -2,
  plateMilliamps: 1.2,
  transconductanceMicroSiemens: 1600,
  mu: 100,
};

export const twelveAx7Sections: SectionSpec[] = [
  { index: 1, kind: "triode", typical: [twelveAx7At250Volts] },
  { index: 2, kind: "triode", typical: [twelveAx7At250Volts] },
];

/** RCA RC-30, 6V6GT class A1 at 250 V plate, 250 V screen, −12.5 V grid. */
export const sixV6GtAt250Volts: OperatingPoint = {
  plateVolts: 250,
  screenVolts: 250,
  gridVolts: -12.5,
  plateMilliamps: 45,
  transconductanceMicroSiemens: 4100,
};

export const sixV6GtSections: SectionSpec[] = [{ index: 1, kind: "beam-tetrode", typical: [sixV6GtAt250Volts] }];

/** Mullard EL84 data sheet: 250 V anode, 250 V screen, −7.3 V grid, 48 mA, 11.3 mA/V. */
export const el84At250Volts: OperatingPoint = {
  plateVolts: 250,
  screenVolts: 250,
  gridVolts: -7.3,
  plateMilliamps: 48,
  transconductanceMicroSiemens: 11_300,
};

export const el84Sections: SectionSpec[] = [{ index: 1, kind: "pentode", typical: [el84At250Volts] }];

/** A dual diode: no transconductance, judged on emission only (the 6AL5 is such a type). */
export const dualDiodeSections: SectionSpec[] = [
  { index: 1, kind: "diode", typical: [] },
  { index: 2, kind: "diode", typical: [] },
];

/**
 * A two-kind envelope for structure tests: the 12AU7 triode point and the EL84 pentode point
 * (both sourced above) put into one type. Only the differing kinds matter to the tests.
 */
export const triodePentodeSections: SectionSpec[] = [
  { index: 1, kind: "triode", typical: [twelveAu7At250Volts] },
  { index: 2, kind: "pentode", typical: [el84At250Volts] },
];
