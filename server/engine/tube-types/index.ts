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
  | "heptode"
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
  | "g3" // suppressor grid (signal grid on a heptode)
  | "g4" // fourth grid (a heptode's second screen)
  | "g5" // fifth grid (a heptode's suppressor)
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

/** Plain-English names of the elements, for forms, pin tables and explanations (see `elementName` for heptodes). */
export const PIN_ELEMENT_NAMES: Readonly<Record<PinElement, string>> = {
  a: "plate",
  g1: "control grid",
  g2: "screen grid",
  g3: "suppressor grid",
  g4: "grid 4",
  g5: "grid 5",
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

/**
 * A heptode (pentagrid converter) numbers five grids outward from the cathode, and the same
 * number does a different job than in a pentode: g1 oscillator grid, g2 and g4 the screen,
 * g3 the signal grid, g5 the suppressor.
 */
const HEPTODE_ELEMENT_NAMES: Readonly<Partial<Record<PinElement, string>>> = {
  g1: "oscillator grid",
  g2: "screen grid (g2)",
  g3: "signal grid",
  g4: "screen grid (g4)",
  g5: "suppressor grid",
};

/**
 * The name of an element as it serves in a section of `kind`.
 *
 * Example: `elementName("g3", "heptode")` → "signal grid"; `elementName("g3", "pentode")` → "suppressor grid".
 */
export function elementName(element: PinElement, kind?: SectionKind): string {
  if (kind === "heptode") return HEPTODE_ELEMENT_NAMES[element] ?? PIN_ELEMENT_NAMES[element];
  return PIN_ELEMENT_NAMES[element];
}

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
  // Pentagrid converter: g1 oscillator grid, g2+g4 screen, g3 signal grid, g5 suppressor.
  // Converters that use g2 as the oscillator anode are a different structure and not this kind.
  | "heptode"
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

/** A cold-cathode glow regulator's discharge, as the datasheet states it. */
export interface GlowDischarge {
  /** Voltage across the tube while it regulates, at the middle of its current range. */
  operatingVolts: number;
  /** Supply voltage the tube needs before it fires (the worst case the datasheet states). */
  strikingVolts: number;
  /** Current range over which it regulates. */
  minMilliamps: number;
  maxMilliamps: number;
}

export interface SectionSpec {
  index: number;
  kind: SectionKind;
  /**
   * A name that makes the section unique and not interchangeable with its siblings, such as a
   * display segment ("segment a"). Labelled sections only ever stand in for a section of the
   * same label; unlabelled sections of one kind may be swapped.
   */
  label?: string;
  typical: OperatingPoint[];
  /**
   * Pentodes: how plate current falls as the grid goes negative — at a knee ("sharp") or
   * gradually, for gain control ("remote", variable-µ).
   */
  cutoff?: "sharp" | "remote";
  /** Ratings of this section where they differ from the envelope's (a triode-pentode's triode). */
  maxRatings?: MaxRatings;
  /** Regulator sections: the glow discharge. */
  glow?: GlowDischarge;
}

export interface HeaterSpec {
  /** 0 with amps 0 and `coldCathode` true on types that have no heater at all. */
  volts: number;
  amps: number;
  /** Centre-tapped heaters can run at `volts` (ends) or at `half.volts` (halves in parallel, tap to one side). */
  centreTap?: { half: { volts: number; amps: number } };
  /** Controlled warm-up time for series strings, seconds. */
  warmUpSeconds?: number;
  directlyHeated?: boolean;
  /** No heater: glow regulators and cold-cathode thyratrons (volts and amps are then 0). */
  coldCathode?: boolean;
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

/**
 * The maximum ratings that bind one section: the section's own where it has them, over the
 * envelope's. Returns the envelope's ratings for an unknown section.
 *
 * Example: 6BM8 section 1 (triode, own plateWatts 1) → { plateVolts: 600, plateWatts: 1, … } when
 * the envelope says { plateVolts: 600, plateWatts: 7 }.
 */
export function sectionMaxRatings(spec: TubeTypeSpec, sectionIndex: number): MaxRatings {
  const own = spec.sections.find((section) => section.index === sectionIndex)?.maxRatings;
  return own === undefined ? spec.maxRatings : { ...spec.maxRatings, ...own };
}

/** True when the type has no heater (glow regulators, cold-cathode thyratrons). */
export function hasNoHeater(spec: TubeTypeSpec): boolean {
  return spec.heater.coldCathode === true || (spec.heater.volts === 0 && spec.heater.amps === 0);
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
