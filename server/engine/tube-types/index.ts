/**
 * The shape of one tube type as the engine sees it. The reference library in
 * data/tube-types/*.json is validated against the zod mirror of this shape
 * (server/schemas/tube-type-schema.ts) and handed to the engine as plain objects.
 *
 * Units are in the field names: volts, amps, milliamps, watts, ohms,
 * microsiemens (transconductance), seconds.
 */

export type TubeClass =
  | "triode"
  | "dual-triode"
  | "pentode"
  | "dual-pentode"
  | "triode-pentode"
  | "beam-tetrode"
  | "diode"
  | "dual-diode"
  | "diode-triode"
  | "diode-pentode"
  | "rectifier"
  | "thyratron"
  | "voltage-regulator"
  | "indicator"
  | "vacuum-fluorescent";

/** Base families by their open-standard names. */
export type BaseFamily =
  | "B7G" // miniature 7-pin
  | "B9A" // noval
  | "octal"
  | "loctal"
  | "subminiature"
  | "B8G"
  | "other";

/**
 * Element on a pin. `ic` = internal connection (must not be wired by the socket),
 * `nc` = no connection. Electrodes that belong to one section carry `section`.
 */
export type PinElement =
  | "a" // plate (anode)
  | "g1" // control grid
  | "g2" // screen grid
  | "g3" // suppressor grid
  | "k" // cathode
  | "bp" // beam plates
  | "h" // heater end
  | "hct" // heater centre tap
  | "f" // filament (directly heated)
  | "fct" // filament centre tap
  | "s" // internal shield
  | "ts" // target (indicators)
  | "ic"
  | "nc";

/** Plain-English names of the elements, for forms, pin tables and explanations. */
export const PIN_ELEMENT_NAMES: Readonly<Record<PinElement, string>> = {
  a: "plate",
  g1: "control grid",
  g2: "screen grid",
  g3: "suppressor grid",
  k: "cathode",
  bp: "beam plates",
  h: "heater",
  hct: "heater centre tap",
  f: "filament",
  fct: "filament centre tap",
  s: "internal shield",
  ts: "target",
  ic: "internal connection",
  nc: "no connection",
};

export interface PinAssignment {
  /** Pin label as printed on the basing diagram: "1".."9", or a lead name on wire-ended types. */
  pin: string;
  element: PinElement;
  /** 1-based section index for section electrodes; absent for heater, shield, IC, NC. */
  section?: number;
}

export type SectionKind =
  | "triode"
  | "pentode"
  | "beam-tetrode"
  | "diode"
  | "rectifier"
  | "thyratron"
  | "regulator"
  | "indicator";

/** A typical operating point of one section, as a datasheet states it. */
export interface OperatingPoint {
  plateVolts: number;
  gridVolts: number;
  screenVolts?: number;
  plateMilliamps: number;
  screenMilliamps?: number;
  transconductanceMicroSiemens?: number;
  mu?: number;
  plateResistanceOhms?: number;
  cathodeResistorOhms?: number;
}

export interface SectionSpec {
  index: number;
  kind: SectionKind;
  typical: OperatingPoint[];
}

export interface HeaterSpec {
  volts: number;
  amps: number;
  /** Centre-tapped heaters can run at `volts` (ends) or at `half.volts` (halves in parallel, tap to one side). */
  centreTap?: { half: { volts: number; amps: number } };
  /** Controlled warm-up time for series strings, seconds. */
  warmUpSeconds?: number;
  directlyHeated?: boolean;
}

export interface MaxRatings {
  plateVolts?: number;
  plateWatts?: number; // per section
  screenVolts?: number;
  screenWatts?: number;
  cathodeMilliamps?: number; // per section
  heaterCathodeVolts?: number;
  peakInverseVolts?: number; // rectifiers
  outputMilliamps?: number; // rectifiers and regulators
}

export interface TubeTypeSpec {
  designation: string;
  aliases: string[];
  class: TubeClass;
  base: BaseFamily;
  basingCode?: string; // EIA basing code, e.g. "9A"
  pins: PinAssignment[];
  sections: SectionSpec[];
  heater: HeaterSpec;
  maxRatings: MaxRatings;
  variantOf?: string;
  notes?: string;
  /** field path (e.g. "heater", "maxRatings.plateVolts", "sections.1.typical.0") → where the value came from. */
  sources: Record<string, string>;
  userAdded?: boolean;
}
