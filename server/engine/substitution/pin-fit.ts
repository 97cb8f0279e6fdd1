/**
 * Pin fit: which socket leads land on which substitute pins, and the least soldering that
 * makes every lead land on the electrode it served.
 *
 * The socket is described as leads by function ("role"): an electrode of one section
 * (`e:a:1`), one side of the heater supply (`heater:A`, `heater:B`) or a tie point
 * (`tie:7`). The substitute needs each role on certain pins. For one section mapping and one
 * heater orientation, a role's leads already on a right pin stay; the others move to the pins
 * still lacking that role; surplus leads come off when they would touch something else; pins
 * still lacking the role get a jumper. The plan with the fewest operations over all mappings
 * and orientations wins.
 */
import type { PinAssignment, SectionKind, TubeTypeSpec } from "../tube-types/index.ts";
import type { AdapterConnection, PinJumper, PinMove, PinRemoval, SectionMappingEntry } from "./types.ts";
import type { HeaterMode } from "./heater-fit.ts";
import { comparePinLabels, describeElement } from "./format.ts";

/**
 * Sections the enumeration of section mappings may visit; 6! covers any real envelope
 * (the most sections in one receiving tube is four). Exceeding it reports a problem.
 */
export const MAX_SECTION_MAPPINGS = 720;

type RunningHeater = Extract<HeaterMode, { ok: true }>;

const HEATER_ELEMENTS = new Set(["h", "hct", "f", "fct"]);
/** Electrodes that a section cannot work without; a socket lead for one with no counterpart is fatal. */
const ESSENTIAL_ELEMENTS = new Set(["a", "g1", "g2", "k", "ts"]);

interface RoleInfo {
  element: string;
  section?: number;
  label: string;
}

export interface SocketWiring {
  /** role → socket pins carrying a lead for it (sorted). */
  leads: Map<string, string[]>;
  roleInfo: Map<string, RoleInfo>;
  /** The socket type's own element at each pin, for naming leads. */
  elementAtPin: Map<string, { element: string; section?: number }>;
  /** Socket sections (1-based) that have at least one electrode lead, ascending. */
  usedSections: number[];
  tiePoints: string[];
  notes: string[];
}

function normalisedSection(spec: TubeTypeSpec, pin: PinAssignment): number {
  if (pin.section !== undefined) return pin.section;
  // One-section types often omit the section on their electrodes; a shield or a common electrode stays 0.
  return spec.sections.length === 1 && pin.element !== "s" ? 1 : 0;
}

// Role keys are built for every pin of every plan; reusing one string per (element, section) spares the hashing.
const electrodeRoleKeys = new Map<string, string[]>();

function electrodeRole(element: string, section: number): string {
  let keys = electrodeRoleKeys.get(element);
  if (keys === undefined) {
    keys = [];
    electrodeRoleKeys.set(element, keys);
  }
  let key = keys[section];
  if (key === undefined) {
    key = `e:${element}:${section}`;
    if (section >= 0 && section < 64) keys[section] = key;
  }
  return key;
}

function roleLabel(spec: TubeTypeSpec, element: string, section: number): string {
  return describeElement(element, section, kindOf(spec, section));
}

function addLead(map: Map<string, string[]>, role: string, pin: string): void {
  const pins = map.get(role);
  if (pins === undefined) map.set(role, [pin]);
  else if (!pins.includes(pin)) pins.push(pin);
}

/**
 * The leads of a socket wired for `socketType` with its heater running in `heaterMode`.
 * `usedPins` narrows the electrode leads; NC pins listed there become tie points.
 *
 * Example: 12AU7 on 6.3 V parallel → heater:A on pins 4 and 5, heater:B on pin 9, and
 * e:a:1 on pin 6, e:g1:1 on 7, e:k:1 on 8, e:a:2 on 1, e:g1:2 on 2, e:k:2 on 3.
 */
export function describeSocketWiring(socketType: TubeTypeSpec, heaterMode: RunningHeater, usedPins?: readonly string[]): SocketWiring {
  const leads = new Map<string, string[]>();
  const roleInfo = new Map<string, RoleInfo>();
  const elementAtPin = new Map<string, { element: string; section?: number }>();
  const notes: string[] = [];
  const used = usedPins === undefined ? null : new Set(usedPins);
  const sections = new Set<number>();

  for (const pin of socketType.pins) {
    const section = normalisedSection(socketType, pin);
    if (!elementAtPin.has(pin.pin) || elementAtPin.get(pin.pin)?.element === "nc") {
      elementAtPin.set(pin.pin, section > 0 ? { element: pin.element, section } : { element: pin.element });
    }
    if (HEATER_ELEMENTS.has(pin.element) || pin.element === "nc" || pin.element === "ic") continue;
    if (used !== null && !used.has(pin.pin)) continue;
    const role = electrodeRole(pin.element, section);
    addLead(leads, role, pin.pin);
    roleInfo.set(role, { element: pin.element, ...(section > 0 ? { section } : {}), label: roleLabel(socketType, pin.element, section) });
    if (section > 0) sections.add(section);
  }

  for (const [leg, pins] of [["A", heaterMode.legA], ["B", heaterMode.legB]] as const) {
    for (const pin of pins) addLead(leads, `heater:${leg}`, pin);
    if (pins.length > 0) roleInfo.set(`heater:${leg}`, { element: "h", label: `heater supply ${leg}` });
  }

  const tiePoints: string[] = [];
  if (used !== null) {
    for (const pinLabel of [...used].sort(comparePinLabels)) {
      const assignments = socketType.pins.filter((pin) => pin.pin === pinLabel);
      const onlyUnconnected = assignments.every((pin) => pin.element === "nc" || pin.element === "ic");
      if (!onlyUnconnected) continue;
      if (assignments.some((pin) => pin.element === "ic")) {
        notes.push(`the socket lists pin ${pinLabel} as wired, but it is an internal connection of ${socketType.designation} itself`);
      }
      tiePoints.push(pinLabel);
      addLead(leads, `tie:${pinLabel}`, pinLabel);
      roleInfo.set(`tie:${pinLabel}`, { element: "tie", label: `tie point on pin ${pinLabel}` });
    }
  }
  for (const pins of leads.values()) pins.sort(comparePinLabels);
  return { leads, roleInfo, elementAtPin, usedSections: [...sections].sort((left, right) => left - right), tiePoints, notes };
}

// ── Section mappings ─────────────────────────────────────────────────────────────────────────

export type SectionMappingsResult = { ok: true; mappings: Map<number, number>[] } | { ok: false; reason: string };

function kindOf(spec: TubeTypeSpec, index: number): SectionKind | undefined {
  return spec.sections.find((section) => section.index === index)?.kind;
}

/**
 * Every injective assignment of the socket's used sections to substitute sections of the same
 * kind and label (a symmetric dual triode offers both orders; display segment "a" only ever
 * meets segment "a"). Identity-like orders come first.
 *
 * Returns `{ ok: false, reason }` when no assignment exists or the enumeration passes
 * `MAX_SECTION_MAPPINGS`.
 *
 * Example: 12AU7 socket (sections 1, 2 used) against 6CG7 → two mappings, {1→1, 2→2} then {1→2, 2→1}.
 */
export function enumerateSectionMappings(socketType: TubeTypeSpec, usedSections: readonly number[], candidate: TubeTypeSpec): SectionMappingsResult {
  const candidateSections = [...candidate.sections].sort((left, right) => left.index - right.index);
  const mappings: Map<number, number>[] = [];
  let overflow = false;
  const current = new Map<number, number>();
  const taken = new Set<number>();

  const visit = (position: number): void => {
    if (overflow) return;
    if (position === usedSections.length) {
      if (mappings.length >= MAX_SECTION_MAPPINGS) {
        overflow = true;
        return;
      }
      mappings.push(new Map(current));
      return;
    }
    const socketSection = usedSections[position];
    const wanted = socketType.sections.find((section) => section.index === socketSection);
    for (const section of candidateSections) {
      if (taken.has(section.index) || section.kind !== wanted?.kind || section.label !== wanted.label) continue;
      taken.add(section.index);
      current.set(socketSection, section.index);
      visit(position + 1);
      current.delete(socketSection);
      taken.delete(section.index);
    }
  };
  visit(0);

  if (overflow) return { ok: false, reason: `more than ${MAX_SECTION_MAPPINGS} section mappings; too many sections to compare` };
  if (mappings.length === 0) {
    const describe = (section: { kind: SectionKind; label?: string } | undefined) => (section === undefined ? "unknown" : section.label === undefined ? section.kind : `${section.kind} "${section.label}"`);
    const wanted = usedSections.map((index) => `${describe(socketType.sections.find((section) => section.index === index))} (section ${index})`).join(", ");
    const offered = candidateSections.map((section) => describe(section)).join(", ") || "no sections";
    return { ok: false, reason: `the socket uses ${wanted || "no sections"}; ${candidate.designation} offers ${offered}` };
  }
  return { ok: true, mappings };
}

// ── Plans ────────────────────────────────────────────────────────────────────────────────────

interface CandidatePinStatus {
  roles: string[];
  internalConnection: boolean;
  /** An electrode of a section the socket does not use. */
  unusedSectionElectrode: boolean;
}

export interface WiringPlan {
  sectionMapping: SectionMappingEntry[];
  heaterLegsSwapped: boolean;
  moves: PinMove[];
  jumpers: PinJumper[];
  removals: PinRemoval[];
  adapterMap: AdapterConnection[];
  /** Fatal for any fit: the substitute cannot serve the socket's functions. */
  problems: string[];
  /** Socket leads that land on an internal connection of the substitute, in words. */
  internalConnectionConflicts: string[];
  /** Tie points that land on a live pin with no free pin to move to: they rule out direct fit and rewire, not an adapter. */
  tiePointBlockers: string[];
  tiePointBlockerCount: number;
  rewireNotes: string[];
  adapterNotes: string[];
  heaterLeadsMove: boolean;
  operationCount: number;
  /** Number of problems; `problems` holds their text only when the plan was built with detail. */
  problemCount: number;
}

interface ParsedRole {
  kind: "electrode" | "heater" | "tie";
  element: string;
  section: number;
}

// Roles come from a small vocabulary (a few elements × a few sections), so parsing each once pays.
const parsedRoles = new Map<string, ParsedRole>();

function parseRole(role: string): ParsedRole {
  let parsed = parsedRoles.get(role);
  if (parsed !== undefined) return parsed;
  const parts = role.split(":");
  if (parts[0] === "e") parsed = { kind: "electrode", element: parts[1], section: Number(parts[2]) };
  else if (parts[0] === "heater") parsed = { kind: "heater", element: "h", section: 0 };
  else parsed = { kind: "tie", element: "tie", section: 0 };
  parsedRoles.set(role, parsed);
  return parsed;
}

/** A substitute's pins sorted by what they carry; independent of section mapping and heater orientation. */
export interface CandidateLayout {
  electrodes: Array<{ pin: string; element: string; section: number }>;
  internalConnections: string[];
  heaterPins: string[];
}

/**
 * Sorts a type's pins into electrodes (with normalised sections), internal connections and
 * heater pins, once per candidate.
 *
 * Example: 6CG7 → 7 electrodes (shield included, section 0), no IC, heater pins 4 and 5.
 */
export function layoutOf(candidate: TubeTypeSpec): CandidateLayout {
  const layout: CandidateLayout = { electrodes: [], internalConnections: [], heaterPins: [] };
  for (const pin of candidate.pins) {
    if (pin.element === "nc") continue;
    if (pin.element === "ic") layout.internalConnections.push(pin.pin);
    else if (HEATER_ELEMENTS.has(pin.element)) layout.heaterPins.push(pin.pin);
    else layout.electrodes.push({ pin: pin.pin, element: pin.element, section: normalisedSection(candidate, pin) });
  }
  return layout;
}

const UNCONNECTED_SOCKET_PIN: { element: string; section?: number } = { element: "nc" };
const NO_PINS: readonly string[] = [];

function describePinOf(candidate: TubeTypeSpec, status: ReadonlyMap<string, CandidatePinStatus>, pin: string): string {
  const entry = status.get(pin);
  if (entry === undefined) return "no connection";
  if (entry.internalConnection) return "an internal connection (IC)";
  const names = candidate.pins
    .filter((assignment) => assignment.pin === pin && assignment.element !== "nc")
    .map((assignment) => `its ${roleLabel(candidate, assignment.element, normalisedSection(candidate, assignment))}`);
  const unused = entry.unusedSectionElectrode ? ", in a section this socket does not use" : "";
  return `${names.join(" and ")}${unused}`;
}

interface RoleWork {
  moves: number;
  jumpers: number;
  removals: number;
  problems: number;
}

/**
 * The work one role needs, counted without building any text; must agree with the detailed
 * branch of `planWiring` (a test compares the two over the fixture library). For a role with
 * m leads on wrong pins, c of them touching something else, and n pins lacking it:
 * moves = min(m, n), jumpers = n − moves, removals = max(0, c − moves).
 */
function countRoleWork(
  status: ReadonlyMap<string, CandidatePinStatus>,
  role: string,
  parsed: ParsedRole,
  socketPins: readonly string[],
  candidatePins: readonly string[],
  needs: ReadonlyMap<string, string[]>,
  work: RoleWork,
): void {
  if (socketPins.length === 0) {
    if (parsed.element === "g3" || parsed.element === "bp") {
      if ((needs.get(electrodeRole("k", parsed.section)) ?? NO_PINS).length === 0) work.problems += 1;
      else work.jumpers += candidatePins.length;
    } else if (parsed.element !== "s") {
      work.problems += 1;
    }
    return;
  }
  if (candidatePins.length === 0) {
    if (parsed.kind === "electrode" && ESSENTIAL_ELEMENTS.has(parsed.element)) {
      work.problems += 1;
      return;
    }
    for (const pin of socketPins) if (isConflict(status, pin, role)) work.removals += 1;
    return;
  }
  let misplaced = 0;
  let conflicting = 0;
  for (const pin of socketPins) {
    if (candidatePins.includes(pin)) continue;
    misplaced += 1;
    if (isConflict(status, pin, role)) conflicting += 1;
  }
  let missing = 0;
  for (const pin of candidatePins) if (!socketPins.includes(pin)) missing += 1;
  const moves = Math.min(misplaced, missing);
  work.moves += moves;
  work.jumpers += missing - moves;
  work.removals += Math.max(0, conflicting - moves);
}

function statusFor(status: Map<string, CandidatePinStatus>, pin: string): CandidatePinStatus {
  let entry = status.get(pin);
  if (entry === undefined) {
    entry = { roles: [], internalConnection: false, unusedSectionElectrode: false };
    status.set(pin, entry);
  }
  return entry;
}

function isConflict(status: ReadonlyMap<string, CandidatePinStatus>, pin: string, role: string): boolean {
  const entry = status.get(pin);
  if (entry === undefined) return false;
  if (entry.internalConnection || entry.unusedSectionElectrode) return true;
  for (const other of entry.roles) if (other !== role) return true;
  return false;
}

function candidateRoleLabel(candidate: TubeTypeSpec, role: string): string {
  const parsed = parseRole(role);
  if (parsed.kind === "heater") return `heater supply ${role.slice("heater:".length)}`;
  if (parsed.kind === "tie") return `tie point`;
  return roleLabel(candidate, parsed.element, parsed.section);
}

/**
 * The rewire plan and the adapter map for one section mapping and heater orientation. With
 * `detail` false only the counts (operations, problems) are filled in: the search over
 * mappings needs nothing more, and building the words is most of the cost.
 *
 * Example: 12AU7 socket on 6.3 V parallel (heater A on 4+5, B on 9) against 6CG7 (heater on
 * 4–5 only), identity mapping, legs unswapped → removals [pin 5 lead A], moves [9 → 5].
 */
export function planWiring(
  wiring: SocketWiring,
  candidate: TubeTypeSpec,
  candidateHeater: RunningHeater,
  sectionMap: Map<number, number>,
  swapHeaterLegs: boolean,
  detail = true,
  layout: CandidateLayout = layoutOf(candidate),
): WiringPlan {
  const socketSectionOf = new Map<number, number>();
  for (const [socketSection, candidateSection] of sectionMap) socketSectionOf.set(candidateSection, socketSection);

  // Candidate pins by role, in the socket's section numbering.
  const needs = new Map<string, string[]>();
  const status = new Map<string, CandidatePinStatus>();
  const unusedSectionPins = new Map<number, string[]>();
  for (const pin of layout.internalConnections) statusFor(status, pin).internalConnection = true;
  for (const electrode of layout.electrodes) {
    const candidateSection = electrode.section;
    const socketSection = candidateSection > 0 ? socketSectionOf.get(candidateSection) : 0;
    if (socketSection === undefined) {
      statusFor(status, electrode.pin).unusedSectionElectrode = true;
      const pins = unusedSectionPins.get(candidateSection);
      if (pins === undefined) unusedSectionPins.set(candidateSection, [electrode.pin]);
      else pins.push(electrode.pin);
      continue;
    }
    const role = electrodeRole(electrode.element, socketSection);
    addLead(needs, role, electrode.pin);
    statusFor(status, electrode.pin).roles.push(role);
  }
  const legA = swapHeaterLegs ? candidateHeater.legB : candidateHeater.legA;
  const legB = swapHeaterLegs ? candidateHeater.legA : candidateHeater.legB;
  for (const pin of legA) {
    addLead(needs, "heater:A", pin);
    statusFor(status, pin).roles.push("heater:A");
  }
  for (const pin of legB) {
    addLead(needs, "heater:B", pin);
    statusFor(status, pin).roles.push("heater:B");
  }
  // A heater pin on neither leg in this mode (a centre tap left open at full voltage) is still live.
  for (const pin of layout.heaterPins) {
    const entry = statusFor(status, pin);
    if (entry.roles.length === 0) entry.roles.push(`idle-heater:${pin}`);
  }

  const describeCandidatePin = (pin: string): string => describePinOf(candidate, status, pin);
  const socketElementName = (pin: string) => wiring.elementAtPin.get(pin) ?? UNCONNECTED_SOCKET_PIN;

  const moves: PinMove[] = [];
  const jumpers: PinJumper[] = [];
  const removals: PinRemoval[] = [];
  const adapterMap: AdapterConnection[] = [];
  const problems: string[] = [];
  const internalConnectionConflicts: string[] = [];
  const tiePointBlockers: string[] = [];
  let tiePointBlockerCount = 0;
  const rewireNotes: string[] = [];
  const adapterNotes: string[] = [];
  const claimedFreePins = new Set<string>();
  let moveCount = 0;
  let jumperCount = 0;
  let removalCount = 0;
  let problemCount = 0;
  let heaterLeadsMove = false;

  // Detail output lists roles in a stable order; counting does not care.
  const roles = [...wiring.leads.keys()];
  for (const role of needs.keys()) if (!wiring.leads.has(role)) roles.push(role);
  if (detail) roles.sort();
  const roleWork: RoleWork = { moves: 0, jumpers: 0, removals: 0, problems: 0 };
  for (const role of roles) {
    const socketPins = wiring.leads.get(role) ?? NO_PINS;
    const candidatePins = needs.get(role) ?? [];
    const parsed = parseRole(role);
    if (!detail && parsed.kind !== "tie") {
      const before = roleWork.moves + roleWork.jumpers + roleWork.removals;
      countRoleWork(status, role, parsed, socketPins, candidatePins, needs, roleWork);
      if (parsed.kind === "heater" && roleWork.moves + roleWork.jumpers + roleWork.removals > before) heaterLeadsMove = true;
      continue;
    }
    if (detail) candidatePins.sort(comparePinLabels);
    const label = detail ? (wiring.roleInfo.get(role)?.label ?? candidateRoleLabel(candidate, role)) : "";
    const sectionField = parsed.kind === "electrode" && parsed.section > 0 ? { section: parsed.section } : {};
    const isHeaterRole = parsed.kind === "heater";

    for (const pin of socketPins) {
      if (detail && status.get(pin)?.internalConnection) {
        internalConnectionConflicts.push(`the socket wires pin ${pin} (${label}) but pin ${pin} of ${candidate.designation} is an internal connection (IC)`);
      }
    }

    if (parsed.kind === "tie") {
      const pin = socketPins[0];
      if (!isConflict(status, pin, role)) continue;
      const freePin = candidate.pins
        .filter((entry) => entry.element === "nc" && !status.has(entry.pin) && !claimedFreePins.has(entry.pin))
        .map((entry) => entry.pin)
        .sort(comparePinLabels)
        .find((candidatePin) => !wiring.leads.has(`tie:${candidatePin}`));
      if (freePin === undefined) {
        tiePointBlockerCount += 1;
        if (detail) {
          tiePointBlockers.push(`the socket uses pin ${pin} as a tie point, ${candidate.designation} has ${describeCandidatePin(pin)} there and no free pin to move it to`);
          adapterNotes.push(`the adapter leaves socket pin ${pin} (a tie point) unconnected`);
        }
        continue;
      }
      claimedFreePins.add(freePin);
      moveCount += 1;
      if (detail) {
        moves.push({ element: "tie", fromPin: pin, toPin: freePin, description: `move the parts anchored on tie point ${pin} to pin ${freePin} (unconnected on ${candidate.designation})` });
        adapterNotes.push(`the adapter leaves socket pin ${pin} (a tie point) unconnected`);
      }
      continue;
    }

    if (socketPins.length === 0) {
      // The substitute has an electrode the socket never wired.
      if (parsed.element === "g3" || parsed.element === "bp") {
        const cathodePins = needs.get(electrodeRole("k", parsed.section)) ?? [];
        if (cathodePins.length === 0) {
          problemCount += 1;
          if (detail) problems.push(`${candidate.designation}'s ${label} on pin ${candidatePins.join(", ")} needs tying to a cathode it does not have`);
          continue;
        }
        jumperCount += candidatePins.length;
        if (detail) {
          for (const pin of candidatePins) {
            jumpers.push({ element: parsed.element, ...sectionField, fromPin: cathodePins[0], toPin: pin, description: `tie the ${label} on pin ${pin} to the cathode on pin ${cathodePins[0]}` });
          }
          adapterNotes.push(`the adapter ties ${candidate.designation}'s ${label} (pin ${candidatePins.join(", ")}) to its cathode`);
        }
      } else if (parsed.element === "s") {
        if (detail) {
          const text = `${candidate.designation}'s internal shield on pin ${candidatePins.join(", ")} is left unconnected; grounding it is usual practice`;
          rewireNotes.push(text);
          adapterNotes.push(text);
        }
      } else {
        problemCount += 1;
        if (detail && isHeaterRole) problems.push(`${candidate.designation} needs heater ${label} on pin ${candidatePins.join(", ")} but the socket has no such lead`);
        else if (detail) problems.push(`${candidate.designation} has ${label} on pin ${candidatePins.join(", ")}, which the socket does not wire`);
      }
      continue;
    }

    if (candidatePins.length === 0) {
      if (parsed.kind === "electrode" && ESSENTIAL_ELEMENTS.has(parsed.element)) {
        problemCount += 1;
        if (detail) problems.push(`the socket wires the ${label} (pin ${socketPins.join(", ")}); ${candidate.designation} has no matching electrode`);
        continue;
      }
      for (const pin of socketPins) {
        if (isConflict(status, pin, role)) {
          removalCount += 1;
          heaterLeadsMove ||= isHeaterRole;
          if (detail) {
            const socketElement = socketElementName(pin);
            removals.push({ element: socketElement.element, ...sectionField, pin, description: `take the ${label} lead off pin ${pin} (${candidate.designation} has ${describeCandidatePin(pin)} there)` });
          }
        } else if (detail) {
          rewireNotes.push(`the ${label} lead on pin ${pin} now ends on an unconnected pin`);
        }
      }
      if (detail) adapterNotes.push(`the adapter leaves the socket's ${label} (pin ${socketPins.join(", ")}) unconnected`);
      continue;
    }

    if (detail) adapterMap.push({ element: parsed.kind === "heater" ? role.replace(":", "-") : parsed.element, ...sectionField, socketPins: [...socketPins], candidatePins: [...candidatePins] });

    const stay = socketPins.filter((pin) => candidatePins.includes(pin));
    const misplaced = socketPins
      .filter((pin) => !candidatePins.includes(pin))
      // Leads touching something else must be handled anyway, so they are the ones to move.
      .sort((left, right) => Number(isConflict(status, right, role)) - Number(isConflict(status, left, role)) || comparePinLabels(left, right));
    const missing = candidatePins.filter((pin) => !socketPins.includes(pin));
    const pairs = Math.min(misplaced.length, missing.length);
    moveCount += pairs;
    jumperCount += Math.max(0, missing.length - pairs);
    if (pairs > 0 || missing.length > pairs) heaterLeadsMove ||= isHeaterRole;
    for (const pin of misplaced.slice(pairs)) {
      if (!isConflict(status, pin, role)) continue;
      removalCount += 1;
      heaterLeadsMove ||= isHeaterRole;
    }
    if (!detail) continue;
    const reached = [...stay];
    for (let index = 0; index < pairs; index += 1) {
      const fromPin = misplaced[index];
      const toPin = missing[index];
      const socketElement = socketElementName(fromPin);
      moves.push({
        element: socketElement.element,
        ...(socketElement.section !== undefined ? { section: socketElement.section } : {}),
        fromPin,
        toPin,
        description: `move the ${label} lead from pin ${fromPin} to pin ${toPin}`,
      });
      reached.push(toPin);
    }
    for (const pin of misplaced.slice(pairs)) {
      const socketElement = socketElementName(pin);
      if (isConflict(status, pin, role)) {
        removals.push({
          element: socketElement.element,
          ...(socketElement.section !== undefined ? { section: socketElement.section } : {}),
          pin,
          description: `take the ${label} lead off pin ${pin} (${candidate.designation} has ${describeCandidatePin(pin)} there)`,
        });
      } else {
        rewireNotes.push(`the ${label} lead on pin ${pin} now ends on an unconnected pin`);
      }
    }
    for (const toPin of missing.slice(pairs)) {
      const fromPin = reached.sort(comparePinLabels)[0];
      jumpers.push({ element: parsed.element, ...sectionField, fromPin, toPin, description: `add a jumper for the ${label} from pin ${fromPin} to pin ${toPin}` });
      reached.push(toPin);
    }
  }

  for (const [section, pins] of detail ? unusedSectionPins : []) {
    rewireNotes.push(`section ${section} of ${candidate.designation} (pins ${pins.sort(comparePinLabels).join(", ")}) is unused`);
  }

  return {
    sectionMapping: [...sectionMap].map(([socketSection, candidateSection]) => ({ socketSection, candidateSection })).sort((left, right) => left.socketSection - right.socketSection),
    heaterLegsSwapped: swapHeaterLegs,
    moves,
    jumpers,
    removals,
    adapterMap,
    problems,
    internalConnectionConflicts,
    tiePointBlockers,
    tiePointBlockerCount,
    rewireNotes,
    adapterNotes,
    heaterLeadsMove,
    operationCount: moveCount + jumperCount + removalCount + roleWork.moves + roleWork.jumpers + roleWork.removals,
    problemCount: problemCount + roleWork.problems,
  };
}

/**
 * The least-work plan over all section mappings and both heater orientations. Ties keep the
 * earlier plan: identity section order and unswapped heater leads come first, and
 * `tieBreak` (smaller is better, e.g. characteristic distance) decides between equal work.
 * With `minimiseOperations` false (an adapter does the wiring, so soldering work is moot) the
 * tie-break alone decides.
 *
 * Throws when `mappings` is empty (a caller error: enumerate them first).
 *
 * Example: 12AT7 in a 12AU7 socket → operationCount 0 with the identity mapping.
 */
export function bestWiringPlan(
  wiring: SocketWiring,
  candidate: TubeTypeSpec,
  candidateHeater: RunningHeater,
  mappings: readonly Map<number, number>[],
  tieBreak: (sectionMap: Map<number, number>) => number,
  minimiseOperations = true,
): WiringPlan {
  interface Scored {
    plan: WiringPlan;
    sectionMap: Map<number, number>;
    swap: boolean;
    tie: number | null;
  }
  // The tie-break is only worked out when two plans tie on problems and work.
  const tieOf = (entry: Scored): number => (entry.tie ??= tieBreak(entry.sectionMap));
  let best: Scored | null = null;
  const layout = layoutOf(candidate);
  const orientations = candidateHeater.legA.length > 0 && candidateHeater.legB.length > 0 ? [false, true] : [false];
  search: for (const sectionMap of mappings) {
    for (const swap of orientations) {
      const entry: Scored = { plan: planWiring(wiring, candidate, candidateHeater, sectionMap, swap, false, layout), sectionMap, swap, tie: null };
      if (best === null || isBetterPlan(entry, best, minimiseOperations, tieOf)) best = entry;
      // Nothing beats a plan with no problems and no work except a closer tie-break among other
      // zero-work plans, and two section orders cannot both land on the socket's pins unchanged.
      if (minimiseOperations && best.plan.problemCount === 0 && best.plan.operationCount === 0) break search;
    }
  }
  if (best === null) throw new Error("bestWiringPlan needs at least one section mapping");
  return planWiring(wiring, candidate, candidateHeater, best.sectionMap, best.swap, true, layout);
}

interface ScoredPlan {
  plan: WiringPlan;
  sectionMap: Map<number, number>;
}

function isBetterPlan<T extends ScoredPlan>(entry: T, incumbent: T, minimiseOperations: boolean, tieOf: (scored: T) => number): boolean {
  if (entry.plan.problemCount !== incumbent.plan.problemCount) return entry.plan.problemCount < incumbent.plan.problemCount;
  if (minimiseOperations && entry.plan.operationCount !== incumbent.plan.operationCount) return entry.plan.operationCount < incumbent.plan.operationCount;
  // The heater orientation does not change the characteristics, so only another mapping can win the tie-break.
  return entry.sectionMap !== incumbent.sectionMap && tieOf(entry) < tieOf(incumbent);
}
