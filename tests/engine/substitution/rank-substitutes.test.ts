import { describe, expect, it } from "vitest";
import { commonCathodeGain, rankSubstitutes, type Candidate, type SocketDescription, type SubstituteRanking } from "../../../server/engine/substitution/index.ts";
import type { TubeTypeSpec } from "../../../server/engine/tube-types/index.ts";
import {
  constructedInternalConnectionTriode,
  fixtureLibrary,
  tube12AT7,
  tube12AU7,
  tube12AX7,
  tube12BH7,
  tube5814A,
  tube6AU6,
  tube6CG7,
  tube6DJ8,
  tube6922,
  tube6SN7GT,
} from "./fixtures.ts";

function socket(overrides: Partial<SocketDescription> & Pick<SocketDescription, "socketType" | "heaterSupply">): SocketDescription {
  return { allowRewire: false, allowAdapter: false, ...overrides };
}

function candidateNamed(ranking: SubstituteRanking, designation: string): Candidate {
  const found = ranking.candidates.find((candidate) => candidate.designation === designation);
  if (found === undefined) {
    const excluded = ranking.excluded.find((entry) => entry.designation === designation);
    throw new Error(`${designation} is not a candidate${excluded ? `: ${excluded.reasons.join("; ")}` : ""}`);
  }
  return found;
}

function reasonsFor(ranking: SubstituteRanking, designation: string): string[] {
  const found = ranking.excluded.find((entry) => entry.designation === designation);
  if (found === undefined) throw new Error(`${designation} was not excluded`);
  return found.reasons;
}

// 250 V at 8 mA is 2 W per section: inside 12AU7 (2.75 W) and 12AT7 (2.5 W) limits — arithmetic on the fixtures' datasheet maxima.
const moderatePoint = [
  { section: 1, plateVolts: 250, plateMilliamps: 8 },
  { section: 2, plateVolts: 250, plateMilliamps: 8 },
];

describe("direct fits", () => {
  it("12AT7 goes straight into a 12AU7 socket on 12.6 V: same 9A basing, same 12.6 V 0.15 A heater", () => {
    // RCA 12AU7 and 12AT7 data sheets: both basing 9A, heater 12.6 V 0.15 A (from memory)
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, operating: moderatePoint }), fixtureLibrary, []);
    const candidate = candidateNamed(ranking, "12AT7");
    expect(candidate.pins.fit).toBe("direct");
    expect(candidate.pins.moves).toEqual([]);
    expect(candidate.pins.sectionMapping).toEqual([
      { socketSection: 1, candidateSection: 1 },
      { socketSection: 2, candidateSection: 2 },
    ]);
    expect(candidate.heater.fit).toBe("same");
    expect(candidate.heater.heaterCurrentDeltaAmps).toBe(0);
    expect(candidate.relation).toBe("substitute");
    expect(candidate.explanation.length).toBeGreaterThan(3);
  });

  it("5814A is a direct-fitting variant of 12AU7 and ranks right after the socket's own type", () => {
    // GE 5814A data sheet: ruggedized 12AU7, basing 9A, heater 12.6 V 0.175 A / 6.3 V 0.35 A (from memory)
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, operating: moderatePoint }), fixtureLibrary, []);
    expect(ranking.candidates[0].designation).toBe("12AU7");
    expect(ranking.candidates[0].relation).toBe("same-type");
    const variant = ranking.candidates[1];
    expect(variant.designation).toBe("5814A");
    expect(variant.relation).toBe("variant");
    expect(variant.pins.fit).toBe("direct");
    // 0.175 A − 0.15 A: the two data sheets' 12.6 V heater currents
    expect(variant.heater.fit).toBe("compatible");
    expect(variant.heater.heaterCurrentDeltaAmps).toBeCloseTo(0.025, 6);
    expect(variant.explanation[0]).toBe("variant: 5814A → 12AU7");
  });

  it("a 12AU7 socket wired for 6.3 V runs the 12AU7 with its heater halves in parallel", () => {
    // RCA 12AU7 data sheet: 6.3 V 0.3 A with pins 4+5 to one side and 9 to the other (from memory)
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 6.3 }, operating: moderatePoint }), [tube12AU7, tube12AT7], []);
    const own = candidateNamed(ranking, "12AU7");
    expect(own.heater.candidateMode).toBe("half");
    expect(own.heater.candidateHeaterAmps).toBeCloseTo(0.3, 6);
    // 12AT7 also 6.3 V 0.3 A with its centre tap on pin 9 (RCA data sheet, from memory)
    expect(candidateNamed(ranking, "12AT7").pins.fit).toBe("direct");
    expect(candidateNamed(ranking, "12AT7").heater.fit).toBe("same");
  });

  it("accepts a symmetric dual triode whose sections are numbered the other way round, with the sections crossed", () => {
    // Constructed case: the 12AU7 pin map with the section labels 1 and 2 exchanged; same pins carry the same electrodes.
    const relabelled: TubeTypeSpec = {
      ...tube12AU7,
      designation: "TEST-SWAPPED",
      aliases: [],
      pins: tube12AU7.pins.map((pin) => (pin.section === undefined ? pin : { ...pin, section: 3 - pin.section })),
    };
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, operating: moderatePoint }), [relabelled], []);
    const candidate = candidateNamed(ranking, "TEST-SWAPPED");
    expect(candidate.pins.fit).toBe("direct");
    expect(candidate.pins.sectionMapping).toEqual([
      { socketSection: 1, candidateSection: 2 },
      { socketSection: 2, candidateSection: 1 },
    ]);
  });

  it("6BA6 goes straight into a 6AU6 socket; its transconductance is 15.4 % lower", () => {
    // RCA 6AU6A and 6BA6 data sheets: both basing 7BK, 6.3 V 0.3 A; gm 5200 µS and 4400 µS (from memory)
    const ranking = rankSubstitutes(socket({ socketType: tube6AU6, heaterSupply: { kind: "parallel", volts: 6.3 } }), fixtureLibrary, []);
    const candidate = candidateNamed(ranking, "6BA6");
    expect(candidate.pins.fit).toBe("direct");
    expect(candidate.heater.fit).toBe("same");
    // (4400 − 5200) / 5200 × 100, hand computation
    expect(candidate.characteristics.gmDeltaPercent).toBeCloseTo(-15.3846, 3);
    // A dual triode cannot serve a pentode socket.
    expect(reasonsFor(ranking, "12AU7")[0]).toContain("the socket uses pentode (section 1); 12AU7 offers triode, triode");
  });
});

describe("rewire", () => {
  it("6CG7 in a 12AU7 socket wired for 6.3 V: the jumper 4–5 comes off and the pin 9 lead moves to pin 5", () => {
    // 12AU7 basing 9A: 6.3 V heater = pins 4+5 against pin 9 (centre tap). 6CG7 basing 9AJ: heater 4–5 only,
    // pin 9 an internal shield; electrodes on the same pins (RCA data sheets, from memory).
    const ranking = rankSubstitutes(
      socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 6.3 }, operating: moderatePoint, allowRewire: true }),
      [tube6CG7],
      [],
    );
    const candidate = candidateNamed(ranking, "6CG7");
    expect(candidate.pins.fit).toBe("rewire");
    // Hand reasoning on the two pin maps: pin 5 must change sides (1 operation) and pin 9's lead must leave the shield (1 operation);
    // moving the pin 9 lead onto pin 5 after removing the jumper does both in 2, the least possible.
    expect(candidate.pins.removals.map(({ element, pin }) => ({ element, pin }))).toEqual([{ element: "h", pin: "5" }]);
    expect(candidate.pins.moves.map(({ element, fromPin, toPin }) => ({ element, fromPin, toPin }))).toEqual([{ element: "hct", fromPin: "9", toPin: "5" }]);
    expect(candidate.pins.jumpers).toEqual([]);
    expect(candidate.pins.operationCount).toBe(2);
    expect(candidate.heater.fit).toBe("needs-change");
    // 0.6 A − 0.3 A: 6CG7 heater against 12AU7 at 6.3 V (data sheets)
    expect(candidate.heater.heaterCurrentDeltaAmps).toBeCloseTo(0.3, 6);
    expect(candidate.explanation.some((line) => line.includes("internal shield on pin 9 is left unconnected"))).toBe(true);
  });

  it("12AU7 in a 6CG7 socket on 6.3 V: shield lead off pin 9, heater lead from 5 to 9, jumper 4 to 5", () => {
    // Same two basings the other way round. Lower bound by hand: the shield lead on 9 must go (1), the centre tap on 9 needs
    // a heater lead (1), and both 4 and 5 need the same side while the socket feeds only one of them (1): at least 3.
    const ranking = rankSubstitutes(socket({ socketType: tube6CG7, heaterSupply: { kind: "parallel", volts: 6.3 }, allowRewire: true }), [tube12AU7], []);
    const candidate = candidateNamed(ranking, "12AU7");
    expect(candidate.pins.operationCount).toBe(3);
    expect(candidate.pins.removals.map(({ element, pin }) => ({ element, pin }))).toEqual([{ element: "s", pin: "9" }]);
    expect(candidate.pins.moves.map(({ fromPin, toPin }) => ({ fromPin, toPin }))).toEqual([{ fromPin: "5", toPin: "9" }]);
    expect(candidate.pins.jumpers.map(({ fromPin, toPin }) => ({ fromPin, toPin }))).toEqual([{ fromPin: "4", toPin: "5" }]);
  });

  it("the same 6CG7 needs a pin-crossing adapter when rewiring is not allowed, and is excluded when neither is", () => {
    const withAdapter = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 6.3 }, operating: moderatePoint, allowAdapter: true }), [tube6CG7], []);
    expect(candidateNamed(withAdapter, "6CG7").pins.fit).toBe("adapter");
    const neither = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 6.3 }, operating: moderatePoint }), [tube6CG7], []);
    const reasons = reasonsFor(neither, "6CG7");
    expect(reasons.some((reason) => reason.startsWith("pins differ and neither rewiring nor an adapter is allowed"))).toBe(true);
    expect(reasons.some((reason) => reason.includes("move the heater supply B lead from pin 9 to pin 5"))).toBe(true);
  });
});

describe("adapter", () => {
  it("6SN7GT serves a 6CG7 socket through a noval-to-octal adapter that maps each electrode", () => {
    // 6CG7 basing 9AJ against 6SN7GT basing 8BD (RCA data sheets, from memory): the same triodes, other pins.
    const description = socket({ socketType: tube6CG7, heaterSupply: { kind: "parallel", volts: 6.3 }, allowAdapter: true });
    const candidate = candidateNamed(rankSubstitutes(description, [tube6SN7GT], []), "6SN7GT");
    expect(candidate.pins.fit).toBe("adapter");
    const map = Object.fromEntries(candidate.pins.adapterMap.map((entry) => [`${entry.element}${entry.section ?? ""}`, `${entry.socketPins.join("+")}→${entry.candidatePins.join("+")}`]));
    expect(map).toEqual({
      a1: "6→5",
      a2: "1→2",
      g11: "7→4",
      g12: "2→1",
      k1: "8→6",
      k2: "3→3",
      "heater-A": "4→7",
      "heater-B": "5→8",
    });
    // 6.3 V 0.6 A both (data sheets)
    expect(candidate.heater.fit).toBe("same");
    expect(candidate.explanation.some((line) => line.includes("leaves the socket's internal shield (pin 9) unconnected"))).toBe(true);

    const noAdapter = rankSubstitutes({ ...description, allowAdapter: false }, [tube6SN7GT], []);
    expect(reasonsFor(noAdapter, "6SN7GT")).toEqual(["6SN7GT's base is octal, the socket's is B9A, and an adapter is not allowed"]);
  });
});

describe("hard failures", () => {
  it("excludes 6DJ8 from a 6CG7 socket at 250 V: its plate is rated 130 V", () => {
    // 6CG7 typical point 250 V, 9 mA (RCA data sheet); 6DJ8 maxima 130 V, 1.8 W (Amperex data sheet) (from memory)
    const ranking = rankSubstitutes(socket({ socketType: tube6CG7, heaterSupply: { kind: "parallel", volts: 6.3 } }), [tube6DJ8, tube6922], []);
    const reasons = reasonsFor(ranking, "6DJ8");
    expect(reasons).toContain("plate voltage of section 1: the circuit applies 250 V, above 6DJ8's 130 V");
    // 250 V × 9 mA = 2.25 W against 1.8 W, hand computation
    expect(reasons).toContain("plate dissipation of section 1: the circuit applies 2.25 W (250 V × 9 mA), above 6DJ8's 1.8 W");
    // 6922 maximum plate 220 V (Amperex data sheet, from memory)
    expect(reasonsFor(ranking, "6922")).toContain("plate voltage of section 1: the circuit applies 250 V, above 6922's 220 V");
  });

  it("derating turns a pass into a failure: 300 V × 0.8 = 240 V is below the circuit's 250 V", () => {
    // 12AT7 maximum plate 300 V (RCA data sheet, from memory); the 0.8 factor is the caller's choice
    const base = socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, operating: moderatePoint });
    const passing = candidateNamed(rankSubstitutes(base, [tube12AT7], []), "12AT7");
    const plateVolts = passing.ratings.find((check) => check.rating === "plateVolts" && check.section === 1);
    // (300 − 250) / 300 × 100, hand computation
    expect(plateVolts?.headroomPercent).toBeCloseTo(16.6667, 3);
    const derated = rankSubstitutes({ ...base, deratingFactor: 0.8 }, [tube12AT7], []);
    expect(reasonsFor(derated, "12AT7")).toContain("plate voltage of section 1: the circuit applies 250 V, above 12AT7's 240 V (80 % of 300 V)");
  });

  it("excludes a 6.3 V-only heater from a 12.6 V parallel socket", () => {
    // 6CG7 heater 6.3 V 0.6 A, no centre tap (RCA data sheet, from memory)
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, allowRewire: true, allowAdapter: true }), [tube6CG7, tube6SN7GT], []);
    expect(reasonsFor(ranking, "6CG7")).toContain("heater 6.3 V 0.6 A cannot run on a 12.6 V parallel supply");
    expect(reasonsFor(ranking, "6SN7GT")).toContain("heater 6.3 V 0.6 A cannot run on a 12.6 V parallel supply");
  });

  it("excludes heaters whose current differs from a 150 mA series string", () => {
    // 12AU7, 12AX7, 12AT7: 12.6 V 0.15 A; 12BH7: 0.3 A; 5814A: 0.175 A (RCA and GE data sheets, from memory)
    // 100 V at 1 mA is inside every fixture's ratings (arithmetic on the data sheet maxima).
    const lowPoint = [
      { section: 1, plateVolts: 100, plateMilliamps: 1 },
      { section: 2, plateVolts: 100, plateMilliamps: 1 },
    ];
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "series", amps: 0.15 }, operating: lowPoint }), [tube12AX7, tube12AT7, tube12BH7, tube5814A], []);
    expect(candidateNamed(ranking, "12AX7").heater.fit).toBe("same");
    expect(candidateNamed(ranking, "12AT7").heater.fit).toBe("same");
    expect(reasonsFor(ranking, "12BH7")).toEqual(["heater 12.6 V 0.3 A or 6.3 V 0.6 A (centre-tapped) cannot run on a 0.15 A series string"]);
    expect(reasonsFor(ranking, "5814A")).toEqual(["heater 12.6 V 0.175 A or 6.3 V 0.35 A (centre-tapped) cannot run on a 0.15 A series string"]);
  });

  it("on a 300 mA string a 12BH7 carries the current but drops 12.6 V where the 12AU7 dropped 6.3 V", () => {
    // 12AU7 at 6.3 V 0.3 A (halves), 12BH7 at 12.6 V 0.3 A (data sheets); ΔR = −(12.6 − 6.3) / 0.3 = −21 Ω, hand computation
    const ranking = rankSubstitutes(
      socket({ socketType: tube12AU7, heaterSupply: { kind: "series", amps: 0.3, stringWarmUpSeconds: 11 }, operating: moderatePoint, allowRewire: true }),
      [tube12BH7],
      [],
    );
    const candidate = candidateNamed(ranking, "12BH7");
    expect(candidate.heater.fit).toBe("needs-change");
    expect(candidate.heater.seriesStringNote).toContain("the dropper must lose 21 Ω");
    // 12BH7 states no controlled warm-up; the string's 11 s is the caller's
    expect(candidate.heater.seriesStringNote).toContain("warning: no controlled warm-up");
  });

  it("a socket lead landing on an internal connection excludes the type unless the owner rewires", () => {
    // Constructed case: pin 9 is IC on TEST-IC9; a 12AU7 socket on 6.3 V feeds pin 9 (the 12AU7 centre tap).
    const description = socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 6.3 }, operating: moderatePoint });
    const reasons = reasonsFor(rankSubstitutes(description, [constructedInternalConnectionTriode], []), "TEST-IC9");
    expect(reasons).toContain("the socket wires pin 9 (heater supply B) but pin 9 of TEST-IC9 is an internal connection (IC)");

    const rewired = candidateNamed(rankSubstitutes({ ...description, allowRewire: true }, [constructedInternalConnectionTriode], []), "TEST-IC9");
    expect(rewired.pins.fit).toBe("rewire");
    expect(rewired.pins.moves.map(({ fromPin, toPin }) => ({ fromPin, toPin }))).toEqual([{ fromPin: "9", toPin: "5" }]);
  });

  it("a tie point on an unconnected socket pin must land on an unconnected pin of the substitute", () => {
    // Constructed case: the 6AU6 fixture with its suppressor grid tied inside, so pin 2 is NC and the socket anchors parts there.
    const tiedSuppressor: TubeTypeSpec = {
      ...tube6AU6,
      designation: "TEST-NC2",
      aliases: [],
      pins: tube6AU6.pins.map((pin) => (pin.pin === "2" ? { pin: "2", element: "nc" as const } : pin)),
      notes: "g3 tied to the cathode inside (constructed test case)",
    };
    const description = socket({ socketType: tiedSuppressor, heaterSupply: { kind: "parallel", volts: 6.3 }, usedPins: ["1", "2", "5", "6", "7"], allowRewire: true });
    const ranking = rankSubstitutes(description, [tiedSuppressor, tube6AU6], []);
    expect(candidateNamed(ranking, "TEST-NC2").pins.fit).toBe("direct");
    // 6AU6 basing 7BK: pin 2 is the suppressor grid and no pin is free (RCA data sheet, from memory)
    expect(reasonsFor(ranking, "6AU6")).toContain("the socket uses pin 2 as a tie point, 6AU6 has its suppressor grid (section 1) there and no free pin to move it to");
    // An adapter leaves the tie point behind, so it still serves.
    const withAdapter = rankSubstitutes({ ...description, allowAdapter: true }, [tube6AU6], []);
    expect(candidateNamed(withAdapter, "6AU6").pins.fit).toBe("adapter");
  });

  it("rejects an inconsistent description", () => {
    expect(() => rankSubstitutes(socket({ socketType: tube6CG7, heaterSupply: { kind: "parallel", volts: 12.6 } }), fixtureLibrary, [])).toThrow(RangeError);
    expect(() => rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, deratingFactor: 1.5 }), fixtureLibrary, [])).toThrow(RangeError);
  });
});

describe("characteristics", () => {
  it("computes the common-cathode gain change A = µ·RL/(RL + rp) with the circuit's plate load", () => {
    // 12AU7 at 250 V: µ 17, rp 7700 Ω; 12AT7 at 250 V: µ 60, rp 10 900 Ω (RCA data sheets, from memory).
    // Hand computation, RL = 100 kΩ: 17·100000/107700 = 15.7846; 60·100000/110900 = 54.1028; ratio − 1 = +242.76 %.
    const ranking = rankSubstitutes(
      socket({
        socketType: tube12AU7,
        heaterSupply: { kind: "parallel", volts: 12.6 },
        operating: moderatePoint.map((point) => ({ ...point, plateLoadOhms: 100_000 })),
      }),
      [tube12AT7],
      [],
    );
    const characteristics = candidateNamed(ranking, "12AT7").characteristics;
    expect(characteristics.sections[0].socketGain).toBeCloseTo(15.7846, 3);
    expect(characteristics.sections[0].candidateGain).toBeCloseTo(54.1028, 3);
    expect(characteristics.gainChangePercent).toBeCloseTo(242.76, 1);
    // (5500 − 2200) / 2200 = +150 %; (60 − 17) / 17 = +252.94 %; (10900 − 7700) / 7700 = +41.56 %, hand computation
    expect(characteristics.gmDeltaPercent).toBeCloseTo(150, 6);
    expect(characteristics.muDeltaPercent).toBeCloseTo(252.941, 2);
    expect(characteristics.rpDeltaPercent).toBeCloseTo(41.558, 2);
    expect(characteristics.outsideTolerance.length).toBe(3);
  });

  it("assumes RL = 2·rp of the socket type when the circuit gives no plate load, and says so", () => {
    // Hand computation, RL = 2 × 7700 = 15 400 Ω: 17·15400/23100 = 11.3333; 60·15400/26300 = 35.1331; +209.998 %.
    expect(commonCathodeGain(17, 7700, 15400)).toBeCloseTo(11.3333, 4);
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, operating: moderatePoint }), [tube12AT7], []);
    const characteristics = candidateNamed(ranking, "12AT7").characteristics;
    expect(characteristics.sections[0].plateLoadAssumed).toBe(true);
    expect(characteristics.sections[0].plateLoadOhms).toBe(15400);
    expect(characteristics.gainChangePercent).toBeCloseTo(209.998, 2);
    expect(characteristics.note).toContain("RL = 15400 Ω assumed (2·rp of 12AU7; no plate load given)");
  });

  it("fills a missing µ from Barkhausen's µ = gm·rp for pentodes", () => {
    // 6AU6: gm 5200 µS, rp 1 MΩ → µ = 5200 (RCA data sheet values, from memory; Barkhausen relation)
    const ranking = rankSubstitutes(socket({ socketType: tube6AU6, heaterSupply: { kind: "parallel", volts: 6.3 } }), [tube6AU6], []);
    expect(candidateNamed(ranking, "6AU6").characteristics.sections[0].socketValues.mu).toBeCloseTo(5200, 6);
  });
});

describe("ranking and stock", () => {
  it("orders same type and variants first, then direct, rewire and adapter fits, with strictly falling scores", () => {
    const ranking = rankSubstitutes(
      socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 6.3 }, operating: moderatePoint, allowRewire: true, allowAdapter: true }),
      [...fixtureLibrary, constructedInternalConnectionTriode],
      [],
    );
    const order = ranking.candidates.map((candidate) => `${candidate.relation}/${candidate.pins.fit}`);
    expect(order.slice(0, 2)).toEqual(["same-type/direct", "variant/direct"]);
    const fitRank = { direct: 0, rewire: 1, adapter: 2 } as const;
    const substituteFits = ranking.candidates.slice(2).map((candidate) => fitRank[candidate.pins.fit]);
    expect(substituteFits).toEqual([...substituteFits].sort((left, right) => left - right));
    expect(new Set(ranking.candidates.map((candidate) => candidate.pins.fit))).toEqual(new Set(["direct", "rewire", "adapter"]));
    for (let index = 1; index < ranking.candidates.length; index += 1) {
      expect(ranking.candidates[index].score).toBeLessThanOrEqual(ranking.candidates[index - 1].score);
    }
  });

  it("counts good stock under any of a type's names", () => {
    // 12AU7's alias ECC82 (Pro Electron); 3 + 2 good, invented stock
    const ranking = rankSubstitutes(socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, operating: moderatePoint }), [tube12AU7, tube12AT7], [
      { designation: "ecc82", good: 3 },
      { designation: "12AU7", good: 2 },
      { designation: "12AT7", good: 4 },
    ]);
    expect(candidateNamed(ranking, "12AU7").inStockGood).toBe(5);
    expect(candidateNamed(ranking, "12AT7").inStockGood).toBe(4);
    expect(candidateNamed(ranking, "12AU7").explanation).toContain("5 good in stock");
  });

  it("checks only the sections the socket wires", () => {
    // Socket wires section 1 only (pins 6, 7, 8 of basing 9A); 12AX7's 1 W would fail at 2 W, and does, for section 1 alone.
    const ranking = rankSubstitutes(
      socket({ socketType: tube12AU7, heaterSupply: { kind: "parallel", volts: 12.6 }, operating: moderatePoint, usedPins: ["6", "7", "8"] }),
      [tube12AX7, tube12AT7],
      [],
    );
    expect(reasonsFor(ranking, "12AX7")).toEqual(["plate dissipation of section 1: the circuit applies 2 W (250 V × 8 mA), above 12AX7's 1 W"]);
    expect(candidateNamed(ranking, "12AT7").pins.sectionMapping).toEqual([{ socketSection: 1, candidateSection: 1 }]);
  });
});
