/**
 * Display rows for the substitutes page: every figure the templates show is formatted here, so
 * the templates only place text. Pure: no IO.
 */
import type { Candidate, Excluded, RatingCheck, SocketFit, SocketMiss } from "../engine/substitution/index.ts";
import type { TubeTypeSpec } from "../engine/tube-types/index.ts";
import { MAX_FORM_SECTIONS, type HeaterSupplyInput } from "../schemas/substitute-schemas.ts";
import type { SocketsAnswer, SubstituteAnswer } from "./substitute-service.ts";

// ── Number text ───────────────────────────────────────────────────────────────────────────

const MINUS = "\u2212";

/**
 * A number for display: at most `maximumDecimals` decimals, trailing zeros dropped, a true
 * minus sign for negatives.
 *
 * Example: `displayNumber(0.1500001)` → "0.15"; `displayNumber(-2.5, 1)` → "−2.5".
 */
export function displayNumber(value: number, maximumDecimals = 3): string {
  const factor = 10 ** maximumDecimals;
  const rounded = Math.round(value * factor) / factor;
  if (rounded === 0) return "0";
  return rounded < 0 ? `${MINUS}${String(-rounded)}` : String(rounded);
}

/**
 * A signed change in percent, one decimal; "±0 %" when it rounds to nothing.
 *
 * Example: `signedPercent(210.04)` → "+210 %"; `signedPercent(-15.3846)` → "−15.4 %".
 */
export function signedPercent(value: number): string {
  const text = displayNumber(Math.abs(value), 1);
  if (text === "0") return "±0 %";
  return `${value > 0 ? "+" : MINUS}${text} %`;
}

/**
 * A heater current change for one tube, in amps.
 *
 * Example: `currentChange(0.025)` → "+0.025 A"; `currentChange(0)` → "no change".
 */
export function currentChange(deltaAmps: number): string {
  const text = displayNumber(Math.abs(deltaAmps), 3);
  if (text === "0") return "no change";
  return `${deltaAmps > 0 ? "+" : MINUS}${text} A`;
}

/**
 * A resistance with an SI prefix.
 *
 * Example: `displayOhms(15400)` → "15.4 kΩ"; `displayOhms(470)` → "470 Ω"; `displayOhms(1e6)` → "1 MΩ".
 */
export function displayOhms(ohms: number): string {
  if (Math.abs(ohms) >= 1e6) return `${displayNumber(ohms / 1e6, 3)} MΩ`;
  if (Math.abs(ohms) >= 1e3) return `${displayNumber(ohms / 1e3, 3)} kΩ`;
  return `${displayNumber(ohms, 1)} Ω`;
}

/**
 * The heater supply in words.
 *
 * Example: `describeSupply({ kind: "series", milliamps: 150, warmUpSeconds: 11 })` → "a 150 mA series string (11 s warm-up)";
 * a 0 V parallel supply (a cold-cathode socket) → "no heater supply (cold cathode)".
 */
export function describeSupply(supply: HeaterSupplyInput): string {
  if (supply.kind === "parallel" && supply.volts === 0) return "no heater supply (cold cathode)";
  if (supply.kind === "parallel") return `a ${displayNumber(supply.volts)} V parallel heater supply`;
  return `a ${displayNumber(supply.milliamps)} mA series string${supply.warmUpSeconds !== undefined ? ` (${displayNumber(supply.warmUpSeconds)} s warm-up)` : ""}`;
}

// ── Ratings ───────────────────────────────────────────────────────────────────────────────

const RATING_TEXT: Record<string, { name: string; unit: string }> = {
  plateVolts: { name: "plate volts", unit: "V" },
  plateWatts: { name: "plate dissipation", unit: "W" },
  screenVolts: { name: "screen volts", unit: "V" },
  cathodeMilliamps: { name: "cathode current", unit: "mA" },
  heaterCathodeVolts: { name: "heater–cathode volts", unit: "V" },
  outputMilliamps: { name: "regulator current", unit: "mA" },
};

/** Headroom under this many percent is shown as tight (common practice, no source). */
export const TIGHT_HEADROOM_PERCENT = 10;

/**
 * One rating check as a line.
 *
 * Example: plateVolts of section 1, 250 V against 300 V derated to 240 V → "plate volts, section 1:
 * 250 V of 240 V (300 V × 0.8) — −4.2 % headroom".
 */
export function describeRating(check: RatingCheck): string {
  const text = RATING_TEXT[check.rating] ?? { name: check.rating, unit: "" };
  const unit = text.unit ? ` ${text.unit}` : "";
  const derated = check.deratedMax !== check.maxValue ? ` (${displayNumber(check.maxValue)}${unit} × ${displayNumber(check.deratedMax / check.maxValue, 3)})` : " max";
  return `${text.name}${check.section !== undefined ? `, section ${check.section}` : ""}: ${displayNumber(check.circuitValue)}${unit} of ${displayNumber(check.deratedMax)}${unit}${derated} — ${displayNumber(check.headroomPercent, 1)} % headroom`;
}

// ── Candidate rows ────────────────────────────────────────────────────────────────────────

export interface CandidateRow {
  rank: number;
  designation: string;
  href: string;
  relation: Candidate["relation"];
  relationText: string;
  pinFit: Candidate["pins"]["fit"];
  pinFitText: string;
  /** Rewire: removals, moves, jumpers in order; adapter: one line per connection. */
  pinSteps: string[];
  /** True for a rewire, whose steps must be done in order. */
  pinStepsOrdered: boolean;
  pinNote: string;
  heaterFit: Candidate["heater"]["fit"];
  heaterFitText: string;
  heaterDetails: string;
  /** Null when the heater current does not change. */
  heaterCurrentText: string | null;
  seriesStringNote: string | null;
  ratingsSummary: string;
  ratingsTight: boolean;
  ratingLines: string[];
  /** The ranker's remarks on ratings (ratings not stated in the data, typical point used). */
  ratingNotes: string[];
  characteristicsText: string;
  /** gm, µ and rp changes, each marked when beyond its tolerance in some section. */
  characteristicParts: Array<{ text: string; beyondTolerance: boolean }>;
  /** "beyond tolerance in sections 1, 2: gm, µ" or null. */
  toleranceNote: string | null;
  gainText: string;
  /** Other warnings (about the type itself, e.g. its relation to the socket type). */
  warnings: string[];
  explanation: string[];
  stockGood: number;
  stockHref: string;
}

export interface ExcludedRow {
  designation: string;
  href: string;
  reasons: string[];
  /** True when the type's sections are of another kind than the socket's (a pentode for a triode socket). */
  otherKindOfSection: boolean;
}

/** /tubes filtered to good tubes of one type (retired tubes are never counted as stock). */
export function goodStockHref(designation: string): string {
  return `/tubes?${new URLSearchParams({ type: designation, verdict: "good", state: "active" }).toString()}`;
}

export function typeHref(designation: string): string {
  return `/types/${encodeURIComponent(designation)}`;
}

const RELATION_TEXT: Record<Candidate["relation"], string> = { "same-type": "same type", variant: "variant", substitute: "substitute" };
const HEATER_FIT_TEXT: Record<Candidate["heater"]["fit"], string> = { same: "same heater", compatible: "compatible", "needs-change": "needs a change" };

function pinFitText(candidate: Candidate): string {
  const pins = candidate.pins;
  if (pins.fit === "direct") return "direct";
  if (pins.fit === "rewire") return `rewire · ${pins.operationCount} operation${pins.operationCount === 1 ? "" : "s"}`;
  return "adapter";
}

function pinSteps(candidate: Candidate): string[] {
  const pins = candidate.pins;
  if (pins.fit === "rewire") {
    return [...pins.removals.map((entry) => entry.description), ...pins.moves.map((entry) => entry.description), ...pins.jumpers.map((entry) => entry.description)];
  }
  if (pins.fit === "adapter") {
    return pins.adapterMap.map(
      (entry) => `${ADAPTER_ELEMENT_NAMES[entry.element] ?? entry.element.replace(/-/g, " ")}${entry.section !== undefined ? ` ${entry.section}` : ""}: socket ${entry.socketPins.join("+")} → tube ${entry.candidatePins.join("+")}`,
    );
  }
  return [];
}

/** Short element names for adapter wiring lines ("plate 1: socket 6 → tube 5"). */
const ADAPTER_ELEMENT_NAMES: Record<string, string> = {
  a: "plate",
  g1: "grid",
  g2: "screen",
  g3: "suppressor",
  k: "cathode",
  bp: "beam plates",
  s: "shield",
  ts: "target",
  f: "filament",
  fct: "filament tap",
  h: "heater",
  hct: "heater tap",
};

function pinNote(candidate: Candidate): string {
  const crossed = candidate.pins.sectionMapping.filter((entry) => entry.socketSection !== entry.candidateSection);
  if (crossed.length === 0) return "";
  return `sections crossed: ${candidate.pins.sectionMapping.map((entry) => `socket ${entry.socketSection} → tube ${entry.candidateSection}`).join(", ")}`;
}

function ratingsSummary(candidate: Candidate): { text: string; tight: boolean } {
  if (candidate.ratings.length === 0) return { text: "no rating could be checked", tight: true };
  const least = candidate.ratings.reduce((low, check) => (check.headroomPercent < low.headroomPercent ? check : low));
  const name = RATING_TEXT[least.rating]?.name ?? least.rating;
  return {
    text: `${displayNumber(least.headroomPercent, 1)} % headroom (${name}${least.section !== undefined ? `, section ${least.section}` : ""})`,
    tight: least.headroomPercent < TIGHT_HEADROOM_PERCENT,
  };
}

function characteristicParts(candidate: Candidate): Array<{ text: string; beyondTolerance: boolean }> {
  const c = candidate.characteristics;
  if (c.sections.length === 0) return [];
  const part = (name: string, value: number | null) => ({
    text: `${name} ${value === null ? "?" : signedPercent(value)}`,
    beyondTolerance: c.outsideTolerance.some((line) => line.includes(`: ${name} differs`)),
  });
  return [part("gm", c.gmDeltaPercent), part("µ", c.muDeltaPercent), part("rp", c.rpDeltaPercent)];
}

/**
 * The ranker's tolerance warnings folded into one line.
 *
 * Example: ["sections 1, 2: gm differs by +150 % (tolerance ±20 %)", "sections 1, 2: µ differs by +252.9 % (tolerance ±20 %)"]
 * → "beyond tolerance: gm, µ (sections 1, 2)".
 */
export function toleranceNote(outsideTolerance: readonly string[]): string | null {
  if (outsideTolerance.length === 0) return null;
  const names: string[] = [];
  const sections = new Set<string>();
  for (const line of outsideTolerance) {
    const match = /^(sections? [0-9, ]+): (\S+) differs/.exec(line);
    if (!match) return `beyond tolerance: ${outsideTolerance.join("; ")}`;
    sections.add(match[1]);
    if (!names.includes(match[2])) names.push(match[2]);
  }
  return `beyond tolerance: ${names.join(", ")} (${[...sections].join("; ")})`;
}

function gainText(candidate: Candidate): string {
  const c = candidate.characteristics;
  if (c.gainChangePercent === null) return "gain not compared (data lack µ or rp)";
  const worst = c.sections.find((section) => section.gainChangePercent === c.gainChangePercent) ?? c.sections[0];
  const load = worst?.plateLoadOhms !== null && worst?.plateLoadOhms !== undefined ? ` with RL ${displayOhms(worst.plateLoadOhms)}${worst.plateLoadAssumed ? " (assumed 2·rp)" : ""}` : "";
  return `common-cathode gain ${signedPercent(c.gainChangePercent)}${load}`;
}

/**
 * A ranked candidate as the table shows it.
 *
 * Example: 12AT7 in a 12AU7 socket → { pinFitText: "direct", heaterFitText: "same heater", … }.
 */
export function candidateRow(candidate: Candidate, rank: number): CandidateRow {
  const ratings = ratingsSummary(candidate);
  const warnings = candidate.explanation.filter((line) => line.startsWith("warning: ")).map((line) => line.slice("warning: ".length));
  const isRatingWarning = (line: string) => line.startsWith("ratings: ");
  const isCharacteristicWarning = (line: string) => /^sections? [0-9]/.test(line);
  const ratingLine = candidate.explanation.find((line) => line.startsWith("ratings: ") || line.startsWith("warning: ratings: ")) ?? "";
  const ratingNotes = ratingLine
    .replace(/^(?:warning: )?ratings: /, "")
    .split("; ")
    // The summary and the page's conditions already say these; the notes keep what is new.
    .filter((part) => part !== "" && !/^[0-9]+ checked, all within|^least headroom|^none could be checked|typical point, not measured/.test(part));
  return {
    rank,
    designation: candidate.designation,
    href: typeHref(candidate.designation),
    relation: candidate.relation,
    relationText: RELATION_TEXT[candidate.relation],
    pinFit: candidate.pins.fit,
    pinFitText: pinFitText(candidate),
    pinSteps: pinSteps(candidate),
    pinStepsOrdered: candidate.pins.fit === "rewire",
    pinNote: pinNote(candidate),
    heaterFit: candidate.heater.fit,
    heaterFitText: HEATER_FIT_TEXT[candidate.heater.fit],
    heaterDetails: candidate.heater.details,
    heaterCurrentText: candidate.heater.heaterCurrentDeltaAmps === 0 ? null : currentChange(candidate.heater.heaterCurrentDeltaAmps),
    seriesStringNote: candidate.heater.seriesStringNote ?? null,
    ratingsSummary: ratings.text,
    ratingsTight: ratings.tight,
    ratingLines: candidate.ratings.map(describeRating),
    ratingNotes,
    characteristicsText: characteristicParts(candidate).map((part) => part.text).join(" · ") || "not compared",
    characteristicParts: characteristicParts(candidate),
    toleranceNote: toleranceNote(candidate.characteristics.outsideTolerance),
    gainText: gainText(candidate),
    warnings: warnings.filter((line) => !isRatingWarning(line) && !isCharacteristicWarning(line)),
    explanation: candidate.explanation,
    stockGood: candidate.inStockGood,
    stockHref: goodStockHref(candidate.designation),
  };
}

export function excludedRow(entry: Excluded | SocketMiss): ExcludedRow {
  const designation = "designation" in entry ? entry.designation : entry.socketDesignation;
  return { designation, href: typeHref(designation), reasons: entry.reasons, otherKindOfSection: entry.reasons.some((reason) => reason.startsWith("the socket uses ")) };
}

// ── Whole answers ─────────────────────────────────────────────────────────────────────────

export interface SubstituteResultView {
  socketDesignation: string;
  socketHref: string;
  heading: string;
  conditions: string[];
  candidates: CandidateRow[];
  excluded: ExcludedRow[];
  /** Excluded types with sections of the right kind, first: these are the near misses. */
  nearMisses: ExcludedRow[];
  otherKinds: ExcludedRow[];
  whyNotSummary: string;
  counts: { direct: number; rewire: number; adapter: number; excluded: number };
}

/**
 * The ranked answer for the page.
 *
 * Example: 12AU7 on 12.6 V parallel → heading "31 types could serve a 12AU7 socket on a 12.6 V parallel heater supply".
 */
export function substituteResultView(answer: SubstituteAnswer): SubstituteResultView {
  const { ranking, socket } = answer;
  const candidates = ranking.candidates.map((candidate, index) => candidateRow(candidate, index + 1));
  const conditions: string[] = [];
  const hasTypicalPoint = socket.spec.sections.some((section) => section.typical.length > 0);
  conditions.push(
    answer.operatingFromTypical
      ? hasTypicalPoint
        ? `ratings and characteristics checked at ${socket.designation}'s datasheet typical point, not measured circuit values`
        : `${socket.designation}'s data give no typical point, so ratings and characteristics are only checked where you enter the circuit's values`
      : "ratings and characteristics checked at the circuit's values you entered (sections left blank use the typical point)",
  );
  conditions.push(answer.deratingFactor < 1 ? `derating: the circuit may use ${displayNumber(answer.deratingFactor * 100, 1)} % of each maximum` : "no derating: the published maxima as they stand");
  const count = (fit: string) => candidates.filter((row) => row.pinFit === fit).length;
  const excluded = ranking.excluded.map(excludedRow);
  return {
    socketDesignation: socket.designation,
    socketHref: typeHref(socket.designation),
    heading: `${candidates.length} type${candidates.length === 1 ? "" : "s"} could serve a ${socket.designation} socket on ${describeSupply(answer.heaterSupply)}`,
    conditions,
    candidates,
    excluded,
    nearMisses: excluded.filter((row) => !row.otherKindOfSection),
    otherKinds: excluded.filter((row) => row.otherKindOfSection),
    whyNotSummary: `Why not: ${excluded.length} type${excluded.length === 1 ? "" : "s"} excluded, each with every reason`,
    counts: { direct: count("direct"), rewire: count("rewire"), adapter: count("adapter"), excluded: ranking.excluded.length },
  };
}

export interface SocketRow extends CandidateRow {
  socketDesignation: string;
  socketHref: string;
  socketStockGood: number;
  socketStockHref: string;
  supplyText: string;
}

export interface SocketsResultView {
  heldDesignation: string;
  heldHref: string;
  heldGood: number;
  heldStockHref: string;
  heading: string;
  supplyText: string;
  fits: SocketRow[];
  misses: ExcludedRow[];
  nearMisses: ExcludedRow[];
  otherKinds: ExcludedRow[];
  whyNotSummary: string;
}

function socketRow(fit: SocketFit, rank: number, goodByDesignation: ReadonlyMap<string, number>): SocketRow {
  const supply: HeaterSupplyInput =
    fit.heaterSupply.kind === "parallel"
      ? { kind: "parallel", volts: fit.heaterSupply.volts }
      : { kind: "series", milliamps: fit.heaterSupply.amps * 1000, ...(fit.heaterSupply.stringWarmUpSeconds !== undefined ? { warmUpSeconds: fit.heaterSupply.stringWarmUpSeconds } : {}) };
  return {
    ...candidateRow(fit.candidate, rank),
    socketDesignation: fit.socketDesignation,
    socketHref: typeHref(fit.socketDesignation),
    socketStockGood: goodByDesignation.get(fit.socketDesignation) ?? 0,
    socketStockHref: goodStockHref(fit.socketDesignation),
    supplyText: describeSupply(supply),
  };
}

/**
 * The reverse answer for the page.
 *
 * Example: held 12AT7, each socket on its own heater → heading "12AT7 could fill 16 kinds of socket".
 */
export function socketsResultView(answer: SocketsAnswer): SocketsResultView {
  const fits = answer.fits.map((fit, index) => socketRow(fit, index + 1, answer.goodByDesignation));
  const misses = answer.misses.map(excludedRow);
  return {
    heldDesignation: answer.held.designation,
    heldHref: typeHref(answer.held.designation),
    heldGood: answer.heldGood,
    heldStockHref: goodStockHref(answer.held.designation),
    heading: `${answer.held.designation} could fill ${fits.length} kind${fits.length === 1 ? "" : "s"} of socket`,
    supplyText: answer.heaterSupply === null ? "each socket on its own type's heater voltage, in parallel" : `every socket on ${describeSupply(answer.heaterSupply)}`,
    fits,
    misses,
    nearMisses: misses.filter((row) => !row.otherKindOfSection),
    otherKinds: misses.filter((row) => row.otherKindOfSection),
    whyNotSummary: `Why not: ${misses.length} socket${misses.length === 1 ? "" : "s"} it cannot fill, each with every reason`,
  };
}

// ── The form's section rows ───────────────────────────────────────────────────────────────

export interface SectionRowView {
  section: number;
  label: string;
  hasScreen: boolean;
  /** The type's first typical point, shown as placeholders. */
  placeholders: { plateVolts: string; plateMilliamps: string; screenVolts: string; screenMilliamps: string };
}

/** Sections offered when the type is not yet known. */
export const UNKNOWN_TYPE_SECTION_ROWS = 2;

/**
 * One row per section of the socket type (kind and typical values as placeholders), or two
 * generic rows when the type is unknown.
 *
 * Example: 12AU7 → [{ section: 1, label: "Section 1 · triode", hasScreen: false, placeholders: { plateVolts: "250", plateMilliamps: "10.5", … } }, { section: 2, … }].
 */
export function sectionRowsFor(spec: TubeTypeSpec | undefined): SectionRowView[] {
  if (spec === undefined) {
    return Array.from({ length: UNKNOWN_TYPE_SECTION_ROWS }, (_, index) => ({
      section: index + 1,
      label: `Section ${index + 1}`,
      hasScreen: true,
      placeholders: { plateVolts: "", plateMilliamps: "", screenVolts: "", screenMilliamps: "" },
    }));
  }
  return spec.sections.slice(0, MAX_FORM_SECTIONS).map((section) => {
    const typical = section.typical[0];
    const hasScreen = section.kind === "pentode" || section.kind === "beam-tetrode" || section.kind === "heptode";
    return {
      section: section.index,
      label: `Section ${section.index} · ${section.kind}${section.label === undefined ? "" : `, ${section.label}`}`,
      hasScreen,
      placeholders: {
        plateVolts: typical ? displayNumber(typical.plateVolts) : "",
        plateMilliamps: typical ? displayNumber(typical.plateMilliamps) : "",
        screenVolts: typical?.screenVolts !== undefined ? displayNumber(typical.screenVolts) : "",
        screenMilliamps: typical?.screenMilliamps !== undefined ? displayNumber(typical.screenMilliamps) : "",
      },
    };
  });
}
