/**
 * Pairing page and API on a small invented stock of 12AU7 tubes read at 250 V / −8.5 V (the
 * library's first 12AU7 point, so the readings are comparable and good): pairs meet the rule,
 * their count equals a brute-force maximum, sort-and-pair never beats it, reserving writes
 * history in one step and a second reservation is refused.
 *
 * Readings are invented for the test. They are arranged so that sorting by gm and pairing
 * neighbours fails: PA01/PA02 alternate in plate current (10.0, 11.0, 10.05, 11.05 mA at
 * 2000…2030 µS), so neighbours differ by ~9 % in Ia while every second section matches.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { makeTestApp, postForm } from "../helpers/app.ts";

type App = Awaited<ReturnType<typeof makeTestApp>>["app"];

/** label → [gm s1 µS, Ia s1 mA, gm s2 µS, Ia s2 mA] */
const GOOD_STOCK: Record<string, [number, number, number, number]> = {
  PA01: [2000, 10.0, 2010, 11.0],
  PA02: [2020, 10.05, 2030, 11.05],
  PA03: [2200, 10.5, 2150, 10.2],
  PA04: [2180, 10.4, 2240, 11.5],
  PA05: [1900, 9.0, 1960, 9.4],
  PA06: [2300, 11.0, 2310, 11.1],
};
/** 59 % of the library's 2200 µS: below the default 70 % wear threshold, so not a candidate. */
const WORN: [number, number, number, number] = [1300, 6.0, 1320, 6.1];
/** Good readings, but the tube is installed, so not a candidate either. */
const INSTALLED: [number, number, number, number] = [2005, 10.02, 2015, 11.02];

interface Section {
  label: string;
  section: number;
  gm: number;
  ia: number;
}

const relative = (a: number, b: number) => Math.abs(a - b) / ((a + b) / 2);
const sectionsOf = (stock: Record<string, [number, number, number, number]>): Section[] =>
  Object.entries(stock).flatMap(([label, [gm1, ia1, gm2, ia2]]) => [
    { label, section: 1, gm: gm1, ia: ia1 },
    { label, section: 2, gm: gm2, ia: ia2 },
  ]);

/** Brute force: the most disjoint pairs with both values within the limit (every matching tried). */
function bruteForceMaximum(sections: Section[], limit: number, allow: (a: Section, b: Section) => boolean): number {
  const best = (remaining: Section[]): number => {
    if (remaining.length < 2) return 0;
    const [first, ...rest] = remaining;
    let most = best(rest); // first left unpaired
    rest.forEach((other, index) => {
      if (!allow(first, other) || relative(first.gm, other.gm) > limit || relative(first.ia, other.ia) > limit) return;
      most = Math.max(most, 1 + best(rest.filter((_, at) => at !== index)));
    });
    return most;
  };
  return best(sections);
}

async function seedStock(app: App) {
  const session = await app.sessions.create({ date: "2026-11-02", instrument: "test bench", heaterVolts: "12.6", plateVolts: "250", gridVolts: "-8.5", notes: "" } as never);
  if (!session.ok) throw new Error("session");
  const save = async (label: string, values: [number, number, number, number]) => {
    const [gm1, ia1, gm2, ia2] = values;
    const saved = await app.sessions.saveBenchRow(session.value.id, {
      label, type: "12AU7", createTube: true, gmUnit: "uS", heaterOpen: false,
      s1Gm: String(gm1), s1Ia: String(ia1), s2Gm: String(gm2), s2Ia: String(ia2),
    } as never);
    if (!saved.ok) throw new Error(`${label}: ${JSON.stringify(saved.errors)}`);
  };
  for (const [label, values] of Object.entries(GOOD_STOCK)) await save(label, values);
  await save("PA07", WORN);
  const installed = await app.stock.create({ label: "PA08", type: "12AU7", state: "installed" } as never);
  if (!installed.ok) throw new Error("PA08");
  await save("PA08", INSTALLED);
}

interface ApiPair {
  a: { label: string; section: number; transconductanceMicroSiemens: number; plateMilliamps: number };
  b: { label: string; section: number; transconductanceMicroSiemens: number; plateMilliamps: number };
  sameEnvelope: boolean;
}

describe("pairing page and API", () => {
  let t: Awaited<ReturnType<typeof makeTestApp>>;
  let app: App;
  beforeAll(async () => {
    t = await makeTestApp();
    app = t.app;
    await seedStock(app);
  });
  afterAll(async () => t?.close());

  const pairApi = (payload: unknown) => app.inject({ method: "POST", url: "/api/pairing", payload: payload as object });

  it("has the stock it was built with: six good 12AU7 in stock, one worn, one installed", async () => {
    const list = await app.stock.list({ page: 1, pageSize: 50 } as never);
    const byLabel = Object.fromEntries(list.tubes.map((tube) => [tube.label, tube]));
    for (const label of Object.keys(GOOD_STOCK)) expect([byLabel[label].verdict, byLabel[label].state]).toEqual(["good", "stock"]);
    expect(byLabel.PA07.verdict).toBe("worn");
    expect(byLabel.PA08.state).toBe("installed");
  });

  it("pairs with a 3 % rule: admissible pairs, as many as a brute force finds, greedy no more", async () => {
    const response = await pairApi({ types: ["12AU7"], rule: { transconductancePercent: 3, plateCurrentPercent: 3 } });
    expect(response.statusCode).toBe(200);
    const answer = response.json() as { pairs: ApiPair[]; greedy: { pairs: number }; candidates: { tubes: number; sections: number; notGoodInStock: number }; leftovers: Array<{ label: string; reason: string }>; tubeIds: number[] };
    expect(answer.candidates).toEqual({ tubes: 6, sections: 12, notGoodInStock: 1 });
    const used = new Set<string>();
    for (const pair of answer.pairs) {
      const original = (side: ApiPair["a"]) => GOOD_STOCK[side.label];
      // Values are the readings entered above, and each pair meets the rule on both.
      expect(pair.a.transconductanceMicroSiemens).toBe(original(pair.a)[pair.a.section === 1 ? 0 : 2]);
      expect(relative(pair.a.transconductanceMicroSiemens, pair.b.transconductanceMicroSiemens)).toBeLessThanOrEqual(0.03 + 1e-12);
      expect(relative(pair.a.plateMilliamps, pair.b.plateMilliamps)).toBeLessThanOrEqual(0.03 + 1e-12);
      for (const side of [pair.a, pair.b]) {
        const key = `${side.label}/${side.section}`;
        expect(used.has(key)).toBe(false);
        used.add(key);
      }
    }
    const maximum = bruteForceMaximum(sectionsOf(GOOD_STOCK), 0.03, () => true);
    expect(answer.pairs.length).toBe(maximum);
    expect(answer.greedy.pairs).toBeLessThanOrEqual(answer.pairs.length);
    // The alternating plate currents defeat sort-and-pair here (see the note at the top).
    expect(answer.greedy.pairs).toBeLessThan(answer.pairs.length);
    expect(answer.leftovers.length).toBe(12 - 2 * answer.pairs.length);
    for (const leftover of answer.leftovers) expect(leftover.reason.length).toBeGreaterThan(10);
    expect(answer.tubeIds.length).toBe(new Set(answer.pairs.flatMap((pair) => [pair.a.label, pair.b.label])).size);
  });

  it("respects the envelope options, the stages wanted, and groups sets of four", async () => {
    const sameOnly = (await (await pairApi({ types: ["12AU7"], rule: { transconductancePercent: 3, plateCurrentPercent: 3 }, allowAcrossEnvelopes: false })).json()) as { pairs: ApiPair[] };
    expect(sameOnly.pairs.every((pair) => pair.sameEnvelope && pair.a.label === pair.b.label)).toBe(true);
    const sameMaximum = bruteForceMaximum(sectionsOf(GOOD_STOCK), 0.03, (a, b) => a.label === b.label);
    expect(sameOnly.pairs.length).toBe(sameMaximum);

    const acrossOnly = (await (await pairApi({ types: ["12AU7"], rule: { transconductancePercent: 3, plateCurrentPercent: 3 }, allowSameEnvelope: false })).json()) as { pairs: ApiPair[] };
    expect(acrossOnly.pairs.every((pair) => pair.a.label !== pair.b.label)).toBe(true);
    expect(acrossOnly.pairs.length).toBe(bruteForceMaximum(sectionsOf(GOOD_STOCK), 0.03, (a, b) => a.label !== b.label));

    const two = (await (await pairApi({ types: ["12AU7"], rule: { transconductancePercent: 3, plateCurrentPercent: 3 }, stages: 2 })).json()) as { pairs: ApiPair[]; leftovers: Array<{ reasonCode: string }> };
    expect(two.pairs).toHaveLength(2);
    expect(two.leftovers.some((leftover) => leftover.reasonCode === "beyond-max-pairs")).toBe(true);

    const sets = (await (await pairApi({ types: ["12AU7"], rule: { transconductancePercent: 5 }, setSize: 4 })).json()) as {
      groups: Array<{ members: Array<{ transconductanceMicroSiemens: number }> }>;
    };
    expect(sets.groups.length).toBeGreaterThan(0);
    for (const group of sets.groups) {
      expect(group.members).toHaveLength(4);
      for (const x of group.members) for (const y of group.members) expect(relative(x.transconductanceMicroSiemens, y.transconductanceMicroSiemens)).toBeLessThanOrEqual(0.05 + 1e-12);
    }
  });

  it("shows pairs, the comparison, leftovers, the histogram and the reserve button on the page", async () => {
    const page = await app.inject({ url: "/pairing?type=ECC82&gmTolerance=3&iaTolerance=3&envelopes=any" });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('id="pairs-table"');
    expect(page.body).toContain('id="exact-count"');
    expect(page.body).toContain('id="greedy-count"');
    expect(page.body).toContain('<figure class="pairing-histogram" id="gm-histogram">');
    expect(page.body).toContain('class="pair-mark"');
    expect(page.body).toContain('id="reserve-button"');
    expect(page.body).toContain('name="_csrf"');
    expect(page.body).not.toContain("PA07");
    expect(page.body).not.toContain("PA08");
    const sameOnly = await app.inject({ url: "/pairing?type=12AU7&gmTolerance=3&iaTolerance=3&envelopes=same" });
    expect(sameOnly.statusCode).toBe(200);
    const rows = [...sameOnly.body.matchAll(/data-a="(\w+)\/\d" data-b="(\w+)\/\d"/g)];
    expect(rows.length).toBeGreaterThan(0);
    for (const row of rows) expect(row[1]).toBe(row[2]);
    const sets = await app.inject({ url: "/pairing?type=12AU7&gmTolerance=5&setSize=4" });
    expect(sets.statusCode).toBe(200);
    expect(sets.body).toContain('id="groups-table"');
    expect(sets.body).toContain("matched set");
    const fragment = await app.inject({ url: "/pairing?type=12AU7&gmTolerance=3", headers: { "hx-request": "true" } });
    expect(fragment.body.startsWith('<div id="pairing-workspace">')).toBe(true);
  });

  it("reserves the chosen tubes with history, refuses a second time, and changes nothing when refused", async () => {
    const answer = (await (await pairApi({ types: ["12AU7"], rule: { transconductancePercent: 3, plateCurrentPercent: 3 } })).json()) as { tubeIds: number[] };
    const chosen = answer.tubeIds;
    expect(chosen.length).toBeGreaterThan(1);
    const response = await postForm(app, "/pairing/reserve", { tubes: chosen.join(","), back: "/pairing?type=12AU7" }, { from: "/pairing?type=12AU7&gmTolerance=3" });
    expect(response.statusCode).toBe(303);
    expect(response.headers.location).toContain(`/pairing/reserved?tubes=${chosen.join(",")}`);
    for (const id of chosen) {
      expect((await app.stock.get(id))?.state).toBe("reserved");
      const events = await app.stock.events(id);
      expect(events.some((event) => event.kind === "state" && event.fromValue === "stock" && event.toValue === "reserved")).toBe(true);
    }
    const report = await app.inject({ url: response.headers.location as string });
    expect(report.statusCode).toBe(200);
    expect(report.body).toContain(`${chosen.length} of these ${chosen.length} tubes are reserved now`);

    const again = await postForm(app, "/pairing/reserve", { tubes: chosen.join(",") }, { htmx: true });
    expect(again.statusCode).toBe(409);
    expect(again.body).toContain("Nothing was reserved");
    expect(again.body).toContain("is no longer in stock (it is reserved)");

    // One tube still free plus one already reserved: refused as a whole, the free one untouched.
    const free = (await app.stock.list({ page: 1, pageSize: 50, state: "stock" } as never)).tubes.find((tube) => tube.verdict === "good");
    expect(free).toBeDefined();
    const mixed = await app.inject({ method: "POST", url: "/api/pairing/reserve", payload: { tubeIds: [free!.id, chosen[0]] } });
    expect(mixed.statusCode).toBe(409);
    expect((mixed.json() as { fields: Record<string, string> }).fields.tubeIds).toContain("Nothing was reserved");
    expect((await app.stock.get(free!.id))?.state).toBe("stock");
    expect((await app.stock.events(free!.id)).some((event) => event.toValue === "reserved")).toBe(false);

    // The reserved tubes are no longer candidates.
    const after = (await (await pairApi({ types: ["12AU7"], rule: { transconductancePercent: 3 } })).json()) as { candidates: { tubes: number } };
    expect(after.candidates.tubes).toBe(6 - chosen.length);
  });

  it("reserves through the API and reports what it did", async () => {
    const free = (await app.stock.list({ page: 1, pageSize: 50, state: "stock" } as never)).tubes.filter((tube) => tube.verdict === "good");
    expect(free.length).toBeGreaterThan(0);
    const response = await app.inject({ method: "POST", url: "/api/pairing/reserve", payload: { tubeIds: [free[0].id], note: "for the counter board" } });
    expect(response.statusCode).toBe(200);
    expect(response.json()).toEqual({ reserved: [{ id: free[0].id, label: free[0].label, type: "12AU7", state: "reserved" }] });
    const events = await app.stock.events(free[0].id);
    expect(events[0].note).toBe("for the counter board");
  });

  describe("bad input names its field", () => {
    for (const [query, field, message] of [
      ["type=", "type", "Type is required"],
      ["type=NOPE9", "type", "Type: NOPE9 is not in the library"],
      ["type=12AU7&also=BOGUS1", "also", "Substitute type: BOGUS1 is not in the library"],
      ["type=12AU7&gmTolerance=abc", "gmTolerance", "gm tolerance: &#39;abc&#39; is not a number"],
      ["type=12AU7&gmTolerance=80", "gmTolerance", "gm tolerance must be above 0 and up to 50"],
      ["type=12AU7&iaTolerance=-1", "iaTolerance", "Plate current tolerance must be above 0"],
      ["type=12AU7&stages=0", "stages", "Stages wanted must be from 1"],
      ["type=12AU7&stages=2.5", "stages", "Stages wanted must be a whole number"],
      ["type=12AU7&setSize=3", "setSize", "Set size must be 2 or 4"],
      ["type=12AU7&envelopes=none", "envelopes", "Envelopes must be one of any, same, across"],
    ] as const) {
      it(`${field}: ${query}`, async () => {
        const page = await app.inject({ url: `/pairing?${query}` });
        expect(page.statusCode).toBe(422);
        expect(page.body).toContain(`id="${field}-error"`);
        expect(page.body).toContain(message);
      });
    }

    it("the API names fields by path", async () => {
      const fieldsOf = async (payload: unknown, status = 422) => {
        const response = await pairApi(payload);
        expect(response.statusCode).toBe(status);
        return (response.json() as { fields: Record<string, string> }).fields;
      };
      expect((await fieldsOf({ types: [], rule: { transconductancePercent: 3 } })).types).toContain("at least one type");
      expect((await fieldsOf({ types: ["12AU7"] })).rule).toBeDefined();
      expect((await fieldsOf({ types: ["12AU7"], rule: { transconductancePercent: 0 } }))["rule.transconductancePercent"]).toContain("above 0 %");
      expect((await fieldsOf({ types: ["12AU7"], rule: { transconductancePercent: 3 }, setSize: 3 })).setSize).toContain("2 or 4");
      expect((await fieldsOf({ types: ["12AU7", "NOPE9"], rule: { transconductancePercent: 3 } }))["types.1"]).toContain("NOPE9 is not in the library");
      expect(Object.keys(await fieldsOf({ types: ["12AU7"], rule: { transconductancePercent: 3 }, extra: true })).length).toBeGreaterThan(0);

      const reserve = (payload: unknown) => app.inject({ method: "POST", url: "/api/pairing/reserve", payload: payload as object });
      expect((await reserve({ tubeIds: [] })).statusCode).toBe(422);
      expect(((await reserve({ tubeIds: [1, 1] })).json() as { fields: Record<string, string> }).fields.tubeIds).toContain("each tube only once");
      expect((await reserve({ tubeIds: [999999] })).statusCode).toBe(404);
      const text = await app.inject({ method: "POST", url: "/api/pairing/reserve", headers: { "content-type": "application/x-www-form-urlencoded" }, payload: "tubeIds=1" });
      expect(text.statusCode).toBe(415);
    });

    it("the reserve form needs its CSRF token and a list of ids", async () => {
      const forged = await app.inject({ method: "POST", url: "/pairing/reserve", headers: { "content-type": "application/x-www-form-urlencoded" }, payload: "tubes=1" });
      expect(forged.statusCode).toBe(403);
      const bad = await postForm(app, "/pairing/reserve", { tubes: "one,two" });
      expect(bad.statusCode).toBe(422);
      expect(bad.body).toContain("Tubes must be a comma-separated list of tube ids");
    });
  });
});
