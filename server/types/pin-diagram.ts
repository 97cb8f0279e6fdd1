/**
 * Geometry of a basing diagram: where each pin of a type is drawn, seen from below (the pin
 * side), so that the template only places circles and text. Pure: no IO.
 *
 * Conventions (facts of the trade for bottom views): pins are numbered clockwise seen from
 * below. Miniature B7G and noval B9A bases leave one pin position empty — the gap that keys
 * the socket — and pin 1 is the first pin clockwise after it. Octal and loctal bases have
 * evenly spaced pins around a keyed spigot; pin 1 is the first pin clockwise after the key.
 * Wire-ended subminiature types have no base: their leads are drawn as a row.
 */
import { elementName, type BaseFamily, type PinAssignment, type PinElement, type TubeTypeSpec } from "../engine/tube-types/index.ts";

export type PinRole = "electrode" | "heater" | "shield" | "ic" | "nc";

export interface DiagramPin {
  pin: string;
  element: PinElement;
  section: number | null;
  role: PinRole;
  /** Centre of the pin's dot, and the baseline of the pin number written in it. */
  x: number;
  y: number;
  numberY: number;
  /** Where the element label sits, and which way its text runs from there. */
  labelX: number;
  labelY: number;
  labelAnchor: "start" | "middle" | "end";
  /** Written in the dot: the pin number, or the element on a lead that carries a name. */
  numberText: string;
  /** Turn the label a quarter (reading downwards) so long lead names fit side by side. */
  labelRotated: boolean;
  /** "a", "g1", "h", "IC", "NC"… (a lead's name on wire-ended types) and the section number as a separate small text. */
  elementText: string;
  sectionText: string;
  /** For the tooltip: "pin 6: plate, section 1". */
  description: string;
}

export interface PinDiagram {
  layout: "circle" | "row";
  base: BaseFamily;
  width: number;
  height: number;
  centreX: number;
  centreY: number;
  /** Radius of the pin circle (circle layout), 0 for a row. */
  pinCircleRadius: number;
  /** Outline of the base: a circle of this radius around the centre (circle layout). */
  outlineRadius: number;
  pinRadius: number;
  pins: DiagramPin[];
  /** The empty pin position of B7G/B9A bases. */
  gap: { x: number; y: number } | null;
  /** The spigot of octal/loctal bases, with the key as a small rectangle on its rim. */
  spigot: { radius: number; keyX: number; keyY: number; keyWidth: number; keyHeight: number } | null;
  /** Row layout: the glass body the leads leave, and one line per lead. */
  body: { x: number; y: number; width: number; height: number } | null;
  leads: Array<{ x1: number; y1: number; x2: number; y2: number }>;
  /** Words placed on the drawing: "gap", "key" (kind "note") and the designation (kind "name"). */
  notes: Array<{ text: string; x: number; y: number; kind: "note" | "name" }>;
  /** A top-cap connection, drawn beside the base (it is on the other end of the bulb). */
  cap: DiagramPin | null;
  /** Pins the layout could not place on the base (labels the base does not have); drawn in a row under it. */
  extras: DiagramPin[];
  caption: string;
}

/**
 * The diagram's hover text names an element by its work in its section (a heptode's g3 is the
 * signal grid) and warns about internal connections.
 */
export function pinElementName(spec: TubeTypeSpec, assignment: PinAssignment): string {
  if (assignment.element === "ic") return "internal connection (do not wire)";
  const sectionIndex = assignment.section ?? (spec.sections.length === 1 ? 1 : undefined);
  const section = spec.sections.find((entry) => entry.index === sectionIndex);
  const name = elementName(assignment.element, section?.kind);
  return section?.label !== undefined && assignment.section !== undefined ? `${name}, ${section.label}` : name;
}

/**
 * Pin positions around each base family: how many positions the circle has, how many pins,
 * and where pin 1 sits, in degrees clockwise from straight down (the gap or key is drawn at
 * the bottom). B8G is the loctal-style glass base: drawn like loctal.
 */
const CIRCLE_BASES: Partial<Record<BaseFamily, { positions: number; pins: number; firstOffsetPositions: number; keyed: "gap" | "spigot" }>> = {
  B7G: { positions: 8, pins: 7, firstOffsetPositions: 1, keyed: "gap" },
  B9A: { positions: 10, pins: 9, firstOffsetPositions: 1, keyed: "gap" },
  octal: { positions: 8, pins: 8, firstOffsetPositions: 0.5, keyed: "spigot" },
  loctal: { positions: 8, pins: 8, firstOffsetPositions: 0.5, keyed: "spigot" },
  B8G: { positions: 8, pins: 8, firstOffsetPositions: 0.5, keyed: "spigot" },
};

export const DIAGRAM_SIZE = { width: 420, height: 370 };
/** Room a turned lead name takes per character, in diagram units (13 px monospace). */
const ROTATED_LABEL_CHARACTER_WIDTH = 8;
const PIN_CIRCLE_RADIUS = 100;
const OUTLINE_MARGIN = 20;
/** Labels sit outside the base outline, clear of the pin dots. */
const LABEL_DISTANCE = 36;
const PIN_RADIUS = 11;
const ROW_PITCH = 44;
const ROW_MARGIN = 40;
/** Moves a pin number's baseline down so the digits sit centred in the dot. */
const PIN_NUMBER_BASELINE_OFFSET = 4;

function roleOf(element: PinElement): PinRole {
  if (element === "ic") return "ic";
  if (element === "nc") return "nc";
  if (element === "h" || element === "hct" || element === "f" || element === "fct") return "heater";
  if (element === "s") return "shield";
  return "electrode";
}

function elementText(element: PinElement): string {
  return element === "ic" || element === "nc" ? element.toUpperCase() : element;
}

function describePin(spec: TubeTypeSpec, assignment: PinAssignment): string {
  const section = assignment.section !== undefined && spec.sections.length > 1 ? `, section ${assignment.section}` : "";
  const where = assignment.pin === "cap" ? "top cap" : /^[0-9]+$/.test(assignment.pin) ? `pin ${assignment.pin}` : `lead ${assignment.pin}`;
  return `${where}: ${pinElementName(spec, assignment)}${section}`;
}

function round(value: number): number {
  return Math.round(value * 100) / 100;
}

function anchorFor(cosine: number): DiagramPin["labelAnchor"] {
  // Labels right of centre run rightwards, left of centre leftwards; near the vertical they centre.
  if (cosine > 0.25) return "start";
  if (cosine < -0.25) return "end";
  return "middle";
}

function basePin(assignment: PinAssignment, x: number, y: number, labelX: number, labelY: number, labelAnchor: DiagramPin["labelAnchor"], showSection = true): DiagramPin {
  return {
    pin: assignment.pin,
    element: assignment.element,
    section: assignment.section ?? null,
    role: roleOf(assignment.element),
    x: round(x),
    y: round(y),
    numberY: round(y + PIN_NUMBER_BASELINE_OFFSET),
    numberText: assignment.pin,
    labelRotated: false,
    labelX: round(labelX),
    labelY: round(labelY),
    labelAnchor,
    elementText: elementText(assignment.element),
    sectionText: showSection && assignment.section !== undefined ? String(assignment.section) : "",
    // Named by its work in its section once the whole type is known (see layoutPinDiagram).
    description: "",
  };
}

/**
 * Angle of pin `number` in degrees, measured clockwise on screen from straight down (SVG's y
 * axis points down, so clockwise on screen is increasing angle from the +x axis).
 *
 * Example: `pinAngleDegrees("B9A", 5)` → 180 (pin 5 of a noval base sits opposite the gap, at the top).
 */
export function pinAngleDegrees(base: BaseFamily, pinNumber: number, pinCount?: number): number {
  const family = CIRCLE_BASES[base];
  const positions = family?.positions ?? Math.max(pinCount ?? 1, 1);
  const firstOffset = family?.firstOffsetPositions ?? 0.5;
  return ((pinNumber - 1 + firstOffset) * 360) / positions;
}

function layRow(spec: TubeTypeSpec, pins: readonly PinAssignment[], caption: string): PinDiagram {
  const multi = spec.sections.length > 1;
  const width = Math.max(DIAGRAM_SIZE.width, ROW_MARGIN * 2 + (pins.length - 1) * ROW_PITCH);
  const longestName = Math.max(0, ...pins.map((assignment) => (/^[0-9]+$/.test(assignment.pin) ? 0 : assignment.pin.length)));
  const height = 170 + Math.max(0, longestName - 2) * ROTATED_LABEL_CHARACTER_WIDTH;
  const firstX = (width - (pins.length - 1) * ROW_PITCH) / 2;
  const leadTopY = 40;
  const leadEndY = leadTopY + 60;
  const named = pins.some((assignment) => !/^[0-9]+$/.test(assignment.pin));
  const placed = pins.map((assignment, index) => {
    const pin = basePin(assignment, firstX + index * ROW_PITCH, leadEndY, firstX + index * ROW_PITCH, leadEndY + PIN_RADIUS + 20, "middle", multi);
    // A lead named by its function: the element goes in the dot, the name runs down beneath it.
    if (!named) return pin;
    return { ...pin, numberText: pin.elementText, elementText: assignment.pin, sectionText: "", labelRotated: true, labelY: round(leadEndY + PIN_RADIUS + 8), labelAnchor: "start" as const };
  });
  const bodyLeft = firstX - 22;
  const bodyRight = firstX + Math.max(pins.length - 1, 0) * ROW_PITCH + 22;
  return {
    layout: "row",
    base: spec.base,
    width,
    height,
    centreX: width / 2,
    centreY: leadTopY,
    pinCircleRadius: 0,
    outlineRadius: 0,
    pinRadius: PIN_RADIUS,
    pins: placed,
    gap: null,
    spigot: null,
    body: { x: round(bodyLeft), y: leadTopY - 26, width: round(bodyRight - bodyLeft), height: 30 },
    leads: placed.map((pin) => ({ x1: pin.x, y1: leadTopY + 4, x2: pin.x, y2: round(pin.y - PIN_RADIUS) })),
    notes: [],
    cap: null,
    extras: [],
    caption,
  };
}

/**
 * Lays out a type's basing diagram.
 *
 * Circle layout for B7G, B9A, octal, loctal and B8G bases, and for other bases whose pins are
 * numbered 1..N (evenly spaced, no key); row layout for subminiature wire-ended types and for
 * any type whose leads carry names instead of numbers. A "cap" pin is returned separately.
 * Never throws: a pin the base does not have goes to `extras`.
 *
 * Example: 12AU7 (B9A) → pin 5 at the top (x = centreX, y = centreY − 92), the gap at the
 * bottom, pins 1 and 9 mirror images about the vertical axis.
 */
export function layoutPinDiagram(spec: TubeTypeSpec): PinDiagram {
  const diagram = layoutPins(spec);
  const describe = (pin: DiagramPin): DiagramPin => {
    const assignment = spec.pins.find((entry) => entry.pin === pin.pin);
    return assignment === undefined ? pin : { ...pin, description: describePin(spec, assignment) };
  };
  return { ...diagram, pins: diagram.pins.map(describe), extras: diagram.extras.map(describe), cap: diagram.cap === null ? null : describe(diagram.cap) };
}

function layoutPins(spec: TubeTypeSpec): PinDiagram {
  const capPin = spec.pins.find((assignment) => assignment.pin === "cap");
  // A single-section type needs no section numbers on its labels.
  const multi = spec.sections.length > 1;
  const bodyPins = spec.pins.filter((assignment) => assignment.pin !== "cap");
  const numbered = bodyPins.every((assignment) => /^[0-9]+$/.test(assignment.pin));

  if (spec.base === "subminiature" || !numbered) {
    const caption = numbered
      ? "Leads seen from below, in the order listed; the basing diagram of the data sheet shows which lead is which."
      : "Leads named by what they connect to, drawn in the order listed, not in their physical order: take that from the maker's outline drawing.";
    const diagram = layRow(spec, bodyPins, caption);
    return capPin ? { ...diagram, cap: basePin(capPin, diagram.width - 30, 24, diagram.width - 30, 24 + PIN_RADIUS + 16, "middle", multi) } : diagram;
  }

  const family = CIRCLE_BASES[spec.base];
  const highest = bodyPins.reduce((max, assignment) => Math.max(max, Number(assignment.pin)), 0);
  const pinCount = family?.pins ?? highest;
  const { width, height } = DIAGRAM_SIZE;
  const centreX = width / 2;
  const centreY = height / 2 - 4;
  const radius = PIN_CIRCLE_RADIUS;

  const pins: DiagramPin[] = [];
  const extras: PinAssignment[] = [];
  for (const assignment of bodyPins) {
    const number = Number(assignment.pin);
    if (number < 1 || number > pinCount) {
      extras.push(assignment);
      continue;
    }
    const angle = ((pinAngleDegrees(spec.base, number, pinCount) + 90) * Math.PI) / 180;
    const cosine = Math.cos(angle);
    const sine = Math.sin(angle);
    const x = centreX + radius * cosine;
    const y = centreY + radius * sine;
    // Labels below the centre drop a line so that they do not sit on the pin dot.
    const labelX = centreX + (radius + LABEL_DISTANCE) * cosine;
    const labelY = centreY + (radius + LABEL_DISTANCE) * sine + 4 + (sine > 0.6 ? 6 : 0);
    pins.push(basePin(assignment, x, y, labelX, labelY, anchorFor(cosine), multi));
  }
  const extraRowY = height - 14;
  const placedExtras = extras.map((assignment, index) =>
    basePin(assignment, 30 + index * ROW_PITCH, extraRowY - 16, 30 + index * ROW_PITCH, extraRowY, "middle", multi),
  );

  const gapAngle = Math.PI / 2;
  const gap = family?.keyed === "gap" ? { x: round(centreX + radius * Math.cos(gapAngle)), y: round(centreY + radius * Math.sin(gapAngle)) } : null;
  const spigotRadius = 34;
  const spigot =
    family?.keyed === "spigot"
      ? { radius: spigotRadius, keyX: round(centreX - 5), keyY: round(centreY + spigotRadius - 9), keyWidth: 10, keyHeight: 12 }
      : null;
  const notes: PinDiagram["notes"] = [];
  // The words sit inside the base, towards the centre, so that the outside stays for the pin labels.
  if (gap) notes.push({ text: "gap", x: gap.x, y: round(gap.y - PIN_RADIUS - 8), kind: "note" });
  if (spigot) notes.push({ text: "key", x: round(centreX), y: round(centreY + spigotRadius - 14), kind: "note" });
  notes.push({ text: spec.designation, x: round(centreX), y: round(spigot ? centreY - 6 : centreY + 5), kind: "name" });
  const caption =
    family?.keyed === "gap"
      ? `${spec.base} base seen from below: pins numbered clockwise from the gap.`
      : family?.keyed === "spigot"
        ? `${spec.base} base seen from below: pins numbered clockwise from the key on the spigot.`
        : `Base seen from below: pins numbered clockwise; this base family has no drawn key — check the data sheet for the large pins or key.`;

  return {
    layout: "circle",
    base: spec.base,
    width,
    height,
    centreX,
    centreY,
    pinCircleRadius: radius,
    outlineRadius: radius + OUTLINE_MARGIN,
    pinRadius: PIN_RADIUS,
    pins,
    gap,
    spigot,
    body: null,
    leads: [],
    notes,
    cap: capPin ? basePin(capPin, width - 34, 34, width - 34, 34 + PIN_RADIUS + 16, "middle", multi) : null,
    extras: placedExtras,
    caption,
  };
}
