/**
 * Library values checked against the documents read while building it. Each expected value
 * names its document beside it; "consulted 2026" marks web copies read that year.
 */
import { describe, expect, it } from "vitest";
import type { PinElement, TubeTypeSpec } from "../../server/engine/tube-types/index.ts";
import { DEFAULT_TUBE_LIBRARY_DIRECTORY, loadTubeLibrary, lookupTubeType } from "../../server/library/load-library.ts";

const library = loadTubeLibrary(DEFAULT_TUBE_LIBRARY_DIRECTORY);

function type(name: string): TubeTypeSpec {
  const spec = lookupTubeType(library, name);
  if (!spec) throw new Error(`${name} is not in the library`);
  return spec;
}

/** Pin map as "pin:element/section" tokens in pin order, e.g. "1:a/2 4:h". */
function pinMap(name: string): string {
  return type(name)
    .pins.map((pin) => `${pin.pin}:${pin.element}${pin.section === undefined ? "" : `/${pin.section}`}`)
    .join(" ");
}

function elementsInPinOrder(name: string): PinElement[] {
  return type(name).pins.map((pin) => pin.element);
}

describe("heaters", () => {
  it("12AU7: 12.6 V 0.15 A series, 6.3 V 0.3 A parallel", () => {
    const heater = type("12AU7").heater;
    expect(heater.volts).toBeCloseTo(12.6, 6); // Brimar 12AU7 application report VAD/513.4, 1950
    expect(heater.amps).toBeCloseTo(0.15, 6); // Brimar 12AU7 application report VAD/513.4, 1950
    expect(heater.centreTap?.half.volts).toBeCloseTo(6.3, 6); // Brimar 12AU7 application report VAD/513.4, 1950
    expect(heater.centreTap?.half.amps).toBeCloseTo(0.3, 6); // Brimar 12AU7 application report VAD/513.4, 1950
  });

  it("12AX7: 12.6 V 0.15 A series, 6.3 V 0.3 A parallel", () => {
    const heater = type("ECC83").heater;
    expect(heater.volts).toBeCloseTo(12.6, 6); // 12AX7 data sheet transcription, guitarkitbuilder.com (consulted 2026)
    expect(heater.amps).toBeCloseTo(0.15, 6); // same document
    expect(heater.centreTap?.half.amps).toBeCloseTo(0.3, 6); // same document; also Wikipedia 12AX7 infobox (Sylvania)
  });

  it("12AZ7 draws 225 mA series / 450 mA parallel, 12BH7 300 / 600 mA", () => {
    expect(type("12AZ7").heater.amps).toBeCloseTo(0.225, 6); // Tung-Sol 12AZ7 data sheet via tubeofile.com (consulted 2026)
    expect(type("12AZ7").heater.centreTap?.half.amps).toBeCloseTo(0.45, 6); // same document
    expect(type("12BH7").heater.amps).toBeCloseTo(0.3, 6); // Tung-Sol 12BH7 data sheet, 1950, via tubeofile.com
    expect(type("12BH7").heater.centreTap?.half.amps).toBeCloseTo(0.6, 6); // same document
  });

  it("octal and loctal twin triodes", () => {
    expect(type("6SN7GT").heater.amps).toBeCloseTo(0.6, 6); // Romanian Wikipedia 6SN7 article (RCA figures), consulted 2026
    expect(type("12SX7GT").heater.volts).toBeCloseTo(12.6, 6); // RCA 12SX7-GT data sheet via tubeofile.com
    expect(type("12SX7GT").heater.amps).toBeCloseTo(0.3, 6); // RCA 12SX7-GT data sheet via tubeofile.com
    expect(type("7N7").heater.amps).toBeCloseTo(0.6, 6); // Tung-Sol 7N7 data sheet via tubeofile.com
    expect(type("14N7").heater.volts).toBeCloseTo(12.6, 6); // Tung-Sol 7N7 data sheet via tubeofile.com (14N7 note)
    expect(type("7AF7").heater.amps).toBeCloseTo(0.3, 6); // Sylvania 7AF7 data via tubeofile.com (0.30 A; Sylvania itself 0.32 A)
    expect(type("14AF7").heater.amps).toBeCloseTo(0.15, 6); // Sylvania 7AF7 data via tubeofile.com (14AF7 note)
  });

  it("output types, a power triode and a thyratron", () => {
    expect(type("6L6GC").heater.amps).toBeCloseTo(0.9, 6); // GE Essential Characteristics, 1973 (via Wikipedia 6L6)
    expect(type("EL84").heater.amps).toBeCloseTo(0.76, 6); // Russian Wikipedia EL84 article (consulted 2026)
    expect(type("EF86").heater.amps).toBeCloseTo(0.2, 6); // Wikipedia EF86 article (consulted 2026)
    expect(type("EL34").heater.amps).toBeGreaterThanOrEqual(1.35); // Electro-Harmonix EL34EH: 1.35–1.65 A
    expect(type("EL34").heater.amps).toBeLessThanOrEqual(1.65); // Electro-Harmonix EL34EH: 1.35–1.65 A
    expect(type("6AQ8").heater.amps).toBeGreaterThanOrEqual(0.4); // Electro-Harmonix 6AQ8EH: 400–485 mA
    expect(type("6AQ8").heater.amps).toBeLessThanOrEqual(0.485); // Electro-Harmonix 6AQ8EH: 400–485 mA
    expect(type("300B").heater.volts).toBeCloseTo(5, 6); // Electro-Harmonix 300BEH data sheet
    expect(type("300B").heater.directlyHeated).toBe(true); // Electro-Harmonix 300BEH: coated filament
    expect(type("2D21").heater.volts).toBeCloseTo(6.3, 6); // r-type.org Valve Museum EN91 page
    expect(type("2D21").heater.amps).toBeCloseTo(0.6, 6); // r-type.org Valve Museum EN91 page
  });
});

describe("maximum ratings", () => {
  it("12AU7 and 12AX7 plate limits", () => {
    expect(type("12AU7").maxRatings.plateVolts).toBe(300); // Brimar 12AU7 application report, 1950
    expect(type("12AU7").maxRatings.plateWatts).toBeCloseTo(2.75, 6); // Brimar 12AU7 application report, 1950
    expect(type("12AX7").maxRatings.plateVolts).toBe(300); // 12AX7 data sheet transcription, design-centre values
    expect(type("12AX7").maxRatings.plateWatts).toBeCloseTo(1.0, 6); // same document
    expect(type("12AX7").maxRatings.heaterCathodeVolts).toBe(180); // same document
  });

  it("heater-cathode ratings separate the 12AZ7 from the 12AT7", () => {
    expect(type("12AZ7").maxRatings.heaterCathodeVolts).toBe(200); // Tung-Sol 12AZ7 via tubeofile.com
    expect(type("12AT7").maxRatings.heaterCathodeVolts).toBe(90); // same document, comparing with the 12AT7
  });

  it("octal and loctal twin triodes", () => {
    expect(type("12SX7GT").maxRatings.plateVolts).toBe(300); // RCA 12SX7-GT via tubeofile.com
    expect(type("12SX7GT").maxRatings.plateWatts).toBeCloseTo(2.5, 6); // RCA 12SX7-GT via tubeofile.com
    expect(type("7N7").maxRatings.plateVolts).toBe(300); // Tung-Sol 7N7 via tubeofile.com
    expect(type("7N7").maxRatings.plateWatts).toBeCloseTo(2.5, 6); // Tung-Sol 7N7 via tubeofile.com
    expect(type("12BH7").maxRatings.plateWatts).toBeCloseTo(3.5, 6); // Tung-Sol 12BH7, 1950, via tubeofile.com
  });

  it("power types", () => {
    expect(type("6L6GC").maxRatings.plateWatts).toBe(30); // GE Essential Characteristics, 1973 (via Wikipedia 6L6)
    expect(type("6L6GC").maxRatings.plateVolts).toBe(500); // GE Essential Characteristics, 1973 (via Wikipedia 6L6)
    expect(type("6L6").maxRatings.plateWatts).toBe(19); // audioXpress, "Selecting a Power Tube", 2018
    expect(type("EL34").maxRatings.plateWatts).toBe(25); // Electro-Harmonix EL34EH data sheet
    expect(type("EL34").maxRatings.screenWatts).toBe(8); // Electro-Harmonix EL34EH data sheet
    expect(type("EL34").maxRatings.cathodeMilliamps).toBe(150); // Electro-Harmonix EL34EH data sheet
    expect(type("EL84").maxRatings.plateVolts).toBe(300); // Russian Wikipedia EL84, average design limits
    expect(type("EL84").maxRatings.screenVolts).toBe(300); // Russian Wikipedia EL84
    expect(type("EL84").maxRatings.plateWatts).toBe(12); // Russian Wikipedia EL84
    expect(type("EL84").maxRatings.screenWatts).toBe(2); // Russian Wikipedia EL84
    expect(type("EF86").maxRatings.plateWatts).toBe(1); // Wikipedia EF86 infobox
    expect(type("EF86").maxRatings.cathodeMilliamps).toBe(6); // Wikipedia EF86 infobox, max current
    expect(type("300B").maxRatings.plateVolts).toBe(450); // Electro-Harmonix 300BEH data sheet
    expect(type("300B").maxRatings.plateWatts).toBe(40); // Electro-Harmonix 300BEH data sheet
    expect(type("2D21").maxRatings.plateVolts).toBe(650); // r-type.org EN91, absolute maximum Va
  });
});

describe("typical operating points", () => {
  it("12AX7 class A1 at 250 V and 100 V", () => {
    const [at100, at250] = type("12AX7").sections[0].typical;
    // 12AX7 data sheet transcription (guitarkitbuilder.com, consulted 2026): 250 V, -2 V, 1.2 mA, 1600 µmho, µ 100, 62,500 Ω
    expect(at250).toMatchObject({ plateVolts: 250, gridVolts: -2, plateMilliamps: 1.2, transconductanceMicroSiemens: 1600, mu: 100, plateResistanceOhms: 62500 });
    // same document: 100 V, -1 V, 0.5 mA, 1250 µmho, µ 100, 80,000 Ω
    expect(at100).toMatchObject({ plateVolts: 100, gridVolts: -1, plateMilliamps: 0.5, transconductanceMicroSiemens: 1250, mu: 100, plateResistanceOhms: 80000 });
  });

  it("12AT7 high-current point", () => {
    const point = type("12AT7").sections[0].typical[0];
    expect(point.plateVolts).toBe(250); // Tung-Sol 12AZ7 via tubeofile.com, stated identical to 12AT7
    expect(point.plateMilliamps).toBe(10); // same document
    expect(point.transconductanceMicroSiemens).toBe(5500); // same document: 5.5 mA/V
    expect(point.plateResistanceOhms).toBe(10900); // same document: 10.9 kΩ
  });

  it("6SN7GT class A1", () => {
    // Romanian Wikipedia 6SN7 (RCA figures): 250 V, -8 V, 9 mA, µ 20, 2.6 mA/V, 7.7 kΩ
    expect(type("6SN7GT").sections[0].typical[0]).toMatchObject({ plateVolts: 250, gridVolts: -8, plateMilliamps: 9, transconductanceMicroSiemens: 2600, mu: 20, plateResistanceOhms: 7700 });
  });

  it("6L6GC class A1 at 350 V", () => {
    // GE Essential Characteristics, 1973 (via Wikipedia 6L6): 350 V plate, 250 V screen, -18 V, 54 mA
    expect(type("6L6GC").sections[0].typical[0]).toMatchObject({ plateVolts: 350, screenVolts: 250, gridVolts: -18, plateMilliamps: 54 });
  });

  it("EL84, EF86 and EL34 test points", () => {
    const el84 = type("6BQ5").sections[0].typical[0];
    expect(el84.plateVolts).toBe(250); // Russian Wikipedia EL84, single-ended class A
    expect(el84.screenVolts).toBe(250); // same
    expect(el84.transconductanceMicroSiemens).toBe(11300); // same: 11.3 mA/V
    // Wikipedia EF86: 2.2 mA/V at Ia 3.0 mA, Ig2 0.6 mA, Va 250 V, Vg1 -2.2 V, Vg2 140 V
    expect(type("6267").sections[0].typical[0]).toMatchObject({ plateVolts: 250, gridVolts: -2.2, screenVolts: 140, plateMilliamps: 3, screenMilliamps: 0.6, transconductanceMicroSiemens: 2200 });
    // Electro-Harmonix EL34EH test conditions: 250 V plate, 265 V screen, -13.5 V grid
    expect(type("6CA7").sections[0].typical[0]).toMatchObject({ plateVolts: 250, screenVolts: 265, gridVolts: -13.5 });
  });
});

describe("pin maps", () => {
  it("12AU7 on the noval base", () => {
    // Brimar 12AU7 report, 1950: 1 anode, 2 grid, 3 cathode (one unit), 4-5 heater, 6 anode, 7 grid, 8 cathode, 9 heater tap
    expect(pinMap("12AU7")).toBe("1:a/2 2:g1/2 3:k/2 4:h 5:h 6:a/1 7:g1/1 8:k/1 9:hct");
  });

  it("12AX7 and ECC81 share it", () => {
    // 12AX7 transcription: plate #2, grid #2, cathode #2, heater, heater, plate #1, grid #1, cathode #1, heater centre tap
    expect(pinMap("12AX7")).toBe("1:a/2 2:g1/2 3:k/2 4:h 5:h 6:a/1 7:g1/1 8:k/1 9:hct");
    // Electronics Notes pin table, ECC81: a'' g'' k'' h h a' g' k' hct
    expect(pinMap("ECC81")).toBe(pinMap("12AU7"));
  });

  it("6SN7GT and 6CG7", () => {
    // Electro-Harmonix 6SN7EH: 1 second grid, 2 second plate, 3 second cathode, 4 first grid, 5 first plate, 6 first cathode, 7-8 heater
    expect(pinMap("6SN7GT")).toBe("1:g1/2 2:a/2 3:k/2 4:g1/1 5:a/1 6:k/1 7:h 8:h");
    // Electro-Harmonix 6CG7EH, pins 1-8: second plate, grid, cathode, heater, heater, first plate, grid, cathode
    expect(pinMap("6CG7").split(" ").slice(0, 8).join(" ")).toBe("1:a/2 2:g1/2 3:k/2 4:h 5:h 6:a/1 7:g1/1 8:k/1");
    // Electro-Harmonix 6AQ8EH: pin 9 screen between the units
    expect(type("6AQ8").pins.find((pin) => pin.pin === "9")?.element).toBe("s");
  });

  it("beam and pentode output types", () => {
    // Electro-Harmonix 6V6EH: 2,7 heater; 3 plate; 4 grid 2; 5 grid 1; 8 cathode and beam-forming screen
    expect(elementsInPinOrder("6V6GT")).toEqual(["nc", "h", "a", "g2", "g1", "nc", "h", "k"]);
    // Wikipedia 6L6 (GE 1973): 1 n.c., 2 heater, 3 anode, 4 grid 2, 5 grid 1, 6 n.c., 7 heater, 8 cathode and beam plates
    expect(elementsInPinOrder("6L6GC")).toEqual(["nc", "h", "a", "g2", "g1", "nc", "h", "k"]);
    // Electro-Harmonix EL34EH: 1 grid 3, 2-7 heater, 3 plate, 4 grid 2, 5 grid 1, 8 cathode
    expect(elementsInPinOrder("EL34")).toEqual(["g3", "h", "a", "g2", "g1", "nc", "h", "k"]);
    // Electro-Harmonix 300BEH: 1 and 4 filament, 2 plate, 3 grid
    expect(elementsInPinOrder("300B")).toEqual(["f", "a", "g1", "f"]);
  });

  it("ECL82 triode-pentode", () => {
    // Electro-Harmonix 6BM8EH: 1 triode grid, 2 pentode cathode (with g3), 3 pentode g1, 4-5 heater, 6 pentode plate, 7 pentode g2, 8 triode cathode, 9 triode plate
    expect(pinMap("ECL82")).toBe("1:g1/1 2:k/2 3:g1/2 4:h 5:h 6:a/2 7:g2/2 8:k/1 9:a/1");
  });

  it("miniature diodes, battery types and the thyratron", () => {
    // Electronics Notes pin table, EB91: k' a'' h h k'' s a'
    expect(pinMap("EB91")).toBe("1:k/1 2:a/2 3:h 4:h 5:k/2 6:s 7:a/1");
    // Electronics Notes, DF91: -f+g3, a, g2, IC, -f+g3, g1, +f
    expect(elementsInPinOrder("DF91")).toEqual(["f", "a", "g2", "ic", "f", "g1", "f"]);
    // Electronics Notes, DL92: -f, a, g1, g2, fct+g3, a, +f
    expect(elementsInPinOrder("DL92")).toEqual(["f", "a", "g1", "g2", "fct", "a", "f"]);
    // Electronics Notes, EABC80: a'''d a''d k''d h h a'd k'''d+s g a
    expect(elementsInPinOrder("EABC80")).toEqual(["a", "a", "k", "h", "h", "a", "k", "g1", "a"]);
    // r-type.org EN91: g1 k h h g2 a g2
    expect(elementsInPinOrder("EN91")).toEqual(["g1", "k", "h", "h", "g2", "a", "g2"]);
    // angelfire.com long-tail-pair description: 6BH6 grid pin 1, suppressor pin 2, plate pin 5, screen pin 6, cathode pin 7
    expect(elementsInPinOrder("6BH6")).toEqual(["g1", "g3", "h", "h", "a", "g2", "k"]);
  });
});

describe("aliases", () => {
  it("trade names of the same type", () => {
    expect(type("EN91").designation).toBe("2D21"); // r-type.org EN91: sensibly equivalent to 2D21
    expect(type("CV797").designation).toBe("2D21"); // r-type.org EN91 equivalents list
    expect(type("CV4018").designation).toBe("5727"); // r-type.org CV4018 page: also marked 2D21W
    expect(type("6BQ5").designation).toBe("EL84"); // Russian Wikipedia EL84 synonyms
    expect(type("6267").designation).toBe("EF86"); // Wikipedia EF86 article
  });
});

describe("subminiature and vacuum-fluorescent types", () => {
  // Vukolov & Mikhailov, "Znakosintezirujushchie indikatory", Radio i svyaz 1987 (OCR copy read 2026) is "the handbook" below.
  const SEGMENT_LEADS = ["seg-a", "seg-b", "seg-c", "seg-d", "seg-e", "seg-f", "seg-g", "dot"];
  const SEGMENT_LABELS = ["segment a", "segment b", "segment c", "segment d", "segment e", "segment f", "segment g", "dot"];

  it("IV-6: 1.0 V 50 mA filament, 30 V static limit on the anodes", () => {
    const spec = type("IV-6");
    expect(spec.heater.volts).toBeCloseTo(1.0, 6); // the handbook p. 187; IV-6 translated data sheet (MagicSmokeBlog/TranslatedDatasheets)
    expect(spec.heater.amps).toBeCloseTo(0.05, 6); // the handbook p. 187: 50 ± 5 mA; same in the translated data sheet
    expect(spec.heater.directlyHeated).toBe(true); // the handbook: filament (накал) on a vacuum-fluorescent numeral
    expect(spec.maxRatings.plateVolts).toBe(30); // the handbook p. 187, static mode: anode-segment at most 30 V
  });

  it("IV-3 and IV-3A: 0.85 V filament, 50 mA and 30 mA, 30 V static limit", () => {
    expect(type("IV-3").heater.volts).toBeCloseTo(0.85, 6); // the handbook p. 185
    expect(type("IV-3").heater.amps).toBeCloseTo(0.05, 6); // the handbook p. 185: IV-3 50 ± 10 mA
    expect(type("IV-3A").heater.volts).toBeCloseTo(0.85, 6); // the handbook p. 185
    expect(type("IV-3A").heater.amps).toBeCloseTo(0.03, 6); // the handbook p. 185: IV-3A 30 ± 10 mA
    expect(type("IV-3").maxRatings.plateVolts).toBe(30); // the handbook p. 185, static mode
    expect(type("IV-3A").maxRatings.plateVolts).toBe(30); // the handbook p. 185, static mode (one table for both)
  });

  it("IV-3 typical point: 20 V grid, total anode current shared over eight anodes", () => {
    const point = type("IV-3").sections[0].typical[0];
    expect(point.gridVolts).toBe(20); // the handbook p. 185: grid 20 V
    expect(point.plateMilliamps).toBeCloseTo(0.8 / 8, 6); // the handbook p. 185: 0.8 mA total for all anode-segments, over 7 segments + dot
    expect(point.plateMilliamps).toBeLessThanOrEqual(0.3); // the handbook p. 185: at most 0.3 mA per segment (static)
  });

  it("seven-segment numerals: one labelled indicator per segment and the dot, each on its own anode lead", () => {
    for (const name of ["IV-3", "IV-3A", "IV-6"]) {
      const spec = type(name);
      // the handbook pp. 183-187: seven segments and a decimal point, one grid, one filament
      expect(spec.sections.map((section) => section.label)).toEqual(SEGMENT_LABELS);
      expect(spec.pins.filter((pin) => pin.element === "a").map((pin) => [pin.pin, pin.section])).toEqual(SEGMENT_LEADS.map((lead, position) => [lead, position + 1]));
      expect(spec.pins.filter((pin) => pin.element === "g1")).toEqual([{ pin: "grid", element: "g1" }]);
      expect(spec.pins.filter((pin) => pin.element === "f").map((pin) => pin.pin)).toEqual(["fil-1", "fil-2"]);
    }
  });

  it("DM160: filament, grid and anode on four leads", () => {
    // classiccmp mailing list, T. Duell, 1999: "4 external connections - the 2 ends of the filament, the anode (plate), and the control grid"
    expect(elementsInPinOrder("DM160").sort()).toEqual(["a", "f", "f", "g1"]);
    expect(type("6977").designation).toBe("DM160"); // from memory: EIA number of the same tube
    expect(type("DM160").class).toBe("vacuum-fluorescent");
  });

  it("6021 is a twin triode", () => {
    // RCA 6021 data sheet extract quoted on effectrode.com: "subminiature medium mu twin triode of the heated cathode type having flexible leads"
    expect(type("6021").class).toBe("dual-triode");
    expect(type("6021").base).toBe("subminiature");
  });

  it("wire-ended leads use one vocabulary of function names", () => {
    // house rule for wire-ended types (lead order varies by maker), not a datasheet value
    const vocabulary = new Set([
      "plate", "grid", "cathode", "screen", "suppressor", "heater-1", "heater-2", "fil-1", "fil-2", "shield",
      "plate-1", "grid-1", "cathode-1", "plate-2", "grid-2", "cathode-2", ...SEGMENT_LEADS,
    ]);
    const names = ["5718", "5719", "5840", "5899", "6021", "6111", "6112", "5647", "5896", "5672", "5678", "1AD4", "DM160", "IV-3", "IV-3A", "IV-6"];
    for (const name of names) {
      const spec = type(name);
      expect(spec.base).toBe("subminiature");
      for (const pin of spec.pins) expect(vocabulary.has(pin.pin), `${name} lead ${pin.pin}`).toBe(true);
      expect(spec.notes).toContain("Leads named by function; take the lead order from the maker's outline drawing before soldering.");
    }
  });
});

describe("pentagrid converters, per-section ratings and glow regulators", () => {
  // "the B7G battery thread" below: radiomuseum.org forum, "Common Miniature 7pin (B7G) Battery tubes (valves)",
  // M. Watterson, 2012 (consulted 2026).
  it("1R5 is the DK91, a 1.4 V 50 mA directly heated pentagrid converter", () => {
    expect(type("DK91").designation).toBe("1R5"); // the B7G battery thread: DK91 is essentially the RCA 1R5
    expect(type("1R5").heater.volts).toBeCloseTo(1.4, 6); // the B7G battery thread: the RCA B7G series at 1.4 V @ 50 mA
    expect(type("1R5").heater.amps).toBeCloseTo(0.05, 6); // same document; the 1R5-1T4-1S5-3S4 set at physicsmuseum.uq.edu.au (c. 1955) draws 50 mA on its series filaments
    expect(type("1R5").heater.directlyHeated).toBe(true); // same document: battery filament valves
    expect(type("1R5").class).toBe("heptode"); // radicalvalves.com "All Dry": the 1R5 is the pentagrid converter of RCA's 1940 B7G line-up
    expect(type("1R5").sections.map((section) => section.kind)).toEqual(["heptode"]); // same document
  });

  it("OA2 regulates at 150 V", () => {
    // hamradioqrp.com, "Voltage regulation, tube style", 2018: "The OA2 regulates voltage to 150 volts"
    expect(type("OA2").sections[0].glow?.operatingVolts).toBe(150);
  });
});
