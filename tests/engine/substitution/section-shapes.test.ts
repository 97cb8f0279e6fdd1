/**
 * The ranker on the parts of the tube-type shape beyond plain amplifier sections: a mixed
 * envelope whose sections carry their own ratings, glow regulators, labelled display
 * segments and heptode grid names.
 */
import { describe, expect, it } from "vitest";
import { GLOW_VOLTS_TOLERANCE, MAX_SECTION_MAPPINGS, rankSubstitutes, type SocketDescription, type SubstituteRanking } from "../../../server/engine/substitution/index.ts";
import { elementName, sectionMaxRatings, type PinAssignment, type SectionSpec, type TubeTypeSpec } from "../../../server/engine/tube-types/index.ts";
import { describeElement } from "../../../server/engine/substitution/format.ts";
import { tube6AU6 } from "./fixtures.ts";
import { enumerateSectionMappings } from "../../../server/engine/substitution/pin-fit.ts";

function socket(overrides: Partial<SocketDescription> & Pick<SocketDescription, "socketType" | "heaterSupply">): SocketDescription {
  return { allowRewire: false, allowAdapter: false, ...overrides };
}

function reasonsFor(ranking: SubstituteRanking, designation: string): string[] {
  const found = ranking.excluded.find((entry) => entry.designation === designation);
  if (found === undefined) throw new Error(`${designation} was not excluded`);
  return found.reasons;
}

function explanationFor(ranking: SubstituteRanking, designation: string): string[] {
  const found = ranking.candidates.find((entry) => entry.designation === designation);
  if (found === undefined) throw new Error(`${designation} is not a candidate: ${reasonsFor(ranking, designation).join("; ")}`);
  return found.explanation;
}

// ── Mixed envelope: 6BM8 / ECL82 ─────────────────────────────────────────────────────────────

/** Mullard ECL82 data: noval triode-pentode, 6.3 V 0.78 A; triode Pa max 1 W, pentode Pa max 7 W, Va max 250 V (from memory). */
function ecl82(sectionRatings: boolean): TubeTypeSpec {
  const pins: PinAssignment[] = [
    { pin: "1", element: "g1", section: 1 },
    { pin: "2", element: "k", section: 2 },
    { pin: "3", element: "g1", section: 2 },
    { pin: "4", element: "h" },
    { pin: "5", element: "h" },
    { pin: "6", element: "a", section: 2 },
    { pin: "7", element: "g2", section: 2 },
    { pin: "8", element: "k", section: 1 },
    { pin: "9", element: "a", section: 1 },
  ];
  const sections: SectionSpec[] = [
    { index: 1, kind: "triode", typical: [], ...(sectionRatings ? { maxRatings: { plateWatts: 1 } } : {}) },
    { index: 2, kind: "pentode", typical: [] },
  ];
  return {
    designation: sectionRatings ? "6BM8" : "6BM8-ENVELOPE-ONLY",
    aliases: [],
    class: "triode-pentode",
    base: "B9A",
    pins,
    sections,
    heater: { volts: 6.3, amps: 0.78 },
    maxRatings: { plateVolts: 250, plateWatts: 7 },
    notes: "g3 of the pentode is joined to its cathode inside",
    sources: { pins: "from memory", heater: "from memory", maxRatings: "from memory" },
  };
}

describe("per-section maximum ratings", () => {
  it("merge a section's own ratings over the envelope's", () => {
    expect(sectionMaxRatings(ecl82(true), 1)).toEqual({ plateVolts: 250, plateWatts: 1 }); // ECL82 triode 1 W under the envelope's 250 V (from memory)
    expect(sectionMaxRatings(ecl82(true), 2)).toEqual({ plateVolts: 250, plateWatts: 7 }); // ECL82 pentode 7 W (from memory)
  });

  it("refuse a triode section run at 1.2 W though the envelope allows the pentode 7 W", () => {
    // 200 V × 6 mA = 1.2 W on the triode, 200 V × 30 mA = 6 W on the pentode (arithmetic).
    const operating = [
      { section: 1, plateVolts: 200, plateMilliamps: 6 },
      { section: 2, plateVolts: 200, plateMilliamps: 30, screenVolts: 200 },
    ];
    const withSectionRatings = ecl82(true);
    const envelopeOnly = ecl82(false);
    const ranking = rankSubstitutes(socket({ socketType: envelopeOnly, heaterSupply: { kind: "parallel", volts: 6.3 }, operating }), [withSectionRatings, envelopeOnly], []);
    expect(reasonsFor(ranking, "6BM8").join("\n")).toMatch(/plate dissipation of section 1: the circuit applies 1\.2 W .* above 6BM8's 1 W/);
    expect(ranking.candidates.map((candidate) => candidate.designation)).toEqual(["6BM8-ENVELOPE-ONLY"]);
  });
});

// ── Glow regulators ──────────────────────────────────────────────────────────────────────────

/** Basing 5BO as the library gives it: anodes on 1 and 5 joined inside, cathode on 2, 4, 7, IC 3 and 6 (from memory). */
function regulator(designation: string, operatingVolts: number, strikingVolts: number, maxMilliamps = 30): TubeTypeSpec {
  return {
    designation,
    aliases: [],
    class: "voltage-regulator",
    base: "B7G",
    pins: [
      { pin: "1", element: "a", section: 1 },
      { pin: "2", element: "k", section: 1 },
      { pin: "3", element: "ic" },
      { pin: "4", element: "k", section: 1 },
      { pin: "5", element: "a", section: 1 },
      { pin: "6", element: "ic" },
      { pin: "7", element: "k", section: 1 },
    ],
    sections: [{ index: 1, kind: "regulator", typical: [], glow: { operatingVolts, strikingVolts, minMilliamps: 5, maxMilliamps } }],
    heater: { volts: 0, amps: 0, coldCathode: true },
    maxRatings: { outputMilliamps: maxMilliamps },
    sources: { pins: "from memory", heater: "from memory", maxRatings: "from memory", "sections.1.glow": "from memory" },
  };
}

// OA2 holds about 150 V and strikes near 185 V; OB2 holds about 108 V; both 5–30 mA (from memory; the
// 150 V and 108 V rails are what the type numbers 150C2 / 108C1 say).
const oa2 = regulator("OA2", 150, 185);
const ob2 = regulator("OB2", 108, 133);
/** Constructed: an OA2 that needs 200 V to strike, to exercise the striking warning. */
const hardStrikingOa2 = regulator("TEST-OA2-HARD", 152, 200);

describe("glow regulators", () => {
  const regulatorSocket = (operating?: SocketDescription["operating"]) =>
    socket({ socketType: oa2, heaterSupply: { kind: "parallel", volts: 6.3 }, ...(operating ? { operating } : {}) });

  it("refuse a regulator that holds a different voltage, naming the change", () => {
    const ranking = rankSubstitutes(regulatorSocket(), [oa2, ob2], []);
    // (108 − 150) / 150 = −28 % (arithmetic), far outside the 5 % tolerance (common practice, no source).
    expect(GLOW_VOLTS_TOLERANCE).toBe(0.05);
    expect(reasonsFor(ranking, "OB2")).toContain("regulates at 108 V, −28 % from OA2's 150 V: the regulated rail would drop");
    expect(explanationFor(ranking, "OA2")).toContain("regulation: regulates at 150 V (0 % from 150 V) over 5–30 mA");
  });

  it("refuse a regulator when the circuit's current is outside its range", () => {
    const ranking = rankSubstitutes(regulatorSocket([{ section: 1, plateVolts: 150, plateMilliamps: 3 }]), [oa2], []);
    expect(reasonsFor(ranking, "OA2")).toContain("the circuit passes 3 mA; OA2 regulates only between 5 and 30 mA");
  });

  it("warn when the substitute needs more voltage to strike than the socket type", () => {
    const ranking = rankSubstitutes(regulatorSocket([{ section: 1, plateVolts: 150, plateMilliamps: 20 }]), [hardStrikingOa2], []);
    const explanation = explanationFor(ranking, "TEST-OA2-HARD");
    expect(explanation).toContain("warning: needs 200 V to strike where OA2 needs 185 V; check that the unregulated supply reaches it at low mains");
    expect(explanation).toContain("regulation: regulates at 152 V (+1.3 % from 150 V) over 5–30 mA; the circuit passes 20 mA");
  });

  it("without the circuit's current, want the socket type's whole regulating range covered", () => {
    // Constructed: a 150 V regulator rated to 40 mA (as the octal 150 V types are, from memory) in whose socket an OA2 (to 30 mA) is tried.
    const wide = regulator("TEST-150-40", 150, 185, 40);
    const unknownCurrent = rankSubstitutes(socket({ socketType: wide, heaterSupply: { kind: "parallel", volts: 0 } }), [oa2], []);
    expect(reasonsFor(unknownCurrent, "OA2")).toContain(
      "OA2 regulates over 5–30 mA, narrower than the 5–40 mA TEST-150-40's circuit may use; give the circuit's current to check it against the real one",
    );
    const measured = rankSubstitutes(socket({ socketType: wide, heaterSupply: { kind: "parallel", volts: 0 }, operating: [{ section: 1, plateVolts: 150, plateMilliamps: 18 }] }), [oa2], []);
    expect(explanationFor(measured, "OA2")).toContain("regulation: regulates at 150 V (0 % from 150 V) over 5–30 mA; the circuit passes 18 mA");
    // 18 mA of OA2's 30 mA maximum output: (30 − 18) / 30 = 40 % headroom (arithmetic); plate volts and watts are not regulator ratings.
    expect(measured.candidates[0].ratings.map((check) => [check.rating, check.headroomPercent])).toEqual([["outputMilliamps", 40]]);
  });

  it("will not put a cold-cathode type in a series heater string", () => {
    expect(() => rankSubstitutes(socket({ socketType: oa2, heaterSupply: { kind: "series", amps: 0.15 } }), [oa2], [])).toThrow(/has no heater and would open/);
  });
});

// ── Labelled sections: display segments ──────────────────────────────────────────────────────

const SEGMENTS = ["a", "b", "c", "d", "e", "f", "g", "dot"];

/**
 * Constructed eight-section seven-segment display: filament leads, a common grid and one anode
 * lead per segment, in the order `anodeOrder` (not a real type; exercises labelled sections).
 */
function display(designation: string, anodeOrder: readonly string[]): TubeTypeSpec {
  return {
    designation,
    aliases: [],
    class: "vacuum-fluorescent",
    base: "subminiature",
    pins: [
      { pin: "fil-1", element: "f" },
      { pin: "fil-2", element: "f" },
      { pin: "grid", element: "g1" },
      ...anodeOrder.map((segment, position) => ({ pin: `lead-${position + 1}`, element: "a" as const, section: SEGMENTS.indexOf(segment) + 1 })),
    ],
    sections: SEGMENTS.map((segment, position) => ({ index: position + 1, kind: "indicator" as const, label: segment === "dot" ? "dot" : `segment ${segment}`, typical: [] })),
    heater: { volts: 1, amps: 0.05, directlyHeated: true },
    maxRatings: {},
    sources: { pins: "constructed test case", heater: "constructed test case" },
    userAdded: true,
  };
}

describe("labelled sections", () => {
  const inOrder = display("TEST-DISPLAY", SEGMENTS);
  const swapped = display("TEST-DISPLAY-SWAPPED", ["b", "a", ...SEGMENTS.slice(2)]);
  const unlabelled: TubeTypeSpec = { ...inOrder, designation: "TEST-DISPLAY-PLAIN", sections: inOrder.sections.map(({ label: _label, ...section }) => section) };
  const used = [1, 2, 3, 4, 5, 6, 7, 8];

  it("map a segment only to the segment of the same label: one mapping of eight", () => {
    const result = enumerateSectionMappings(inOrder, used, swapped);
    expect(result.ok).toBe(true);
    if (result.ok) {
      expect(result.mappings).toHaveLength(1); // labels unique, so the only injective label-preserving map is the identity (brute force on 8! orders)
      expect([...result.mappings[0]]).toEqual(used.map((section) => [section, section]));
    }
    // Without labels the eight sections could be swapped freely: 8! = 40 320 orders, past the cap.
    expect(MAX_SECTION_MAPPINGS).toBeLessThan(40_320);
    expect(enumerateSectionMappings(unlabelled, used, unlabelled).ok).toBe(false);
  });

  it("move the two anode leads whose segments swapped places", () => {
    const ranking = rankSubstitutes(socket({ socketType: inOrder, heaterSupply: { kind: "parallel", volts: 1 }, allowRewire: true }), [swapped], []);
    const candidate = ranking.candidates.find((entry) => entry.designation === "TEST-DISPLAY-SWAPPED");
    expect(candidate?.pins.fit).toBe("rewire");
    expect(candidate?.pins.moves.map((move) => `${move.fromPin}→${move.toPin}`).sort()).toEqual(["lead-1→lead-2", "lead-2→lead-1"]);
  });

  it("refuse a display whose segments carry no labels in a labelled socket", () => {
    const ranking = rankSubstitutes(socket({ socketType: inOrder, heaterSupply: { kind: "parallel", volts: 1 }, allowRewire: true }), [unlabelled], []);
    expect(reasonsFor(ranking, "TEST-DISPLAY-PLAIN").join("\n")).toMatch(/indicator "segment a" \(section 1\)/);
  });
});

// ── Heptode grids ────────────────────────────────────────────────────────────────────────────

describe("heptode grid names", () => {
  it("name a pentagrid converter's grids by their work", () => {
    // Pentagrid converter electrode order: g1 oscillator grid, g2+g4 screen, g3 signal grid, g5 suppressor (RCA receiving tube manuals, 6BE6; from memory).
    expect(elementName("g1", "heptode")).toBe("oscillator grid");
    expect(elementName("g3", "heptode")).toBe("signal grid");
    expect(elementName("g4", "heptode")).toBe("screen grid (g4)");
    expect(elementName("g3", "pentode")).toBe("suppressor grid");
    expect(describeElement("g3", 1, "heptode")).toBe("signal grid (section 1)");
  });
});

// ── Cutoff ───────────────────────────────────────────────────────────────────────────────────

describe("sharp and remote cutoff", () => {
  // 6AU6 is a sharp-cutoff and 6BA6 a remote-cutoff (variable-µ) RF pentode on the same 7BK
  // basing (RCA receiving tube manuals; from memory). The values below are the ranker's own text.
  const pentode = (designation: string, cutoff: "sharp" | "remote"): TubeTypeSpec => ({
    designation,
    aliases: [],
    class: "pentode",
    base: "B7G",
    pins: tube6AU6.pins, // the 7BK basing both types share
    sections: [{ index: 1, kind: "pentode", cutoff, typical: [] }],
    heater: { volts: 6.3, amps: 0.3 },
    maxRatings: {},
    sources: { pins: "from memory", heater: "from memory", "sections.1.cutoff": "from memory" },
  });
  const sharp = pentode("6AU6", "sharp");
  const remote = pentode("6BA6", "remote");

  it("warns of a remote-cutoff pentode in a sharp-cutoff socket and ranks it below a sharp one", () => {
    const ranking = rankSubstitutes(socket({ socketType: sharp, heaterSupply: { kind: "parallel", volts: 6.3 } }), [remote, { ...sharp, designation: "TEST-SHARP" }], []);
    expect(explanationFor(ranking, "6BA6")).toContain(
      "warning: section 1: remote-cutoff in place of sharp-cutoff: gain falls gradually with bias instead of at a knee; more distortion on large signals in a fixed-bias stage",
    );
    expect(ranking.candidates.map((candidate) => candidate.designation)).toEqual(["TEST-SHARP", "6BA6"]);
  });

  it("warns of a sharp-cutoff pentode in a gain-controlled socket", () => {
    const ranking = rankSubstitutes(socket({ socketType: remote, heaterSupply: { kind: "parallel", volts: 6.3 } }), [sharp], []);
    expect(explanationFor(ranking, "6AU6").join("\n")).toMatch(/sharp-cutoff in place of remote-cutoff: a gain-controlled \(AGC\) stage cuts off abruptly/);
  });
});
