/**
 * Bistable page and API: a 12AU7 pair known to latch, one known not to, every field's bad input,
 * the API round trip against the engine, the transfer curves, and the resistor helper.
 *
 * Circuits are the bistable engine's own test circuits (tests/engine/bistable/solver.test.ts):
 * two 12AU7 sections, RL 27 kΩ, R1 = R2 = 220 kΩ, B+ 250 V, rail −150 V (latches); and RL 10 kΩ,
 * R1 2.2 MΩ, R2 100 kΩ, rail −20 V (coupling too weak to latch).
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { makeTestApp } from "../helpers/app.ts";
import { analyzeBistable } from "../../server/engine/bistable/index.ts";
import { tubeElementFromModel, tubeModelLibrary } from "../../server/engine/models/index.ts";
import { transferCurves } from "../../server/engine/bistable/index.ts";

type App = Awaited<ReturnType<typeof makeTestApp>>["app"];

const LATCHING = "aType=12AU7&aPlateLoad=27k&aCoupling=220k&aGridReturn=220k&bPlus=250&negativeRail=-150&cathode=none";
const WEAK = "aType=12AU7&aPlateLoad=10k&aCoupling=2.2M&aGridReturn=100k&bPlus=250&negativeRail=-20&cathode=none";
const latchingSide = { type: "12AU7", plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 220e3 };
const latchingBody = { bPlusVolts: 250, negativeRailVolts: -150, sideA: latchingSide };

/** IEC 60063 E12 series, one decade. */
const E12 = [10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82];
const isE12 = (ohms: number) => {
  const exponent = Math.floor(Math.log10(ohms)) - 1;
  const mantissa = Math.round((ohms / 10 ** exponent) * 1e6) / 1e6;
  return E12.includes(mantissa);
};

interface ApiState {
  stable: boolean;
  onSide: "A" | "B" | null;
  sideA: Record<string, number>;
  sideB: Record<string, number>;
  highLevelVolts: number | null;
  lowLevelVolts: number | null;
  cutoffMarginVolts: number | null;
}

describe("bistable page and API", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  let app: App;
  beforeAll(async () => {
    t = await makeTestApp();
    app = t.app;
  });
  afterAll(async () => t?.close());

  it("shows the empty form with the known-good starting circuit and the caution", async () => {
    const page = await app.inject({ url: "/bistable" });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('name="aPlateLoad" value="27k"');
    expect(page.body).toContain("lethal voltages");
    expect(page.body).toContain("qualified practice");
    // Every type with a Koren parameter set is offered.
    for (const designation of Object.keys(tubeModelLibrary)) expect(page.body).toContain(`<option value="${designation}"`);
    expect(page.body).not.toContain('id="bistable-results"');
  });

  it("analyses a latching 12AU7 pair: two mirrored stable states, an unstable one, curves and marks", async () => {
    const page = await app.inject({ url: `/bistable?${LATCHING}` });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('class="bistable-verdict is-bistable"');
    expect(page.body).toContain("Side A on — stable");
    expect(page.body).toContain("Side B on — stable");
    expect(page.body).toContain("Unstable — the switching point");
    expect(page.body.match(/<circle class="equilibrium stable" data-mark="state"/g)).toHaveLength(2);
    expect(page.body.match(/<path class="equilibrium unstable" data-mark="state"/g)).toHaveLength(1);
    expect(/<path class="curve curve-a" d="M[\d.]+,[\d.]+L/.test(page.body)).toBe(true);
    expect(/<path class="curve curve-b" d="M[\d.]+,[\d.]+L/.test(page.body)).toBe(true);

    const response = await app.inject({ method: "POST", url: "/api/bistable/analyze", payload: latchingBody });
    expect(response.statusCode).toBe(200);
    const answer = response.json() as { bistable: boolean; states: ApiState[]; loopGain: number; levels: Record<string, number>; caution: string };
    expect(answer.bistable).toBe(true);
    expect(answer.states).toHaveLength(3);
    const aOn = answer.states.find((state) => state.onSide === "A")!;
    const bOn = answer.states.find((state) => state.onSide === "B")!;
    const unstable = answer.states.find((state) => !state.stable)!;
    expect(aOn.stable && bOn.stable).toBe(true);
    expect(unstable.onSide).toBeNull();
    // Symmetric circuit: the two stable states mirror each other (fact of the circuit's symmetry).
    for (const field of ["plateVolts", "gridVolts", "plateMilliamps", "gridMilliamps"]) {
      expect(bOn.sideB[field]).toBeCloseTo(aOn.sideA[field], 6);
      expect(bOn.sideA[field]).toBeCloseTo(aOn.sideB[field], 6);
    }
    // … and the unstable state sits on the symmetry line.
    expect(unstable.sideA.plateVolts).toBeCloseTo(unstable.sideB.plateVolts, 6);
    // Kirchhoff's current law at the off side's grid node, from the returned numbers.
    const intoGrid = (aOn.sideA.plateVolts - aOn.sideB.gridVolts) / 220e3;
    const outOfGrid = (aOn.sideB.gridVolts + 150) / 220e3 + aOn.sideB.gridMilliamps / 1000;
    expect(Math.abs(intoGrid - outOfGrid)).toBeLessThan(1e-9);
    // Levels from the bistable engine's documented example (server/engine/bistable/index.ts): ≈ 222.8 V / 45.8 V, loop gain ≈ 37.
    expect(answer.levels.highLevelVolts).toBeCloseTo(222.8, 0);
    expect(answer.levels.lowLevelVolts).toBeCloseTo(45.8, 0);
    expect(answer.loopGain).toBeGreaterThan(30);
    expect(answer.loopGain).toBeLessThan(45);
    expect(answer.caution).toContain("qualified practice");
  });

  it("says plainly when a circuit is not bistable, with the failing condition", async () => {
    const page = await app.inject({ url: `/bistable?${WEAK}` });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('class="bistable-verdict not-bistable"');
    expect(page.body).toContain("<strong>Not bistable</strong>");
    expect(page.body).toContain("only one equilibrium");
    const response = await app.inject({
      method: "POST",
      url: "/api/bistable/analyze",
      payload: { bPlusVolts: 250, negativeRailVolts: -20, sideA: { type: "12AU7", plateLoadOhms: 10e3, couplingOhms: 2.2e6, gridReturnOhms: 100e3 } },
    });
    expect(response.statusCode).toBe(200);
    const answer = response.json() as { bistable: boolean; reasons: string[]; loopGain: number; states: unknown[] };
    expect(answer.bistable).toBe(false);
    expect(answer.states).toHaveLength(1);
    expect(answer.loopGain).toBeLessThan(1);
    expect(answer.reasons.some((reason) => reason.includes("loop gain"))).toBe(true);
  });

  it("round-trips the API against the engine itself, side B and cathode included", async () => {
    const sideB = { type: "12AU7", plateLoadOhms: 33e3, couplingOhms: 270e3, gridReturnOhms: 220e3 };
    const body = { ...latchingBody, sideA: { ...latchingSide, gridReturnOhms: 180e3 }, sideB, cathode: { kind: "common", ohms: 1500 } };
    const response = await app.inject({ method: "POST", url: "/api/bistable/analyze", payload: body });
    expect(response.statusCode).toBe(200);
    const answer = response.json() as { states: ApiState[]; loopGain: number };
    const tube = tubeElementFromModel(tubeModelLibrary["12AU7"]);
    const direct = analyzeBistable({
      bPlusVolts: 250,
      negativeRailVolts: -150,
      sideA: { tube, plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 180e3 },
      sideB: { tube, plateLoadOhms: 33e3, couplingOhms: 270e3, gridReturnOhms: 220e3 },
      cathode: { kind: "common", ohms: 1500 },
    });
    expect(answer.states).toHaveLength(direct.states.length);
    answer.states.forEach((state, index) => {
      expect(state.sideA.plateVolts).toBeCloseTo(direct.states[index].sideA.plateVolts, 9);
      expect(state.sideB.cathodeVolts).toBeCloseTo(direct.states[index].sideB.cathodeVolts, 9);
    });
    expect(answer.loopGain).toBeCloseTo(direct.loopGain as number, 9);
  });

  it("scales a side to a measured gm at the library's typical point", async () => {
    const response = await app.inject({
      method: "POST",
      url: "/api/bistable/analyze",
      payload: { ...latchingBody, sideA: { ...latchingSide, measuredTransconductanceMicroSiemens: 1736 } },
    });
    expect(response.statusCode).toBe(200);
    const answer = response.json() as { sides: { A: { currentScale: number; scaledAt: string }; B: { currentScale: number } }; notes: string[] };
    // The models engine's documented example: 1736 µS at 250 V / −8.5 V scales the 12AU7 set to ≈ 0.70.
    expect(answer.sides.A.currentScale).toBeCloseTo(0.7, 2);
    expect(answer.sides.A.scaledAt).toContain("250 V plate");
    expect(answer.sides.B.currentScale).toBe(1);
    expect(answer.notes.join(" ")).toContain("1736 µS");
  });

  it("runs the worst case and a seeded yield when asked, the same twice", async () => {
    const payload = { ...latchingBody, yield: { trials: 60, seed: 11, resistorTolerancePercent: 5, supplyDriftPercent: 5, tubeSpreadPercent: 20 } };
    const first = (await app.inject({ method: "POST", url: "/api/bistable/analyze", payload })).json() as {
      yield: { corners: { evaluated: number; method: string }; monteCarlo: { trials: number; passed: number; seed: number } };
    };
    const second = (await app.inject({ method: "POST", url: "/api/bistable/analyze", payload })).json() as typeof first;
    // 10 factors (six resistors, two tubes, B+, the rail): a full factorial is 2^10 corners.
    expect(first.yield.corners.method).toBe("full-factorial");
    expect(first.yield.corners.evaluated).toBe(1024);
    expect(first.yield.monteCarlo.trials).toBe(60);
    expect(first.yield.monteCarlo.seed).toBe(11);
    expect(second.yield.monteCarlo.passed).toBe(first.yield.monteCarlo.passed);

    const page = await app.inject({ url: `/bistable?${LATCHING}&yield=on&trials=40&seed=3` });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('id="yield-summary"');
    expect(page.body).toContain("of 40 random builds pass");
    expect(page.body).toContain("of 1024 tolerance corners pass");
  });

  it("draws transfer curves that pass through every equilibrium, and through a point solved by hand", () => {
    const tube = tubeElementFromModel(tubeModelLibrary["12AU7"]);
    const side = { tube, plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 220e3 };
    const circuit = { bPlusVolts: 250, negativeRailVolts: -150, sideA: side, sideB: side };
    const curves = transferCurves(circuit, -70, 20);
    expect(curves.unsolvedPoints).toBe(0);
    const distance = (polylines: Array<Array<{ gridAVolts: number; gridBVolts: number }>>, x: number, y: number) => {
      let best = Number.POSITIVE_INFINITY;
      for (const line of polylines) {
        for (let index = 1; index < line.length; index++) {
          const p = line[index - 1];
          const q = line[index];
          const dx = q.gridAVolts - p.gridAVolts;
          const dy = q.gridBVolts - p.gridBVolts;
          const u = Math.max(0, Math.min(1, ((x - p.gridAVolts) * dx + (y - p.gridBVolts) * dy) / (dx * dx + dy * dy || 1)));
          best = Math.min(best, Math.hypot(p.gridAVolts + u * dx - x, p.gridBVolts + u * dy - y));
        }
      }
      return best;
    };
    // Every equilibrium satisfies all node equations, so it lies on both curves (by construction).
    for (const state of analyzeBistable(circuit).states) {
      expect(distance(curves.curveA.polylines, state.sideA.gridVolts, state.sideB.gridVolts)).toBeLessThan(0.05);
      expect(distance(curves.curveB.polylines, state.sideA.gridVolts, state.sideB.gridVolts)).toBeLessThan(0.05);
    }
    // Side A held at −40 V is cut off (Koren 1996 triode equation: negligible current there), so
    // B+ → 27 kΩ → 220 kΩ → grid B → 220 kΩ → −150 V, with B's grid drawing 0.35 mA/V^1.5 · Vg^1.5
    // (the 12AU7 parameter set's stated grid law). Solved here by bisection.
    const residual = (grid: number) => (250 - grid) / 247e3 - (grid + 150) / 220e3 - 0.35e-3 * Math.max(grid, 0) ** 1.5;
    let low = -150;
    let high = 250;
    for (let step = 0; step < 200; step++) {
      const middle = (low + high) / 2;
      if (residual(middle) > 0) low = middle;
      else high = middle;
    }
    expect(distance(curves.curveA.polylines, -40, (low + high) / 2)).toBeLessThan(0.01);
  });

  it("suggests E12 resistor values for target levels, on the page and through the API", async () => {
    const page = await app.inject({ url: `/bistable/resistors?${LATCHING}&targetHigh=220&targetLow=50&series=E12&suggestions=3`, headers: { "hx-request": "true" } });
    expect(page.statusCode).toBe(200);
    expect(page.body.startsWith('<div id="resistor-results"')).toBe(true);
    expect(page.body).toContain('id="suggestions-table"');
    expect(page.body).toContain("IEC 60063");
    const full = await app.inject({ url: `/bistable/resistors?${LATCHING}&targetHigh=220&targetLow=50` });
    expect(full.statusCode).toBe(200);
    expect(full.body).toContain("<h1>Bistable stage</h1>");

    const response = await app.inject({
      method: "POST",
      url: "/api/bistable/resistors",
      payload: { bPlusVolts: 250, negativeRailVolts: -150, sideA: { type: "12AU7" }, targets: { highLevelVolts: 220, lowLevelVolts: 50 }, series: "E12", topN: 4 },
    });
    expect(response.statusCode).toBe(200);
    const answer = response.json() as { ok: boolean; suggestions: Array<{ plateLoadOhms: number; couplingOhms: number; gridReturnOhms: number; highLevelVolts: number; lowLevelVolts: number }> };
    expect(answer.ok).toBe(true);
    expect(answer.suggestions.length).toBeGreaterThan(0);
    expect(answer.suggestions.length).toBeLessThanOrEqual(4);
    for (const suggestion of answer.suggestions) {
      for (const ohms of [suggestion.plateLoadOhms, suggestion.couplingOhms, suggestion.gridReturnOhms]) expect(isE12(ohms)).toBe(true);
      // Default level tolerance ±10 V (common practice, no source).
      expect(Math.abs(suggestion.highLevelVolts - 220)).toBeLessThanOrEqual(10);
      expect(Math.abs(suggestion.lowLevelVolts - 50)).toBeLessThanOrEqual(10);
    }
  });

  it("shows an engine refusal rather than throwing: no values reach impossible targets", async () => {
    const response = await app.inject({
      method: "POST",
      url: "/api/bistable/resistors",
      payload: { bPlusVolts: 250, negativeRailVolts: -150, sideA: { type: "12AU7" }, targets: { highLevelVolts: 249, lowLevelVolts: 1, toleranceVolts: 0.5 } },
    });
    expect(response.statusCode).toBe(200);
    const answer = response.json() as { ok: boolean; reason: string };
    expect(answer.ok).toBe(false);
    expect(answer.reason.length).toBeGreaterThan(0);
  });

  describe("bad input names its field", () => {
    const cases: Array<[string, string, string]> = [
      ["aType", "aType=12XY9", "Side A tube type"],
      ["bType", "bType=6XX9", "Side B tube type"],
      ["aGm", "aGm=lots", "Side A measured gm"],
      ["bGm", "bGm=-5", "Side B measured gm"],
      ["aPlateLoad", "aPlateLoad=27q", "Side A plate load"],
      ["bPlateLoad", "bPlateLoad=0", "Side B plate load"],
      ["aCoupling", "aCoupling=-220k", "Side A coupling R1"],
      ["bCoupling", "bCoupling=220 V", "Side B coupling R1"],
      ["aGridReturn", "aGridReturn=1,5M", "Side A grid return R2"],
      ["bGridReturn", "bGridReturn=x", "Side B grid return R2"],
      ["aScreenVolts", "aScreenVolts=hundred", "Side A screen supply"],
      ["bScreenVolts", "bScreenVolts=-5", "Side B screen supply"],
      ["aScreenOhms", "aScreenOhms=47 mA", "Side A screen resistor"],
      ["bScreenOhms", "bScreenOhms=0", "Side B screen resistor"],
      ["bPlus", "bPlus=-250", "B+"],
      ["negativeRail", "negativeRail=300", "Negative rail must be below B+"],
      ["cathode", "cathode=both", "Cathode must be one of"],
      ["cathodeOhms", "cathode=common", "Common cathode resistor is required"],
      ["cathodeAOhms", "cathode=separate&cathodeBOhms=1k", "Side A cathode resistor is required"],
      ["cathodeBOhms", "cathode=separate&cathodeAOhms=1k&cathodeBOhms=1x", "Side B cathode resistor"],
      ["resistorTolerance", "yield=on&resistorTolerance=80", "Resistor tolerance must be"],
      ["supplyDrift", "yield=on&supplyDrift=x", "Supply drift"],
      ["tubeSpread", "yield=on&tubeSpread=95", "Tube spread must be"],
      ["wornScale", "yield=on&wornScale=2", "Worn-tube scale must be"],
      ["trials", "yield=on&trials=1.5", "Trials must be a whole number"],
      ["seed", "yield=on&seed=-1", "Seed must be"],
      ["minSwing", "yield=on&minSwing=big", "Minimum swing"],
      ["minMargin", "yield=on&minMargin=small", "Minimum cut-off margin"],
    ];
    for (const [field, change, message] of cases) {
      it(`${field}: ${change}`, async () => {
        const params = new URLSearchParams(LATCHING);
        for (const [key, value] of new URLSearchParams(change)) params.set(key, value);
        const page = await app.inject({ url: `/bistable?${params.toString()}` });
        expect(page.statusCode).toBe(422);
        expect(page.body).toContain(`id="${field}-error"`);
        expect(page.body).toContain(message.replace("'", "&#39;"));
      });
    }

    it("a missing required field is named, and a pentode without a screen supply is refused beside its field", async () => {
      const missing = await app.inject({ url: "/bistable?aType=12AU7&bPlus=250" });
      expect(missing.statusCode).toBe(422);
      for (const text of ["Side A plate load is required", "Side A coupling R1 is required", "Side A grid return R2 is required", "Negative rail is required"]) {
        expect(missing.body).toContain(text);
      }
      const pentode = await app.inject({ url: `/bistable?${LATCHING.replace("aType=12AU7", "aType=EL34")}` });
      expect(pentode.statusCode).toBe(422);
      expect(pentode.body).toContain('id="aScreenVolts-error"');
      expect(pentode.body).toContain("EL34 is a pentode");
    });

    it("the resistor helper's own fields", async () => {
      for (const [change, message] of [
        ["targetHigh=40&targetLow=50", "Target high level must be above the target low level"],
        ["targetHigh=220", "Target low level is required"],
        ["targetHigh=220&targetLow=50&series=E96", "Series must be one of E12, E24"],
        ["targetHigh=220&targetLow=50&levelTolerance=0", "Level tolerance must be above 0"],
        ["targetHigh=220&targetLow=50&suggestions=0", "Suggestions must be from 1"],
      ]) {
        const page = await app.inject({ url: `/bistable/resistors?${LATCHING}&${change}`, headers: { "hx-request": "true" } });
        expect(page.statusCode).toBe(422);
        expect(page.body).toContain(message);
      }
    });

    it("the API names fields by path and refuses what it does not know", async () => {
      const post = (payload: unknown) => app.inject({ method: "POST", url: "/api/bistable/analyze", payload: payload as object });
      const bad = await post({ bPlusVolts: "250", negativeRailVolts: -150, sideA: { ...latchingSide, plateLoadOhms: -1 } });
      expect(bad.statusCode).toBe(422);
      const fields = (bad.json() as { fields: Record<string, string> }).fields;
      expect(fields.bPlusVolts).toContain("B+ volts must be a number");
      expect(fields["sideA.plateLoadOhms"]).toContain("plate load ohms must be greater than zero");
      expect((await post({ ...latchingBody, wobble: 1 })).statusCode).toBe(422);
      const rail = await post({ ...latchingBody, negativeRailVolts: 300 });
      expect((rail.json() as { fields: Record<string, string> }).fields.negativeRailVolts).toContain("below B+");
      const unknown = await post({ ...latchingBody, sideA: { ...latchingSide, type: "6ZZ9" } });
      expect(unknown.statusCode).toBe(422);
      expect((unknown.json() as { fields: Record<string, string> }).fields["sideA.type"]).toContain("no Koren parameter set");
      const cathode = await post({ ...latchingBody, cathode: { kind: "common" } });
      expect(cathode.statusCode).toBe(422);
      const yieldBad = await post({ ...latchingBody, yield: { trials: 999999 } });
      expect((yieldBad.json() as { fields: Record<string, string> }).fields["yield.trials"]).toContain("at most 5000");
      const text = await app.inject({ method: "POST", url: "/api/bistable/analyze", headers: { "content-type": "text/plain" }, payload: "B+ 250" });
      expect(text.statusCode).toBe(415);
    });
  });
});
