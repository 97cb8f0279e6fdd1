/**
 * Display text of the substitutes page. Inputs come from the ranker run on the engine's test
 * fixtures (tests/engine/substitution/fixtures.ts, each with its datasheet noted there); the
 * expected text is hand arithmetic on those figures.
 */
import { describe, expect, it } from "vitest";
import { rankSubstitutes, type Candidate } from "../../server/engine/substitution/index.ts";
import { candidateRow, currentChange, describeRating, describeSupply, displayNumber, displayOhms, goodStockHref, sectionRowsFor, signedPercent, toleranceNote } from "../../server/substitutes/substitute-view.ts";
import { fixtureLibrary, tube12AU7, tube6AU6 } from "../engine/substitution/fixtures.ts";

function rankedFor(designation: string, allowRewire: boolean, allowAdapter: boolean, volts: number): Candidate {
  const ranking = rankSubstitutes(
    { socketType: tube12AU7, heaterSupply: { kind: "parallel", volts }, allowRewire, allowAdapter, operating: [{ section: 1, plateVolts: 250, plateMilliamps: 8 }, { section: 2, plateVolts: 250, plateMilliamps: 8 }] },
    fixtureLibrary,
    [{ designation: "12AT7", good: 7 }],
  );
  const found = ranking.candidates.find((candidate) => candidate.designation === designation);
  if (!found) throw new Error(`${designation} not ranked`);
  return found;
}

describe("number text", () => {
  it("rounds, drops trailing zeros and writes a true minus", () => {
    expect(displayNumber(0.1500001)).toBe("0.15");
    expect(displayNumber(-2.5, 1)).toBe("\u22122.5");
    expect(displayNumber(-0.0001)).toBe("0");
    expect(signedPercent(210.04)).toBe("+210 %");
    expect(signedPercent(-15.3846)).toBe("\u221215.4 %");
    expect(signedPercent(0.01)).toBe("±0 %");
    expect(currentChange(0.025)).toBe("+0.025 A");
    expect(currentChange(0)).toBe("no change");
    expect(displayOhms(15400)).toBe("15.4 kΩ");
    expect(displayOhms(470)).toBe("470 Ω");
    expect(displayOhms(1e6)).toBe("1 MΩ");
  });

  it("describes supplies and rating checks", () => {
    expect(describeSupply({ kind: "parallel", volts: 6.3 })).toBe("a 6.3 V parallel heater supply");
    expect(describeSupply({ kind: "series", milliamps: 150, warmUpSeconds: 11 })).toBe("a 150 mA series string (11 s warm-up)");
    // 250 V against 300 V × 0.8 = 240 V: headroom (240 − 250) / 240 = −4.17 %, hand arithmetic.
    expect(describeRating({ rating: "plateVolts", section: 1, circuitValue: 250, maxValue: 300, deratedMax: 240, headroomPercent: -4.1667, ok: false })).toBe(
      "plate volts, section 1: 250 V of 240 V (300 V × 0.8) — \u22124.2 % headroom",
    );
    expect(describeRating({ rating: "plateWatts", section: 2, circuitValue: 2, maxValue: 2.75, deratedMax: 2.75, headroomPercent: 27.27, ok: true })).toBe(
      "plate dissipation, section 2: 2 W of 2.75 W max — 27.3 % headroom",
    );
  });

  it("folds tolerance warnings into one line", () => {
    expect(toleranceNote(["sections 1, 2: gm differs by +150 % (tolerance ±20 %)", "sections 1, 2: µ differs by +252.9 % (tolerance ±20 %)"])).toBe("beyond tolerance: gm, µ (sections 1, 2)");
    expect(toleranceNote([])).toBeNull();
  });

  it("links to the good tubes of a type that are not retired", () => {
    expect(goodStockHref("6SN7GT")).toBe("/tubes?type=6SN7GT&verdict=good&state=active");
  });
});

describe("candidate rows", () => {
  it("a direct fit: 12AT7 in a 12AU7 socket on 12.6 V, same heater, stock counted", () => {
    const row = candidateRow(rankedFor("12AT7", false, false, 12.6), 3);
    expect(row).toMatchObject({ rank: 3, designation: "12AT7", href: "/types/12AT7", pinFit: "direct", pinFitText: "direct", pinSteps: [], heaterFit: "same", heaterCurrentText: null, stockGood: 7 });
    // 12AT7 µ 60 against 12AU7 µ 17 in the fixtures: the gain change is large and beyond the ±20 % tolerance.
    expect(row.characteristicParts.find((part) => part.text.startsWith("µ"))?.beyondTolerance).toBe(true);
    expect(row.gainText).toMatch(/^common-cathode gain \+[0-9.]+ % with RL 15\.4 kΩ \(assumed 2·rp\)$/);
  });

  it("a rewire lists the soldering steps in order; an adapter lists its connections", () => {
    // 6CG7 in a 12AU7 socket wired for 6.3 V: the engine's own test gives the two steps.
    const rewire = candidateRow(rankedFor("6CG7", true, false, 6.3), 1);
    expect(rewire.pinFitText).toBe("rewire · 2 operations");
    expect(rewire.pinStepsOrdered).toBe(true);
    expect(rewire.pinSteps).toHaveLength(2);
    expect(rewire.pinSteps[0]).toContain("pin 5");
    // 0.6 A − 0.3 A: 6CG7 heater against 12AU7's halves in parallel (fixture data sheets).
    expect(rewire.heaterCurrentText).toBe("+0.3 A");

    const adapter = candidateRow(rankedFor("6SN7GT", false, true, 6.3), 1);
    expect(adapter.pinFitText).toBe("adapter");
    expect(adapter.pinStepsOrdered).toBe(false);
    expect(adapter.pinSteps.some((line) => /^plate 1: socket 6 → tube [0-9]$/.test(line))).toBe(true);
  });
});

describe("form section rows", () => {
  it("offers one row per section with the typical point as placeholders", () => {
    const rows = sectionRowsFor(tube12AU7);
    expect(rows.map((row) => row.label)).toEqual(["Section 1 · triode", "Section 2 · triode"]);
    expect(rows[0].hasScreen).toBe(false);
    expect(rows[0].placeholders.plateVolts).toBe(String(tube12AU7.sections[0].typical[0].plateVolts));
    const pentode = sectionRowsFor(tube6AU6);
    expect(pentode).toHaveLength(1);
    expect(pentode[0].hasScreen).toBe(true);
    expect(sectionRowsFor(undefined).map((row) => row.label)).toEqual(["Section 1", "Section 2"]);
  });
});
