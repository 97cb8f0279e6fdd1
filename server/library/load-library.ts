/**
 * Reads the reference library of tube types (data/tube-types/*.json), validates every file with
 * the zod schema, checks the library as a whole, and indexes it by designation and alias.
 *
 * This is IO (node:fs) and so lives outside server/engine; the engine receives the plain
 * `TubeTypeSpec` objects this returns.
 */
import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { hasNoHeater, sectionMaxRatings, type PinAssignment, type PinElement, type SectionKind, type SectionSpec, type TubeClass, type TubeTypeSpec } from "../engine/tube-types/index.ts";
import { tubeLibraryFileSchema } from "../schemas/tube-type-schema.ts";

/** data/tube-types in this checkout. */
export const DEFAULT_TUBE_LIBRARY_DIRECTORY = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../data/tube-types");

/**
 * Datasheet figures are rounded to two or three digits, so µ, gm and rp from one table agree
 * with µ = gm·rp only roughly (the worst point in data/tube-types is 9.4 % off); 15 % still
 * catches a transconductance typed in mA/V instead of µS or an rp missing a digit.
 */
export const BARKHAUSEN_TOLERANCE = 0.15;

/** Some datasheet operating points sit exactly on the dissipation limit; admit 2 % for rounding. */
export const DISSIPATION_ROUNDING_ALLOWANCE = 0.02;

/** A centre-tapped heater's half must be half the volts at twice the amps, within rounding (6.3 V vs 12.6 V). */
export const HEATER_TAP_TOLERANCE = 0.03;

/** Based families whose every pin must be listed: "1".."N", plus an optional top cap. */
export const STANDARD_PIN_COUNTS: Readonly<Partial<Record<TubeTypeSpec["base"], number>>> = {
  B7G: 7,
  B9A: 9,
  octal: 8,
  loctal: 8,
  B8G: 8,
};

export interface TubeLibrary {
  types: TubeTypeSpec[];
  /** Upper-cased designation or alias → type. */
  byName: Map<string, TubeTypeSpec>;
}

interface LibraryProblem {
  designation: string;
  message: string;
}

// ── Loading ────────────────────────────────────────────────────────────────────────────────

/**
 * Loads every *.json file in `directory` (in name order) as a library file
 * `{ "$comment"?: string, "types": TubeTypeSpec[] }`.
 *
 * Throws one Error listing every problem found, one per line, as
 * `file › types[3].heater.volts: message` for schema problems and
 * `file › types[3] (12AU7): message` for library-wide problems (see `checkLibraryConsistency`).
 *
 * Example: `loadTubeLibrary(DEFAULT_TUBE_LIBRARY_DIRECTORY).byName.get("ECC82")?.designation` → "12AU7".
 */
export function loadTubeLibrary(directory: string): TubeLibrary {
  const fileNames = readdirSync(directory)
    .filter((name) => name.endsWith(".json"))
    .sort();
  const problems: string[] = [];
  const types: TubeTypeSpec[] = [];
  const locations = new Map<string, string[]>();

  for (const fileName of fileNames) {
    let parsedJson: unknown;
    try {
      parsedJson = JSON.parse(readFileSync(path.join(directory, fileName), "utf8"));
    } catch (error) {
      problems.push(`${fileName}: not valid JSON (${(error as Error).message})`);
      continue;
    }
    const result = tubeLibraryFileSchema.safeParse(parsedJson);
    if (!result.success) {
      for (const issue of result.error.issues) problems.push(`${fileName} › ${formatIssuePath(issue.path)}: ${issue.message}`);
      continue;
    }
    result.data.types.forEach((spec, position) => {
      types.push(spec);
      const where = `${fileName} › types[${position}]`;
      if (spec.userAdded) problems.push(`${where}.userAdded: reference library types cannot be marked user-added`);
      locations.set(spec.designation, [...(locations.get(spec.designation) ?? []), where]);
    });
  }

  if (problems.length === 0) {
    for (const problem of findLibraryProblems(types)) {
      const where = locations.get(problem.designation)?.join(", ") ?? "library";
      problems.push(`${where} (${problem.designation}): ${problem.message}`);
    }
  }
  if (problems.length > 0) {
    throw new Error(`Tube library in ${directory} has ${problems.length} problem${problems.length === 1 ? "" : "s"}:\n${problems.join("\n")}`);
  }

  return { types, byName: indexByName(types) };
}

/**
 * Finds a type by designation or alias, ignoring case and surrounding spaces.
 * Returns undefined when the name is unknown.
 *
 * Example: `lookupTubeType(library, " ecc82 ")?.designation` → "12AU7".
 */
export function lookupTubeType(library: TubeLibrary, name: string): TubeTypeSpec | undefined {
  return library.byName.get(name.trim().toUpperCase());
}

/**
 * Builds the name index: every designation and every alias, upper-cased. Designations are
 * entered first so that a designation always wins over a clashing alias (the library check
 * reports such clashes; user-added data may still contain them).
 *
 * Example: `indexByName([spec12AU7]).get("ECC82")` → spec12AU7.
 */
export function indexByName(types: readonly TubeTypeSpec[]): Map<string, TubeTypeSpec> {
  const byName = new Map<string, TubeTypeSpec>();
  for (const spec of types) byName.set(spec.designation.toUpperCase(), spec);
  for (const spec of types) {
    for (const alias of spec.aliases) {
      const key = alias.toUpperCase();
      if (!byName.has(key)) byName.set(key, spec);
    }
  }
  return byName;
}

function formatIssuePath(issuePath: readonly PropertyKey[]): string {
  let text = "";
  for (const part of issuePath) {
    if (typeof part === "number") text += `[${part}]`;
    else text += text === "" ? String(part) : `.${String(part)}`;
  }
  return text === "" ? "(file)" : text;
}

// ── Library-wide consistency ─────────────────────────────────────────────────────────────────

/**
 * Checks rules that a per-type schema cannot: returns one human-readable line per problem,
 * `"<designation>: <message>"`, or an empty list when the library is consistent.
 *
 * Rules: designations and aliases unique across the library (an alias may not equal another
 * type's designation); each pin used once and, on standard bases, every pin 1..N listed; each
 * section complete for its kind (triode a+g1+k, pentode a+g1+g2+k with g3 on a pin or described
 * in notes, beam tetrode a+g1+g2+k, diode and rectifier a+k, thyratron a+g1+k, regulator a+k,
 * indicator a target); directly heated types use f (filament) for heater and cathode, others h
 * and k; heaters present (cold-cathode only with 0 V, 0 A); a centre tap has its pin and halves
 * that add up; the class matches the section kinds; variantOf names an existing type with no
 * cycle; typical points within the maximum plate volts, screen volts and plate watts; µ ≈ gm·rp
 * (Barkhausen) within `BARKHAUSEN_TOLERANCE` where all three are given; pentode points give
 * screen volts; every value group (pins, heater, each maximum rating, each typical point,
 * aliases) has a source and no source names a missing field.
 *
 * Example: `checkLibraryConsistency([{ ...spec12AU7, variantOf: "12AU8" }])` →
 * `["12AU7: variantOf names 12AU8, which is not a designation in the library"]`.
 */
export function checkLibraryConsistency(types: readonly TubeTypeSpec[]): string[] {
  return findLibraryProblems(types).map((problem) => `${problem.designation}: ${problem.message}`);
}

function findLibraryProblems(types: readonly TubeTypeSpec[]): LibraryProblem[] {
  const problems: LibraryProblem[] = [];
  problems.push(...findNameProblems(types));
  problems.push(...findVariantProblems(types));
  for (const spec of types) {
    const report = (message: string) => problems.push({ designation: spec.designation, message });
    checkPins(spec, report);
    checkSections(spec, report);
    checkHeater(spec, report);
    checkClass(spec, report);
    checkTypicalPoints(spec, report);
    checkSources(spec, report);
  }
  return problems;
}

type Report = (message: string) => void;

function findNameProblems(types: readonly TubeTypeSpec[]): LibraryProblem[] {
  const problems: LibraryProblem[] = [];
  const designationCounts = new Map<string, number>();
  for (const spec of types) {
    const key = spec.designation.toUpperCase();
    designationCounts.set(key, (designationCounts.get(key) ?? 0) + 1);
  }
  for (const [name, count] of designationCounts) {
    if (count > 1) problems.push({ designation: name, message: `designation ${name} is used by ${count} types` });
  }

  const aliasOwners = new Map<string, string[]>();
  for (const spec of types) {
    for (const alias of spec.aliases) {
      const key = alias.toUpperCase();
      if (designationCounts.has(key)) {
        problems.push({ designation: spec.designation, message: `alias ${alias} is the designation of another type` });
      }
      aliasOwners.set(key, [...(aliasOwners.get(key) ?? []), spec.designation]);
    }
  }
  for (const [alias, owners] of aliasOwners) {
    if (owners.length > 1) {
      for (const owner of owners) problems.push({ designation: owner, message: `alias ${alias} is claimed by ${owners.join(" and ")}` });
    }
  }
  return problems;
}

function findVariantProblems(types: readonly TubeTypeSpec[]): LibraryProblem[] {
  const problems: LibraryProblem[] = [];
  const byDesignation = new Map(types.map((spec) => [spec.designation, spec]));
  for (const spec of types) {
    if (spec.variantOf === undefined) continue;
    if (!byDesignation.has(spec.variantOf)) {
      problems.push({ designation: spec.designation, message: `variantOf names ${spec.variantOf}, which is not a designation in the library` });
      continue;
    }
    // A chain can be no longer than the library, so that is the cap on the walk.
    const visited = new Set<string>([spec.designation]);
    let current = byDesignation.get(spec.variantOf);
    for (let step = 0; current !== undefined && step <= types.length; step += 1) {
      if (visited.has(current.designation)) {
        problems.push({ designation: spec.designation, message: `variantOf chain loops back (${[...visited, current.designation].join(" → ")})` });
        break;
      }
      visited.add(current.designation);
      current = current.variantOf === undefined ? undefined : byDesignation.get(current.variantOf);
    }
  }
  return problems;
}

function checkPins(spec: TubeTypeSpec, report: Report): void {
  const counts = new Map<string, number>();
  for (const pin of spec.pins) counts.set(pin.pin, (counts.get(pin.pin) ?? 0) + 1);
  for (const [label, count] of counts) if (count > 1) report(`pin ${label} is used ${count} times`);

  const pinCount = STANDARD_PIN_COUNTS[spec.base];
  if (pinCount === undefined) return;
  for (let pinNumber = 1; pinNumber <= pinCount; pinNumber += 1) {
    if (!counts.has(String(pinNumber))) report(`pin ${pinNumber} of the ${spec.base} base is missing (list it as nc or ic when unused)`);
  }
  for (const label of counts.keys()) {
    const isBasePin = /^[0-9]+$/.test(label) && Number(label) >= 1 && Number(label) <= pinCount;
    if (!isBasePin && label !== "cap") report(`pin ${label} is not a pin of the ${spec.base} base`);
  }
}

/** Pins of one section: its own electrodes plus common electrodes (no section), e.g. a shared cathode. */
function sectionHas(spec: TubeTypeSpec, sectionIndex: number, elements: readonly PinElement[]): boolean {
  return spec.pins.some((pin: PinAssignment) => elements.includes(pin.element) && (pin.section === sectionIndex || pin.section === undefined));
}

function checkSections(spec: TubeTypeSpec, report: Report): void {
  const directlyHeated = spec.heater.directlyHeated === true;
  // The filament is the cathode of a directly heated type; some rectifiers join the cathode to a heater end.
  const cathode: PinElement[] = directlyHeated ? ["f", "fct"] : ["k"];
  const notesMentionSuppressor = /\bg3\b|suppressor/i.test(spec.notes ?? "");
  const notesMention = (grid: string) => new RegExp(`\\b${grid}\\b`, "i").test(spec.notes ?? "");

  for (const section of spec.sections) {
    const missing: string[] = [];
    const need = (label: string, elements: readonly PinElement[]) => {
      if (!sectionHas(spec, section.index, elements)) missing.push(label);
    };
    switch (section.kind) {
      case "triode":
      case "thyratron":
        need("a", ["a"]);
        need("g1", ["g1"]);
        need(directlyHeated ? "f" : "k", cathode);
        break;
      case "pentode":
        need("a", ["a"]);
        need("g1", ["g1"]);
        need("g2", ["g2"]);
        need(directlyHeated ? "f" : "k", cathode);
        if (!sectionHas(spec, section.index, ["g3"]) && !notesMentionSuppressor) missing.push("g3 (on a pin, or described in notes when tied inside)");
        break;
      case "heptode":
        need("a", ["a"]);
        need("g1", ["g1"]);
        need("g2", ["g2"]);
        need("g3", ["g3"]);
        need(directlyHeated ? "f" : "k", cathode);
        for (const grid of ["g4", "g5"] as const) {
          if (!sectionHas(spec, section.index, [grid]) && !notesMention(grid)) missing.push(`${grid} (on a pin, or described in notes when joined inside)`);
        }
        break;
      case "beam-tetrode":
        need("a", ["a"]);
        need("g1", ["g1"]);
        need("g2", ["g2"]);
        need(directlyHeated ? "f" : "k", cathode);
        break;
      case "diode":
        need("a", ["a"]);
        need(directlyHeated ? "f" : "k", cathode);
        break;
      case "rectifier":
        need("a", ["a"]);
        need(directlyHeated ? "f" : "k (or a heater end that is the cathode)", directlyHeated ? cathode : ["k", "h"]);
        break;
      case "regulator":
        need("a", ["a"]);
        need("k", ["k"]);
        if (section.glow === undefined) report(`section ${section.index} (regulator) needs glow data: operating and striking volts, current range`);
        else if (spec.maxRatings.outputMilliamps !== undefined && section.glow.maxMilliamps > spec.maxRatings.outputMilliamps) {
          report(`section ${section.index} regulates up to ${section.glow.maxMilliamps} mA, above the maximum output ${spec.maxRatings.outputMilliamps} mA`);
        }
        break;
      case "indicator":
        need("ts or a", ["ts", "a"]);
        break;
    }
    if (missing.length > 0) report(`section ${section.index} (${section.kind}) lacks ${missing.join(", ")}`);
    if (spec.class === "vacuum-fluorescent" && spec.sections.length > 1 && section.label === undefined) {
      report(`section ${section.index} needs a label: the segments of a display are not interchangeable`);
    }
    if (!spec.pins.some((pin) => pin.section === section.index) && spec.sections.length > 1) {
      report(`section ${section.index} has no pin of its own`);
    }
  }
}

function checkHeater(spec: TubeTypeSpec, report: Report): void {
  const count = (element: PinElement) => spec.pins.filter((pin) => pin.element === element).length;
  const heaterPins = count("h") + count("hct");
  const filamentPins = count("f") + count("fct");
  const heater = spec.heater;

  if (hasNoHeater(spec)) {
    if (spec.class !== "voltage-regulator" && spec.class !== "thyratron") report("only cold-cathode regulators and thyratrons may have a 0 V, 0 A heater");
    if (heaterPins + filamentPins > 0) report("a 0 V, 0 A heater cannot have heater or filament pins");
    if (heater.directlyHeated || heater.centreTap || heater.warmUpSeconds) report("a cold-cathode type has no heater details");
    return;
  }

  if (heater.directlyHeated) {
    if (count("f") < 2) report("a directly heated type needs two filament (f) pins");
    if (heaterPins > 0) report("a directly heated type uses f and fct, not h and hct");
    if (count("k") > 0) report("a directly heated type has no separate cathode (k) pin");
  } else {
    if (count("h") < 2) report("an indirectly heated type needs two heater (h) pins");
    if (filamentPins > 0) report("an indirectly heated type uses h and hct, not f and fct (set heater.directlyHeated)");
  }

  if (heater.centreTap) {
    if (count("hct") + count("fct") === 0) report("heater.centreTap is given but no pin is hct or fct");
    const half = heater.centreTap.half;
    if (Math.abs(half.volts * 2 - heater.volts) > HEATER_TAP_TOLERANCE * heater.volts) {
      report(`heater half volts ${half.volts} is not half of ${heater.volts}`);
    }
    if (Math.abs(half.amps - heater.amps * 2) > HEATER_TAP_TOLERANCE * half.amps) {
      report(`heater half amps ${half.amps} is not twice ${heater.amps}`);
    }
  }
}

type KindCounts = Record<SectionKind, number>;

const CLASS_RULES: Record<TubeClass, { describe: string; fits: (counts: KindCounts, total: number) => boolean }> = {
  triode: { describe: "one triode", fits: (c, n) => n === 1 && c.triode === 1 },
  "dual-triode": { describe: "two triodes", fits: (c, n) => n === 2 && c.triode === 2 },
  pentode: { describe: "one pentode", fits: (c, n) => n === 1 && c.pentode === 1 },
  "dual-pentode": { describe: "two pentodes", fits: (c, n) => n === 2 && c.pentode === 2 },
  "triode-pentode": { describe: "a triode and a pentode", fits: (c, n) => n === 2 && c.triode === 1 && c.pentode === 1 },
  "beam-tetrode": { describe: "one beam tetrode", fits: (c, n) => n === 1 && c["beam-tetrode"] === 1 },
  diode: { describe: "one diode", fits: (c, n) => n === 1 && c.diode === 1 },
  "dual-diode": { describe: "two diodes", fits: (c, n) => n === 2 && c.diode === 2 },
  "diode-triode": { describe: "a triode and one or more diodes", fits: (c, n) => c.triode === 1 && c.diode >= 1 && n === 1 + c.diode },
  "diode-pentode": { describe: "a pentode and one or more diodes", fits: (c, n) => c.pentode === 1 && c.diode >= 1 && n === 1 + c.diode },
  heptode: { describe: "one heptode", fits: (c, n) => n === 1 && c.heptode === 1 },
  rectifier: { describe: "one or two rectifier sections", fits: (c, n) => n >= 1 && n <= 2 && c.rectifier === n },
  thyratron: { describe: "one or two thyratrons", fits: (c, n) => n >= 1 && n <= 2 && c.thyratron === n },
  "voltage-regulator": { describe: "one regulator", fits: (c, n) => n === 1 && c.regulator === 1 },
  indicator: { describe: "indicator sections and any control triodes", fits: (c, n) => c.indicator >= 1 && n === c.indicator + c.triode },
  "vacuum-fluorescent": { describe: "indicator sections only", fits: (c, n) => c.indicator >= 1 && n === c.indicator },
};

function checkClass(spec: TubeTypeSpec, report: Report): void {
  const counts: KindCounts = { triode: 0, pentode: 0, "beam-tetrode": 0, heptode: 0, diode: 0, rectifier: 0, thyratron: 0, regulator: 0, indicator: 0 };
  for (const section of spec.sections) counts[section.kind] += 1;
  const rule = CLASS_RULES[spec.class];
  if (!rule.fits(counts, spec.sections.length)) {
    report(`class ${spec.class} needs ${rule.describe}, but the sections are ${spec.sections.map((section) => section.kind).join(", ")}`);
  }
}

function checkTypicalPoints(spec: TubeTypeSpec, report: Report): void {
  for (const section of spec.sections) {
    const ratings = sectionMaxRatings(spec, section.index);
    section.typical.forEach((point, position) => {
      const where = `section ${section.index} typical point ${position}`;
      const plateWatts = (point.plateVolts * point.plateMilliamps) / 1000;
      if (ratings.plateWatts !== undefined && plateWatts > ratings.plateWatts * (1 + DISSIPATION_ROUNDING_ALLOWANCE)) {
        report(`${where} dissipates ${round(plateWatts)} W at the plate, above the maximum ${ratings.plateWatts} W`);
      }
      if (ratings.plateVolts !== undefined && point.plateVolts > ratings.plateVolts) {
        report(`${where} has ${point.plateVolts} V on the plate, above the maximum ${ratings.plateVolts} V`);
      }
      if (ratings.screenVolts !== undefined && point.screenVolts !== undefined && point.screenVolts > ratings.screenVolts) {
        report(`${where} has ${point.screenVolts} V on the screen, above the maximum ${ratings.screenVolts} V`);
      }
      if (isScreenGridKind(section) && point.screenVolts === undefined) report(`${where} of a ${section.kind} needs screenVolts`);
      if (!isScreenGridKind(section) && point.screenVolts !== undefined) report(`${where} of a ${section.kind} cannot have screenVolts`);
      const { mu, transconductanceMicroSiemens: gm, plateResistanceOhms: rp } = point;
      if (mu !== undefined && gm !== undefined && rp !== undefined) {
        const product = (gm / 1e6) * rp;
        if (Math.abs(product - mu) > BARKHAUSEN_TOLERANCE * mu) {
          report(`${where}: gm·rp = ${round(product)} differs from µ = ${mu} by more than ${BARKHAUSEN_TOLERANCE * 100} % (Barkhausen µ = gm·rp)`);
        }
      }
    });
  }
}

function isScreenGridKind(section: SectionSpec): boolean {
  return section.kind === "pentode" || section.kind === "beam-tetrode" || section.kind === "heptode";
}

/** The value groups that must each carry a source, as paths. */
function sourcedPaths(spec: TubeTypeSpec): string[] {
  const paths = ["pins", "heater"];
  for (const key of Object.keys(spec.maxRatings)) paths.push(`maxRatings.${key}`);
  for (const section of spec.sections) {
    section.typical.forEach((_, position) => paths.push(`sections.${section.index}.typical.${position}`));
    for (const key of Object.keys(section.maxRatings ?? {})) paths.push(`sections.${section.index}.maxRatings.${key}`);
    if (section.glow !== undefined) paths.push(`sections.${section.index}.glow`);
    if (section.cutoff !== undefined) paths.push(`sections.${section.index}.cutoff`);
  }
  if (spec.aliases.length > 0) paths.push("aliases");
  return paths;
}

function checkSources(spec: TubeTypeSpec, report: Report): void {
  const keys = Object.keys(spec.sources);
  for (const needed of sourcedPaths(spec)) {
    const covered = keys.some((key) => key === needed || needed.startsWith(`${key}.`));
    if (!covered) report(`no source for ${needed}`);
  }
  for (const key of keys) {
    if (!sourceKeyNamesAValue(spec, key)) report(`sources names ${key}, which has no value`);
  }
}

function sourceKeyNamesAValue(spec: TubeTypeSpec, key: string): boolean {
  const parts = key.split(".");
  switch (parts[0]) {
    case "pins":
      return spec.pins.length > 0;
    case "aliases":
      return spec.aliases.length > 0;
    case "class":
      return true;
    case "basingCode":
      return spec.basingCode !== undefined;
    case "heater":
      return parts.length === 1 || (spec.heater as unknown as Record<string, unknown>)[parts[1]] !== undefined;
    case "maxRatings":
      return parts.length === 1 ? Object.keys(spec.maxRatings).length > 0 : (spec.maxRatings as Record<string, unknown>)[parts[1]] !== undefined;
    case "sections": {
      if (parts.length === 1) return spec.sections.length > 0;
      const section = spec.sections.find((candidate) => candidate.index === Number(parts[1]));
      if (section === undefined) return false;
      if (parts.length === 2) return true;
      if (parts[2] === "glow") return section.glow !== undefined;
      if (parts[2] === "cutoff") return section.cutoff !== undefined;
      if (parts[2] === "maxRatings") {
        if (section.maxRatings === undefined) return false;
        return parts.length === 3 || (section.maxRatings as Record<string, unknown>)[parts[3]] !== undefined;
      }
      if (parts.length === 3) return section.typical.length > 0;
      return section.typical[Number(parts[3])] !== undefined;
    }
    default:
      return false;
  }
}

function round(value: number): number {
  return Math.round(value * 100) / 100;
}
