/**
 * Display data for the type list and a type's page: filters, heater and rating text, typical
 * points, sources grouped by document, stock counts with their links, and the pin diagram.
 * Pure: no IO; the route hands in the catalog entries and the stock summary.
 */
import { hasNoHeater, type MaxRatings, type SectionSpec, type TubeTypeSpec } from "../engine/tube-types/index.ts";
import type { TypeListQuery } from "../schemas/type-form-schemas.ts";
import { displayNumber, displayOhms, goodStockHref, typeHref } from "../substitutes/substitute-view.ts";
import { layoutPinDiagram, pinElementName, type PinDiagram } from "./pin-diagram.ts";

export interface TypeEntryLike {
  designation: string;
  spec: TubeTypeSpec;
  userAdded: boolean;
}

export interface StockSummaryRow {
  type: string;
  total: number;
  counts: Record<string, number>;
}

// ── Heater ────────────────────────────────────────────────────────────────────────────────

/**
 * The heater in words.
 *
 * Example: 12AU7 → "12.6 V, 0.15 A — or 6.3 V, 0.3 A with the two halves in parallel (centre tap)".
 */
export function describeHeater(spec: TubeTypeSpec): string {
  const heater = spec.heater;
  if (hasNoHeater(spec)) return "none (cold cathode)";
  const parts = [`${displayNumber(heater.volts)} V, ${displayNumber(heater.amps)} A`];
  if (heater.centreTap) parts.push(` — or ${displayNumber(heater.centreTap.half.volts)} V, ${displayNumber(heater.centreTap.half.amps)} A with the two halves in parallel (centre tap)`);
  if (heater.directlyHeated) parts.push("; directly heated filament");
  if (heater.warmUpSeconds !== undefined) parts.push(`; controlled warm-up ${displayNumber(heater.warmUpSeconds)} s`);
  return parts.join("");
}

/** Short form for tables: "12.6 V 0.15 A (6.3 V 0.3 A)". */
export function shortHeater(spec: TubeTypeSpec): string {
  const heater = spec.heater;
  if (hasNoHeater(spec)) return "cold cathode";
  const half = heater.centreTap ? ` (${displayNumber(heater.centreTap.half.volts)} V ${displayNumber(heater.centreTap.half.amps)} A)` : "";
  return `${displayNumber(heater.volts)} V ${displayNumber(heater.amps)} A${half}`;
}

// ── List ──────────────────────────────────────────────────────────────────────────────────

export interface TypeListRow {
  designation: string;
  href: string;
  aliases: string;
  tubeClass: string;
  base: string;
  heater: string;
  userAdded: boolean;
  good: number;
  goodHref: string;
  total: number;
}

/**
 * True when the entry passes the list's filters: class and base exactly, and the search text
 * (case-insensitive) within the designation, an alias or the notes.
 *
 * Example: 12AU7 with `{ q: "ecc8" }` → true (alias ECC82).
 */
export function matchesTypeQuery(entry: TypeEntryLike, query: TypeListQuery): boolean {
  if (query.class !== undefined && entry.spec.class !== query.class) return false;
  if (query.base !== undefined && entry.spec.base !== query.base) return false;
  if (query.q === undefined) return true;
  const needle = query.q.toUpperCase();
  return [entry.designation, ...entry.spec.aliases].some((name) => name.toUpperCase().includes(needle)) || (entry.spec.notes ?? "").toUpperCase().includes(needle);
}

export function typeListRows(entries: readonly TypeEntryLike[], summary: readonly StockSummaryRow[], query: TypeListQuery): TypeListRow[] {
  const byType = new Map(summary.map((row) => [row.type, row]));
  return entries
    .filter((entry) => matchesTypeQuery(entry, query))
    .map((entry) => ({
      designation: entry.designation,
      href: typeHref(entry.designation),
      aliases: entry.spec.aliases.join(", "),
      tubeClass: entry.spec.class,
      base: entry.spec.base,
      heater: shortHeater(entry.spec),
      userAdded: entry.userAdded,
      good: byType.get(entry.designation)?.counts.good ?? 0,
      goodHref: goodStockHref(entry.designation),
      total: byType.get(entry.designation)?.total ?? 0,
    }));
}

// ── One type ──────────────────────────────────────────────────────────────────────────────

const RATING_NAMES: Record<string, { name: string; unit: string }> = {
  plateVolts: { name: "Plate volts", unit: "V" },
  plateWatts: { name: "Plate dissipation, per section", unit: "W" },
  screenVolts: { name: "Screen volts", unit: "V" },
  screenWatts: { name: "Screen dissipation", unit: "W" },
  cathodeMilliamps: { name: "Cathode current, per section", unit: "mA" },
  heaterCathodeVolts: { name: "Heater–cathode volts", unit: "V" },
  peakInverseVolts: { name: "Peak inverse volts", unit: "V" },
  outputMilliamps: { name: "Output current", unit: "mA" },
};

/**
 * A `sources` key in words.
 *
 * Example: `sourceKeyLabel("sections.2.typical.1")` → "section 2, typical point 2"; `sourceKeyLabel("maxRatings.plateWatts")` → "maximum plate dissipation, per section".
 */
export function sourceKeyLabel(key: string): string {
  const parts = key.split(".");
  switch (parts[0]) {
    case "pins":
      return "pin connections";
    case "heater":
      return parts[1] ? `heater ${parts[1].replace(/([A-Z])/g, " $1").toLowerCase()}` : "heater";
    case "maxRatings":
      return parts[1] ? `maximum ${(RATING_NAMES[parts[1]]?.name ?? parts[1]).toLowerCase()}` : "maximum ratings";
    case "aliases":
      return "other names";
    case "class":
      return "class";
    case "basingCode":
      return "basing code";
    case "sections":
      if (parts[1] === undefined) return "typical points";
      if (parts[2] === "glow") return `section ${parts[1]} glow discharge`;
      if (parts[2] === "cutoff") return `section ${parts[1]} cutoff`;
      if (parts[2] === "maxRatings") return parts[3] ? `section ${parts[1]} maximum ${(RATING_NAMES[parts[3]]?.name ?? parts[3]).toLowerCase()}` : `section ${parts[1]} maximum ratings`;
      if (parts[3] === undefined) return `section ${parts[1]} typical points`;
      return `section ${parts[1]}, typical point ${Number(parts[3]) + 1}`;
    default:
      return key;
  }
}

export interface TypicalRow {
  section: number;
  kind: string;
  point: number;
  plateVolts: string;
  screenVolts: string;
  gridVolts: string;
  plateMilliamps: string;
  screenMilliamps: string;
  gm: string;
  mu: string;
  rp: string;
  cathodeResistor: string;
}

export interface SectionRow {
  index: number;
  kind: string;
  label: string;
  /** The section's own ratings, where they differ from the envelope's. */
  ratings: string;
  glow: string;
}

export interface VerdictCount {
  verdict: string;
  count: number;
  href: string;
}

export interface TypeDetailView {
  designation: string;
  title: string;
  aliases: string;
  tubeClass: string;
  base: string;
  basingCode: string | null;
  heater: string;
  userAdded: boolean;
  notes: string | null;
  variantOf: { designation: string; href: string } | null;
  variants: Array<{ designation: string; href: string }>;
  ratings: Array<{ name: string; value: string }>;
  typical: TypicalRow[];
  /** Shown when any section has a label, its own ratings or glow data. */
  sections: SectionRow[];
  /** Some section carries its own ratings (the envelope may state none). */
  ratedPerSection: boolean;
  pins: Array<{ pin: string; element: string; elementName: string; section: string; role: string }>;
  diagram: PinDiagram;
  sources: Array<{ text: string; covers: string }>;
  stockTotal: number;
  stockText: string;
  stockHref: string;
  counts: VerdictCount[];
  substitutesHref: string;
  socketsHref: string;
}

const SHOWN_VERDICTS = ["good", "worn", "failed", "untested", "not-comparable"] as const;

function ratingRows(ratings: MaxRatings): Array<{ name: string; value: string }> {
  return Object.entries(ratings)
    .filter((pair): pair is [string, number] => typeof pair[1] === "number")
    .map(([key, value]) => ({ name: RATING_NAMES[key]?.name ?? key, value: `${displayNumber(value)} ${RATING_NAMES[key]?.unit ?? ""}`.trim() }));
}

function sectionRow(section: SectionSpec): SectionRow {
  const glow = section.glow;
  return {
    index: section.index,
    kind: section.cutoff === undefined ? section.kind : `${section.kind}, ${section.cutoff} cutoff`,
    label: section.label ?? "",
    ratings: ratingRows(section.maxRatings ?? {})
      .map((rating) => `${rating.name.replace(/, per section$/, "")} ${rating.value}`)
      .join("; "),
    glow:
      glow === undefined
        ? ""
        : `holds ${displayNumber(glow.operatingVolts)} V over ${displayNumber(glow.minMilliamps)}–${displayNumber(glow.maxMilliamps)} mA; strikes at ${displayNumber(glow.strikingVolts)} V`,
  };
}

function orBlank(value: number | undefined, format: (value: number) => string = (v) => displayNumber(v)): string {
  return value === undefined ? "" : format(value);
}

/**
 * Everything the type page shows about one type.
 *
 * Example: 12AU7 → { heater: "12.6 V, 0.15 A — or 6.3 V, 0.3 A …", variants: [5814A, 6189, …], diagram: { layout: "circle", … } }.
 */
export function typeDetailView(entry: TypeEntryLike, all: readonly TypeEntryLike[], summary: readonly StockSummaryRow[]): TypeDetailView {
  const spec = entry.spec;
  const stock = summary.find((row) => row.type === entry.designation);
  const stockQuery = (verdict?: string) => `/tubes?${new URLSearchParams({ type: entry.designation, ...(verdict ? { verdict } : {}), state: "active" }).toString()}`;

  const sourceGroups = new Map<string, string[]>();
  for (const [key, text] of Object.entries(spec.sources)) sourceGroups.set(text, [...(sourceGroups.get(text) ?? []), sourceKeyLabel(key)]);

  return {
    designation: entry.designation,
    title: `${entry.designation}${spec.aliases.length ? ` (${spec.aliases.join(", ")})` : ""}`,
    aliases: spec.aliases.join(", "),
    tubeClass: spec.class,
    base: spec.base,
    basingCode: spec.basingCode ?? null,
    heater: describeHeater(spec),
    userAdded: entry.userAdded,
    notes: spec.notes ?? null,
    variantOf: spec.variantOf ? { designation: spec.variantOf, href: typeHref(spec.variantOf) } : null,
    variants: all.filter((other) => other.spec.variantOf === entry.designation).map((other) => ({ designation: other.designation, href: typeHref(other.designation) })),
    ratings: ratingRows(spec.maxRatings),
    ratedPerSection: spec.sections.some((section) => section.maxRatings !== undefined && Object.keys(section.maxRatings).length > 0),
    sections: spec.sections.some((section) => section.label !== undefined || section.maxRatings !== undefined || section.glow !== undefined || section.cutoff !== undefined)
      ? spec.sections.map(sectionRow)
      : [],
    typical: spec.sections.flatMap((section) =>
      section.typical.map((point, index) => ({
        section: section.index,
        kind: section.label === undefined ? section.kind : `${section.kind}, ${section.label}`,
        point: index + 1,
        plateVolts: displayNumber(point.plateVolts),
        screenVolts: orBlank(point.screenVolts),
        gridVolts: displayNumber(point.gridVolts),
        plateMilliamps: displayNumber(point.plateMilliamps),
        screenMilliamps: orBlank(point.screenMilliamps),
        gm: orBlank(point.transconductanceMicroSiemens),
        mu: orBlank(point.mu, (v) => displayNumber(v, 1)),
        rp: orBlank(point.plateResistanceOhms, displayOhms),
        cathodeResistor: orBlank(point.cathodeResistorOhms, displayOhms),
      })),
    ),
    pins: spec.pins.map((pin) => ({
      pin: pin.pin,
      element: pin.element === "ic" || pin.element === "nc" ? pin.element.toUpperCase() : pin.element,
      elementName: pinElementName(spec, pin),
      section: pin.section !== undefined ? String(pin.section) : "",
      role: pin.element === "ic" || pin.element === "nc" ? pin.element : "",
    })),
    diagram: layoutPinDiagram(spec),
    sources: [...sourceGroups].map(([text, labels]) => ({ text, covers: labels.join(", ") })),
    stockTotal: stock?.total ?? 0,
    stockText: `${stock?.total ?? 0} tube${(stock?.total ?? 0) === 1 ? "" : "s"}`,
    stockHref: stockQuery(),
    counts: SHOWN_VERDICTS.map((verdict) => ({ verdict, count: stock?.counts[verdict] ?? 0, href: stockQuery(verdict) })),
    substitutesHref: `/substitutes?${new URLSearchParams({ type: entry.designation }).toString()}`,
    socketsHref: `/substitutes/sockets?${new URLSearchParams({ type: entry.designation }).toString()}`,
  };
}
