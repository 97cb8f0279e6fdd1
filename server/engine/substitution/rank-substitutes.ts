/** The ranker: every library type judged against one socket, with its reasons. */
import { sectionMaxRatings, type TubeTypeSpec } from "../tube-types/index.ts";
import type {
  Candidate,
  CircuitOperatingValues,
  Excluded,
  PinFit,
  PinFitKind,
  SectionMappingEntry,
  SocketDescription,
  StockCount,
  SubstituteRanking,
} from "./types.ts";
import { compareHeaters, heaterKindProblem, heaterModeOnSupply, type HeaterMode } from "./heater-fit.ts";
import { bestWiringPlan, describeSocketWiring, enumerateSectionMappings, type SocketWiring, type WiringPlan } from "./pin-fit.ts";
import { checkRatings } from "./ratings.ts";
import { compareGlow } from "./glow-fit.ts";
import { compareCharacteristics, DEFAULT_TOLERANCES, type CircuitPoint } from "./characteristics.ts";
import { buildNameIndex, countGoodInStock, indexStock, relationTo } from "./identity.ts";
import { scoreCandidate } from "./score.ts";
import { formatNumber } from "./format.ts";

/**
 * Fraction of each maximum rating the circuit may use by default: 1, the published maxima as
 * they stand. Datasheet typical operating points often sit within a few percent of the
 * dissipation limit, so any default below about 0.95 would reject the socket's own type at its
 * own typical point. Pass e.g. 0.8 for a margin (common practice, no source).
 */
export const DEFAULT_DERATING_FACTOR = 1;

type RunningHeater = Extract<HeaterMode, { ok: true }>;

interface RankingContext {
  socket: SocketDescription;
  socketHeater: RunningHeater;
  wiring: SocketWiring;
  operating: CircuitOperatingValues[];
  defaultedSections: number[];
  circuitPoints: Map<number, CircuitPoint>;
  nameIndex: Map<string, TubeTypeSpec>;
  stockIndex: Map<string, number>;
  deratingFactor: number;
}

function validateSocket(socket: SocketDescription): void {
  const factor = socket.deratingFactor;
  if (factor !== undefined && !(factor > 0 && factor <= 1)) throw new RangeError(`deratingFactor must be in (0, 1], got ${factor}`);
  const tolerances = socket.tolerances;
  if (tolerances !== undefined) {
    for (const [name, value] of Object.entries(tolerances)) {
      if (!(Number.isFinite(value) && value > 0)) throw new RangeError(`tolerances.${name} must be a positive number, got ${value}`);
    }
  }
  const supply = socket.heaterSupply;
  const supplyValue = supply.kind === "parallel" ? supply.volts : supply.amps;
  if (!(Number.isFinite(supplyValue) && supplyValue >= 0)) throw new RangeError(`heater supply ${supply.kind === "parallel" ? "volts" : "amps"} must be a non-negative number`);
  for (const values of socket.operating ?? []) {
    for (const [name, value] of Object.entries(values)) {
      if (typeof value === "number" && !Number.isFinite(value)) throw new RangeError(`operating section ${values.section}: ${name} is not a finite number`);
    }
  }
}

function resolveOperating(socket: SocketDescription, usedSections: readonly number[]): { operating: CircuitOperatingValues[]; defaultedSections: number[] } {
  const operating: CircuitOperatingValues[] = [];
  const defaultedSections: number[] = [];
  for (const section of usedSections) {
    const given = socket.operating?.find((entry) => entry.section === section);
    if (given !== undefined) {
      operating.push(given);
      continue;
    }
    const typical = socket.socketType.sections.find((entry) => entry.index === section)?.typical[0];
    if (typical === undefined) continue;
    defaultedSections.push(section);
    operating.push({
      section,
      plateVolts: typical.plateVolts,
      plateMilliamps: typical.plateMilliamps,
      ...(typical.screenVolts !== undefined ? { screenVolts: typical.screenVolts } : {}),
      ...(typical.screenMilliamps !== undefined ? { screenMilliamps: typical.screenMilliamps } : {}),
    });
  }
  return { operating, defaultedSections };
}

/**
 * Ranks every type of `library` as a substitute for the socket described, from first principles:
 * pins (direct, rewire with the exact moves, or adapter), heater on this supply, maximum
 * ratings against the circuit's real values after derating, small-signal characteristics and
 * their effect on a common-cathode stage's gain, and good tubes in stock.
 *
 * Candidates are sorted by `score` (see `scoreCandidate`): same type or variant first, then
 * direct pin fits, heater fit, characteristic closeness, rating headroom and stock. Types that
 * cannot serve are in `excluded`, each with every reason found.
 *
 * Throws RangeError when the description is inconsistent: the socket's own type cannot run on
 * its heater supply, a derating factor outside (0, 1], non-positive tolerances or non-finite
 * operating values.
 *
 * Example: a 12AU7 socket on 12.6 V parallel at 250 V, 8 mA per section, library [12AU7, 12AT7,
 * 6CG7] → candidates 12AU7 (same type, direct), 12AT7 (direct, gain +210 % with RL assumed
 * 2·rp); excluded 6CG7 ("heater 6.3 V 0.6 A cannot run on a 12.6 V parallel supply").
 */
export function rankSubstitutes(socket: SocketDescription, library: readonly TubeTypeSpec[], stock: readonly StockCount[]): SubstituteRanking {
  validateSocket(socket);
  const socketHeater = heaterModeOnSupply(socket.socketType, socket.heaterSupply);
  if (!socketHeater.ok) throw new RangeError(`the socket's own type cannot run on its heater supply: ${socketHeater.reason}`);
  const wiring = describeSocketWiring(socket.socketType, socketHeater, socket.usedPins);
  const { operating, defaultedSections } = resolveOperating(socket, wiring.usedSections);
  const circuitPoints = new Map<number, CircuitPoint>();
  for (const values of operating) {
    circuitPoints.set(values.section, { plateVolts: values.plateVolts, plateMilliamps: values.plateMilliamps, ...(values.plateLoadOhms !== undefined ? { plateLoadOhms: values.plateLoadOhms } : {}) });
  }
  const context: RankingContext = {
    socket,
    socketHeater,
    wiring,
    operating,
    defaultedSections,
    circuitPoints,
    nameIndex: buildNameIndex([...library, socket.socketType]),
    stockIndex: indexStock(stock),
    deratingFactor: socket.deratingFactor ?? DEFAULT_DERATING_FACTOR,
  };

  const candidates: Candidate[] = [];
  const excluded: Excluded[] = [];
  for (const candidate of library) {
    const verdict = judgeCandidate(context, candidate);
    if ("reasons" in verdict) excluded.push(verdict);
    else candidates.push(verdict);
  }
  candidates.sort((left, right) => right.score - left.score || compareText(left.designation, right.designation));
  excluded.sort((left, right) => compareText(left.designation, right.designation));
  return { candidates, excluded };
}

function compareText(left: string, right: string): number {
  return left < right ? -1 : left > right ? 1 : 0;
}

function sameBaseFamily(socketType: TubeTypeSpec, candidate: TubeTypeSpec): boolean {
  if (socketType.base !== candidate.base) return false;
  // "other" lumps unrelated bases together; only a shared basing code proves the same socket.
  if (socketType.base === "other") return socketType.basingCode !== undefined && socketType.basingCode === candidate.basingCode;
  return true;
}

function describeMapping(mapping: readonly SectionMappingEntry[]): string {
  if (mapping.every((entry) => entry.socketSection === entry.candidateSection)) return "";
  return ` with sections crossed (${mapping.map((entry) => `socket section ${entry.socketSection} → tube section ${entry.candidateSection}`).join(", ")})`;
}

function judgeCandidate(context: RankingContext, candidate: TubeTypeSpec): Candidate | Excluded {
  const { socket, wiring } = context;
  const socketType = socket.socketType;
  const reasons: string[] = [];

  const relation = relationTo(socketType, candidate, context.nameIndex);
  const kindProblem = heaterKindProblem(socketType, candidate);
  if (kindProblem !== null) reasons.push(kindProblem);
  const candidateHeater = heaterModeOnSupply(candidate, socket.heaterSupply);
  if (!candidateHeater.ok) reasons.push(candidateHeater.reason);
  const mappings = enumerateSectionMappings(socketType, wiring.usedSections, candidate);
  if (!mappings.ok) reasons.push(mappings.reason);
  // Sections of one kind carry the same ratings in practice, so the first mapping decides
  // exclusion; the ratings are checked again below when the chosen wiring maps differently.
  const ratingsUnder = (sectionMap: ReadonlyMap<number, number> | undefined) =>
    checkRatings(
      candidate.designation,
      (socketSection) => sectionMaxRatings(candidate, sectionMap?.get(socketSection) ?? socketSection),
      context.operating,
      context.deratingFactor,
      (socketSection) => socketType.sections.find((section) => section.index === socketSection)?.kind === "regulator",
    );
  let ratings = ratingsUnder(mappings.ok ? mappings.mappings[0] : undefined);
  reasons.push(...ratings.failures);
  const glowUnder = (sectionMapping: readonly SectionMappingEntry[]) => compareGlow(socketType, candidate, sectionMapping, context.operating);
  if (mappings.ok) reasons.push(...glowUnder(mappingEntries(mappings.mappings[0])).failures);

  if (!candidateHeater.ok || !mappings.ok) return { designation: candidate.designation, reasons };

  const tolerances = socket.tolerances ?? DEFAULT_TOLERANCES;
  const distanceCache = new Map<Map<number, number>, number>();
  const distanceOf = (sectionMap: Map<number, number>): number => {
    let distance = distanceCache.get(sectionMap);
    if (distance === undefined) {
      distance = compareCharacteristics(socketType, candidate, mappingEntries(sectionMap), context.circuitPoints, tolerances, false).distance;
      distanceCache.set(sectionMap, distance);
    }
    return distance;
  };
  const sameBase = sameBaseFamily(socketType, candidate);
  const plan = bestWiringPlan(wiring, candidate, candidateHeater, mappings.mappings, distanceOf, sameBase);
  reasons.push(...plan.problems);

  let fit: PinFitKind | null = null;
  if (plan.problems.length === 0) {
    const solderable = plan.tiePointBlockerCount === 0;
    if (sameBase && solderable && plan.operationCount === 0) fit = "direct";
    else if (sameBase && solderable && socket.allowRewire) fit = "rewire";
    else if (socket.allowAdapter) fit = "adapter";
    else if (!sameBase) {
      reasons.push(`${candidate.designation}'s base is ${candidate.base}, the socket's is ${socketType.base}, and an adapter is not allowed`);
    } else {
      reasons.push(...plan.internalConnectionConflicts);
      reasons.push(...plan.tiePointBlockers);
      if (plan.operationCount > 0) {
        reasons.push(`pins differ and ${socket.allowRewire ? "an adapter is not allowed" : "neither rewiring nor an adapter is allowed"}; a rewire would need: ${describeWork(plan).join("; ")}`);
      }
    }
  }
  if (reasons.length > 0 || fit === null) return { designation: candidate.designation, reasons };
  ratings = ratingsUnder(new Map(plan.sectionMapping.map((entry) => [entry.socketSection, entry.candidateSection])));
  const glow = glowUnder(plan.sectionMapping);
  if (ratings.failures.length > 0 || glow.failures.length > 0) return { designation: candidate.designation, reasons: [...ratings.failures, ...glow.failures] };

  const characteristics = compareCharacteristics(socketType, candidate, plan.sectionMapping, context.circuitPoints, tolerances);
  const heater = compareHeaters(socketType, candidate, context.socketHeater, candidateHeater, socket.heaterSupply, fit === "rewire" && plan.heaterLeadsMove);
  const pins = buildPinFit(fit, plan, socketType, candidate);
  const inStockGood = countGoodInStock(candidate, context.stockIndex);
  const leastHeadroom = ratings.checks.reduce<{ percent: number; text: string } | null>((least, check) => {
    if (least !== null && least.percent <= check.headroomPercent) return least;
    return { percent: check.headroomPercent, text: `${check.rating}${check.section !== undefined ? ` of section ${check.section}` : ""}` };
  }, null);

  const score = scoreCandidate({
    relation: relation.relation,
    pinFit: fit,
    operationCount: plan.operationCount,
    heaterFit: heater.fit,
    characteristicDistance: characteristics.distance,
    leastHeadroomPercent: leastHeadroom?.percent ?? null,
    inStockGood,
  });

  const explanation: string[] = [relation.description];
  if (relation.warning) explanation.push(`warning: ${relation.warning}`);
  explanation.push(pins.note);
  explanation.push(`heater: ${heater.details}`);
  if (heater.seriesStringNote) explanation.push(`series string: ${heater.seriesStringNote}`);
  explanation.push(describeRatings(context, ratings.checks.length, leastHeadroom, ratings.unchecked));
  for (const note of glow.notes) explanation.push(note.startsWith("warning: ") ? note : `regulation: ${note}`);
  explanation.push(`characteristics: ${characteristics.note}`);
  for (const warning of characteristics.outsideTolerance) explanation.push(`warning: ${warning}`);
  if (fit === "rewire") for (const conflict of plan.internalConnectionConflicts) explanation.push(`note: ${conflict}; the rewire takes that lead off`);
  for (const note of fit === "adapter" ? plan.adapterNotes : plan.rewireNotes) explanation.push(`note: ${note}`);
  for (const note of wiring.notes) explanation.push(`note: ${note}`);
  explanation.push(`${inStockGood} good in stock`);

  return { designation: candidate.designation, relation: relation.relation, score, pins, heater, ratings: ratings.checks, characteristics, inStockGood, explanation };
}

function mappingEntries(sectionMap: ReadonlyMap<number, number>): SectionMappingEntry[] {
  return [...sectionMap].map(([socketSection, candidateSection]) => ({ socketSection, candidateSection }));
}

function describeWork(plan: WiringPlan): string[] {
  return [...plan.removals.map((entry) => entry.description), ...plan.moves.map((entry) => entry.description), ...plan.jumpers.map((entry) => entry.description)];
}

function buildPinFit(fit: PinFitKind, plan: WiringPlan, socketType: TubeTypeSpec, candidate: TubeTypeSpec): PinFit {
  const mappingText = describeMapping(plan.sectionMapping);
  if (fit === "direct") {
    return {
      fit,
      moves: [],
      jumpers: [],
      removals: [],
      adapterMap: [],
      sectionMapping: plan.sectionMapping,
      operationCount: 0,
      note: `direct: same ${socketType.base} base and every wired socket pin meets the same element on ${candidate.designation}${mappingText}`,
    };
  }
  if (fit === "rewire") {
    const work = describeWork(plan);
    return {
      fit,
      moves: plan.moves,
      jumpers: plan.jumpers,
      removals: plan.removals,
      adapterMap: [],
      sectionMapping: plan.sectionMapping,
      operationCount: plan.operationCount,
      note: `rewire at the socket, ${plan.operationCount} operation${plan.operationCount === 1 ? "" : "s"}${mappingText}, in this order: ${work.join("; ")}`,
    };
  }
  const connections = plan.adapterMap.map(
    (entry) => `${entry.element}${entry.section !== undefined ? ` (section ${entry.section})` : ""}: socket ${entry.socketPins.join("+")} → tube ${entry.candidatePins.join("+")}`,
  );
  const kind = socketType.base === candidate.base ? `a pin-crossing ${socketType.base} adapter` : `a ${socketType.base}-to-${candidate.base} adapter`;
  return {
    fit,
    moves: [],
    jumpers: [],
    removals: [],
    adapterMap: plan.adapterMap,
    sectionMapping: plan.sectionMapping,
    operationCount: 0,
    note: `adapter: ${kind}${mappingText} connecting ${connections.join(", ")}; check the height and any tube shield`,
  };
}

function describeRatings(context: RankingContext, checked: number, least: { percent: number; text: string } | null, unchecked: string[]): string {
  const parts: string[] = [];
  if (checked === 0 || least === null) parts.push("warning: ratings: none could be checked against the circuit");
  else parts.push(`ratings: ${checked} checked, all within ${context.deratingFactor < 1 ? `${formatNumber(context.deratingFactor * 100, 1)} % of ` : ""}the maxima; least headroom ${formatNumber(least.percent, 1)} % (${least.text})`);
  if (unchecked.length > 0) parts.push(`not rated in the data, unchecked: ${unchecked.join(", ")}`);
  if (context.defaultedSections.length > 0) {
    parts.push(`section${context.defaultedSections.length === 1 ? "" : "s"} ${context.defaultedSections.join(", ")} checked at ${context.socket.socketType.designation}'s datasheet typical point, not measured circuit values`);
  }
  return parts.join("; ");
}

