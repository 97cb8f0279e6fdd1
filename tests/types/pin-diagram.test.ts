/**
 * Basing-diagram geometry. The conventions checked are facts of the trade for bottom views:
 * pins numbered clockwise seen from below; B7G and B9A bases leave one position empty (the gap)
 * with pin 1 the first pin clockwise after it; octal and loctal pins are evenly spaced around a
 * keyed spigot with pin 1 the first pin clockwise after the key. Coordinates are checked by
 * hand arithmetic on the layout's own centre and radius.
 */
import { describe, expect, it } from "vitest";
import type { BaseFamily, PinAssignment, TubeTypeSpec } from "../../server/engine/tube-types/index.ts";
import { layoutPinDiagram, pinAngleDegrees, type DiagramPin, type PinDiagram } from "../../server/types/pin-diagram.ts";

function spec(base: BaseFamily, pins: PinAssignment[], sectionCount = 2): TubeTypeSpec {
  return {
    designation: "TEST1",
    aliases: [],
    class: sectionCount === 2 ? "dual-triode" : "triode",
    base,
    pins,
    sections: Array.from({ length: sectionCount }, (_, index) => ({ index: index + 1, kind: "triode" as const, typical: [] })),
    heater: { volts: 6.3, amps: 0.3 },
    maxRatings: {},
    sources: {},
  };
}

// A noval dual triode laid out like the 12AU7 (basing 9A): constructed here, not read from the library.
const noval = spec("B9A", [
  { pin: "1", element: "a", section: 2 },
  { pin: "2", element: "g1", section: 2 },
  { pin: "3", element: "k", section: 2 },
  { pin: "4", element: "h" },
  { pin: "5", element: "h" },
  { pin: "6", element: "a", section: 1 },
  { pin: "7", element: "g1", section: 1 },
  { pin: "8", element: "k", section: 1 },
  { pin: "9", element: "hct" },
]);

function pin(diagram: PinDiagram, label: string): DiagramPin {
  const found = diagram.pins.find((entry) => entry.pin === label);
  if (!found) throw new Error(`pin ${label} not drawn`);
  return found;
}

/** Screen angle of a pin in degrees, clockwise from straight down (SVG y grows downwards). */
function screenAngle(diagram: PinDiagram, entry: DiagramPin): number {
  const degrees = (Math.atan2(entry.y - diagram.centreY, entry.x - diagram.centreX) * 180) / Math.PI - 90;
  return ((degrees % 360) + 360) % 360;
}

describe("circle bases seen from below", () => {
  it("B9A: nine pins clockwise from the gap at the bottom, 36° apart, pin 5 opposite the gap", () => {
    const diagram = layoutPinDiagram(noval);
    expect(diagram.layout).toBe("circle");
    expect(diagram.pins).toHaveLength(9);
    const radius = diagram.pinCircleRadius;
    // Pin 5 at the top: (cx, cy − R), hand arithmetic on angle 180° from straight down.
    expect(pin(diagram, "5").x).toBeCloseTo(diagram.centreX, 1);
    expect(pin(diagram, "5").y).toBeCloseTo(diagram.centreY - radius, 1);
    // The gap at the bottom: (cx, cy + R).
    expect(diagram.gap).not.toBeNull();
    expect(diagram.gap!.x).toBeCloseTo(diagram.centreX, 1);
    expect(diagram.gap!.y).toBeCloseTo(diagram.centreY + radius, 1);
    // Ten positions of 36°, pin n at n·36° clockwise from the gap.
    for (let number = 1; number <= 9; number += 1) expect(screenAngle(diagram, pin(diagram, String(number)))).toBeCloseTo(number * 36, 0);
    // Pin 1 is lower left, pin 9 its mirror image at lower right.
    expect(pin(diagram, "1").x).toBeLessThan(diagram.centreX);
    expect(pin(diagram, "1").y).toBeGreaterThan(diagram.centreY);
    expect(pin(diagram, "1").x + pin(diagram, "9").x).toBeCloseTo(2 * diagram.centreX, 1);
    expect(pin(diagram, "1").y).toBeCloseTo(pin(diagram, "9").y, 1);
    expect(diagram.spigot).toBeNull();
  });

  it("B7G: seven pins on eight positions of 45°, pin 4 at the top", () => {
    const diagram = layoutPinDiagram(
      spec("B7G", [
        { pin: "1", element: "g1", section: 1 },
        { pin: "2", element: "k", section: 1 },
        { pin: "3", element: "h" },
        { pin: "4", element: "h" },
        { pin: "5", element: "a", section: 1 },
        { pin: "6", element: "nc" },
        { pin: "7", element: "ic" },
      ], 1),
    );
    expect(pinAngleDegrees("B7G", 4)).toBe(180);
    expect(pin(diagram, "4").y).toBeCloseTo(diagram.centreY - diagram.pinCircleRadius, 1);
    for (let number = 1; number <= 7; number += 1) expect(screenAngle(diagram, pin(diagram, String(number)))).toBeCloseTo(number * 45, 0);
    expect(diagram.gap).not.toBeNull();
  });

  it("octal: eight pins 45° apart around a spigot whose key sits between pins 8 and 1", () => {
    const pins: PinAssignment[] = [
      { pin: "1", element: "g1", section: 2 },
      { pin: "2", element: "a", section: 2 },
      { pin: "3", element: "k", section: 2 },
      { pin: "4", element: "g1", section: 1 },
      { pin: "5", element: "a", section: 1 },
      { pin: "6", element: "k", section: 1 },
      { pin: "7", element: "h" },
      { pin: "8", element: "h" },
    ];
    const diagram = layoutPinDiagram(spec("octal", pins));
    expect(diagram.gap).toBeNull();
    expect(diagram.spigot).not.toBeNull();
    // The key notch is on the spigot rim straight below the centre, where pins 8 and 1 meet.
    expect(diagram.spigot!.keyX + diagram.spigot!.keyWidth / 2).toBeCloseTo(diagram.centreX, 1);
    expect(diagram.spigot!.keyY).toBeGreaterThan(diagram.centreY);
    for (let number = 1; number <= 8; number += 1) expect(screenAngle(diagram, pin(diagram, String(number)))).toBeCloseTo(22.5 + (number - 1) * 45, 0);
    expect(pin(diagram, "1").x + pin(diagram, "8").x).toBeCloseTo(2 * diagram.centreX, 1);
    expect(diagram.notes.map((note) => note.text)).toContain("key");
  });

  it("labels run away from the base: rightwards on the right, leftwards on the left, centred at top", () => {
    const diagram = layoutPinDiagram(noval);
    expect(pin(diagram, "7").labelAnchor).toBe("start"); // right side (72° from the top)
    expect(pin(diagram, "2").labelAnchor).toBe("end"); // left side
    expect(pin(diagram, "5").labelAnchor).toBe("middle"); // top
    // Labels sit outside the base outline.
    const distance = (entry: DiagramPin) => Math.hypot(entry.labelX - diagram.centreX, entry.labelY - diagram.centreY);
    for (const entry of diagram.pins) expect(distance(entry)).toBeGreaterThan(diagram.outlineRadius);
  });
});

describe("what each pin says", () => {
  it("names the element with its section on a dual type, and marks heater, IC and NC pins", () => {
    const diagram = layoutPinDiagram(noval);
    expect(pin(diagram, "6")).toMatchObject({ elementText: "a", sectionText: "1", role: "electrode", description: "pin 6: plate, section 1" });
    expect(pin(diagram, "9")).toMatchObject({ elementText: "hct", sectionText: "", role: "heater" });
    const single = layoutPinDiagram(
      spec("B7G", [
        { pin: "1", element: "g1", section: 1 },
        { pin: "2", element: "k", section: 1 },
        { pin: "3", element: "h" },
        { pin: "4", element: "h" },
        { pin: "5", element: "a", section: 1 },
        { pin: "6", element: "nc" },
        { pin: "7", element: "ic" },
      ], 1),
    );
    // One section: no section numbers on the labels.
    expect(pin(single, "5").sectionText).toBe("");
    expect(pin(single, "6")).toMatchObject({ elementText: "NC", role: "nc" });
    expect(pin(single, "7")).toMatchObject({ elementText: "IC", role: "ic" });
    expect(pin(single, "7").description).toContain("do not wire");
  });

  it("draws a top cap beside the base and a pin the base lacks in a row under it", () => {
    const diagram = layoutPinDiagram(spec("B9A", [...noval.pins, { pin: "cap", element: "a", section: 1 }, { pin: "12", element: "nc" }]));
    expect(diagram.pins).toHaveLength(9);
    expect(diagram.cap).toMatchObject({ pin: "cap", description: "top cap: plate, section 1" });
    expect(diagram.extras.map((entry) => entry.pin)).toEqual(["12"]);
  });
});

describe("wire-ended types", () => {
  it("lays subminiature leads out as an evenly spaced row in the order listed", () => {
    const leads: PinAssignment[] = [
      { pin: "1", element: "a", section: 1 },
      { pin: "2", element: "h" },
      { pin: "3", element: "g1", section: 1 },
      { pin: "4", element: "h" },
      { pin: "5", element: "k", section: 1 },
    ];
    const diagram = layoutPinDiagram(spec("subminiature", leads, 1));
    expect(diagram.layout).toBe("row");
    expect(diagram.pins.map((entry) => entry.pin)).toEqual(["1", "2", "3", "4", "5"]);
    const xs = diagram.pins.map((entry) => entry.x);
    for (let index = 1; index < xs.length; index += 1) expect(xs[index] - xs[index - 1]).toBeCloseTo(xs[1] - xs[0], 6);
    expect(new Set(diagram.pins.map((entry) => entry.y)).size).toBe(1);
    expect(diagram.leads).toHaveLength(5);
    expect(diagram.body).not.toBeNull();
    // The row is centred in the drawing.
    expect(xs[0] + xs[xs.length - 1]).toBeCloseTo(diagram.width, 6);
  });

  it("uses the row for leads named instead of numbered on any base", () => {
    const diagram = layoutPinDiagram(spec("other", [{ pin: "plate", element: "a", section: 1 }, { pin: "grid", element: "g1", section: 1 }, { pin: "fil-a", element: "f" }, { pin: "fil-b", element: "f" }], 1));
    expect(diagram.layout).toBe("row");
  });
});

describe("wire-ended leads named by function", () => {
  it("write the element in the dot and turn the lead's name beneath it", () => {
    // An invented two-lead-name shape; only the layout is under test.
    const spec = {
      designation: "TEST-WIRE",
      aliases: [],
      class: "triode",
      base: "subminiature",
      pins: [
        { pin: "plate", element: "a", section: 1 },
        { pin: "grid", element: "g1", section: 1 },
        { pin: "cathode", element: "k", section: 1 },
        { pin: "heater-1", element: "h" },
        { pin: "heater-2", element: "h" },
      ],
      sections: [{ index: 1, kind: "triode", typical: [] }],
      heater: { volts: 6.3, amps: 0.15 },
      maxRatings: {},
      sources: { pins: "from memory", heater: "from memory" },
    } satisfies TubeTypeSpec;
    const diagram = layoutPinDiagram(spec);
    expect(diagram.layout).toBe("row");
    const plate = diagram.pins.find((entry) => entry.pin === "plate")!;
    expect(plate).toMatchObject({ numberText: "a", elementText: "plate", labelRotated: true, description: "lead plate: plate" });
    expect(diagram.caption).toMatch(/not in their physical order/);
    // "heater-1" is 8 characters: 170 + (8 − 2) × 8 units of height for the turned names.
    expect(diagram.height).toBe(218);
  });
});
