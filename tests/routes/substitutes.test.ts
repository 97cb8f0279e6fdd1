/**
 * Substitutes page, reverse question and POST /api/substitutes, against the reference library
 * in data/tube-types. Every expected verdict follows from the library's figures; the file and
 * the source the library names are given beside each check:
 *   dual-triodes-noval.json — 12AU7 (pins, heater 12.6 V 0.15 A / 6.3 V 0.3 A, 300 V, 2.75 W:
 *     Brimar 12AU7 application report VAD/513.4, 1950; typical 250 V 10.5 mA from memory),
 *     12AT7 (pins: Electronics Notes pin table; heater and 300 V, 2.5 W from memory),
 *     12AX7 (1 W plate dissipation: 12AX7 data sheet as transcribed on guitarkitbuilder.com),
 *     6DJ8 (130 V, 1.8 W, heater 6.3 V 0.365 A: from memory),
 *     6CG7 (heater 6.3 V 0.6 A from memory; pins: Electro-Harmonix 6CG7EH data sheet, shield on pin 9 from memory);
 *   octal-triodes.json — 6SN7GT (octal 8BD pins: Electro-Harmonix 6SN7EH data sheet; 2.5 W: RCA
 *     12SX7-GT data sheet as summarised on tubeofile.com; heater 6.3 V 0.6 A: Romanian Wikipedia 6SN7 article).
 * Stock: four invented 12AT7 tubes read at the library's 12AT7 point (250 V, −2 V, 5500 µS).
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { makeTestApp } from "../helpers/app.ts";

let t: Awaited<ReturnType<typeof makeTestApp>>;

beforeAll(async () => {
  t = await makeTestApp();
  // Library 12AT7 typical point: 250 V plate, −2 V grid, 5500 µS (Tung-Sol sheet as summarised on tubeofile.com).
  const session = await t.app.inject({ method: "POST", url: "/api/sessions", payload: { date: "2026-10-01", instrument: "Bench tester A", plateVolts: 250, gridVolts: -2, heaterVolts: 12.6 } });
  expect(session.statusCode).toBe(201);
  const sessionId = session.json().id;
  for (const label of ["AT-1", "AT-2", "AT-3", "AT-4"]) {
    const saved = await t.app.inject({ method: "POST", url: `/api/sessions/${sessionId}/readings`, payload: { label, type: "12AT7", createTube: true, s1Gm: 5500, s2Gm: 5400 } });
    expect(saved.statusCode, saved.body).toBeLessThan(300);
  }
  const retired = await t.app.db.tube.findUniqueOrThrow({ where: { label: "AT-4" } });
  expect((await t.app.inject({ method: "PATCH", url: `/api/tubes/${retired.id}`, payload: { state: "retired" } })).statusCode).toBe(200);
});
afterAll(async () => {
  await t.close();
});

/** The table row of one candidate on the page. */
function rowOf(html: string, designation: string): string {
  const start = html.indexOf(`data-designation="${designation}"`);
  if (start < 0) throw new Error(`${designation} is not in the ranked table`);
  return html.slice(start, html.indexOf("</tr>", start));
}

/** The reasons listed for one excluded type in the "why not" list. */
function whyNotOf(html: string, designation: string): string {
  const start = html.indexOf(`<dt><a href="/types/${encodeURIComponent(designation)}">${designation}</a></dt>`);
  if (start < 0) throw new Error(`${designation} is not in the why-not list`);
  return html.slice(start, html.indexOf("</dd>", start));
}

const circuit250at8 = "values=circuit&s1PlateVolts=250&s1PlateMilliamps=8&s2PlateVolts=250+V&s2PlateMilliamps=8+mA";

/** The page's text with the template's entity escapes undone, so that checks read like the screen. */
function decoded(html: string): string {
  return html.replace(/&#39;/g, "'").replace(/&quot;/g, '"').replace(/&amp;/g, "&");
}

async function page(query: string, headers: Record<string, string> = {}) {
  const response = await t.app.inject({ url: `/substitutes?${query}`, headers });
  return { statusCode: response.statusCode, headers: response.headers, body: decoded(response.body) };
}

async function ask(body: Record<string, unknown>) {
  return t.app.inject({ method: "POST", url: "/api/substitutes", payload: body });
}

const at250and8 = [
  { section: 1, plateVolts: 250, plateMilliamps: 8 },
  { section: 2, plateVolts: 250, plateMilliamps: 8 },
];

describe("the substitutes page", () => {
  it("offers the question with the caution and the nav entry", async () => {
    const response = await page("");
    expect(response.statusCode).toBe(200);
    expect(response.body).toContain('name="type"');
    expect(response.body).toContain("lethal voltages");
    expect(response.body).toContain("filter capacitors hold their charge");
    expect(response.body).toContain("manufacturer's data");
    expect(response.body).toContain("defer to local codes and qualified practice");
    expect(response.body).toMatch(/href="\/substitutes" aria-current="page"/);
    expect(response.body).not.toContain('id="ranked-table"');
  });

  it("ranks a 12AU7 socket on 12.6 V at 250 V, 8 mA: direct fits on top, every exclusion with its reasons", async () => {
    const response = await page(`type=12AU7&supply=parallel&heaterVolts=12.6&${circuit250at8}`);
    expect(response.statusCode).toBe(200);
    const html = response.body;
    expect(html).toContain("could serve a 12AU7 socket on a 12.6 V parallel heater supply");
    // The socket's own type first, then the rest by score.
    const firstRow = html.indexOf("data-designation=");
    expect(html.slice(firstRow, firstRow + 30)).toContain('"12AU7"');
    // 12AT7: same 9A pins, same 12.6 V 0.15 A heater.
    const row12AT7 = rowOf(html, "12AT7");
    expect(row12AT7).toContain('class="fit fit-direct">direct<');
    expect(row12AT7).toContain("same heater");
    // Three good 12AT7 on the shelf (the retired fourth is not counted), linked to the stock filtered to them.
    expect(row12AT7).toContain('href="/tubes?type=12AT7&verdict=good&state=active"');
    expect(row12AT7).toMatch(/title="Good 12AT7 tubes in stock">3</);
    // 12AX7 has the same pins but 1 W per section: 250 V × 8 mA = 2 W is too much.
    expect(whyNotOf(html, "12AX7")).toContain("plate dissipation of section 1: the circuit applies 2 W (250 V × 8 mA), above 12AX7's 1 W");
    // 6CG7: a 6.3 V 0.6 A heater cannot sit on a 12.6 V parallel supply.
    expect(whyNotOf(html, "6CG7")).toContain("heater 6.3 V 0.6 A cannot run on a 12.6 V parallel supply");
    // 6DJ8: rated 130 V on the plate, so 250 V excludes it — together with its heater and dissipation.
    const reasons6DJ8 = whyNotOf(html, "6DJ8");
    expect(reasons6DJ8).toContain("plate voltage of section 1: the circuit applies 250 V, above 6DJ8's 130 V");
    expect(reasons6DJ8).toContain("heater 6.3 V 0.365 A cannot run on a 12.6 V parallel supply");
    expect(reasons6DJ8).toContain("plate dissipation of section 2: the circuit applies 2 W (250 V × 8 mA), above 6DJ8's 1.8 W");
    expect(html).toContain('<details class="why-not" id="why-not">');
    expect(html).toContain("Before power-on:");
  });

  it("turns blank heater volts and 'typical values' into the type's own heater and datasheet point, and resolves aliases", async () => {
    const response = await page("type=ecc82");
    expect(response.statusCode).toBe(200);
    expect(response.body).toContain("could serve a 12AU7 socket on a 12.6 V parallel heater supply");
    expect(response.body).toContain("checked at 12AU7's datasheet typical point");
    // At the typical 250 V, 10.5 mA the 12AT7 (2.5 W) is out: 2.625 W.
    expect(whyNotOf(response.body, "12AT7")).toContain("plate dissipation of section 1: the circuit applies 2.625 W (250 V × 10.5 mA), above 12AT7's 2.5 W");
  });

  it("finds 6CG7 a rewire on a 6.3 V socket when rewiring is allowed, and excludes it with the work it would need otherwise", async () => {
    const allowed = await page(`type=12AU7&heaterVolts=6.3&${circuit250at8}&allowRewire=on`);
    const row = rowOf(allowed.body, "6CG7");
    expect(row).toContain("rewire · 2 operations");
    expect(row).toContain("take the heater supply A lead off pin 5 (6CG7 has its heater there)");
    expect(row).toContain("move the heater supply B lead from pin 9 to pin 5");
    expect(row).toContain("heater current per tube: +0.3 A"); // 0.6 A − 0.3 A (12AU7 halves in parallel)
    const refused = await page(`type=12AU7&heaterVolts=6.3&${circuit250at8}`);
    expect(whyNotOf(refused.body, "6CG7")).toContain("pins differ and neither rewiring nor an adapter is allowed; a rewire would need:");
  });

  it("the htmx request gets only the workspace fragment", async () => {
    const response = await page(`type=12AU7&${circuit250at8}`, { "hx-request": "true" });
    expect(response.statusCode).toBe(200);
    expect(response.body.trimStart().startsWith('<div id="substitute-workspace">')).toBe(true);
    expect(response.headers.vary).toContain("HX-Request");
    expect(response.body).not.toContain("<html");
  });

  it("follows the type in the section rows", async () => {
    const pentode = await t.app.inject({ url: "/substitutes/section-fields?type=6AU6" });
    expect(pentode.statusCode).toBe(200);
    expect(pentode.body).toContain("Section 1 · pentode");
    expect(pentode.body).toContain('name="s1ScreenVolts"');
    const unknown = await t.app.inject({ url: "/substitutes/section-fields?type=NOSUCH" });
    expect(unknown.body).toContain('name="s2PlateVolts"');
  });

  it("answers bad input with 422 and a message beside the field, never a 500", async () => {
    const tubesBefore = await t.app.db.tube.count();
    const typesBefore = await t.app.db.tubeType.count();
    const cases: Array<[string, string, string]> = [
      ["type=", "type", "Type is required"],
      ["type=NOSUCH", "type", "NOSUCH is not in the library"],
      ["type=12AU7&heaterVolts=abc", "heaterVolts", "Heater supply volts: 'abc'"],
      ["type=12AU7&heaterVolts=12.6+mA", "heaterVolts", "Heater supply volts"],
      ["type=12AU7&heaterVolts=500", "heaterVolts", "Heater supply volts"],
      ["type=12AU7&supply=ac", "supply", "Heater supply must be one of parallel, series"],
      ["type=12AU7&values=circuit", "values", "Operating values: enter plate volts and plate mA for at least one section"],
      ["type=12AU7&values=circuit&s1PlateVolts=250", "s1PlateMilliamps", "Section 1 plate mA is required"],
      ["type=12AU7&values=circuit&s1PlateVolts=250&s1PlateMilliamps=8&s1PlateLoad=1m", "s1PlateLoad", "lowercase m means milli"],
      ["type=12AU7&derating=80", "derating", "Derating factor must be above 0 and up to 1"],
      ["type=12AU7&gmTolerance=-5", "gmTolerance", "Transconductance tolerance must be above 0"],
      ["type=12AU7&warmUpSeconds=soon&supply=series", "warmUpSeconds", "String warm-up seconds: 'soon' is not a number"],
      // 12AU7's heater is 12.6 V or 6.3 V (library): a 5 V supply cannot run the socket's own type.
      ["type=12AU7&heaterVolts=5", "heaterVolts", "Heater supply: 12AU7 itself cannot run on it"],
      // 100 mA is below the 12AU7's 150 mA (12.6 V) heater current: not a string it can sit in.
      ["type=12AU7&supply=series&stringMilliamps=100", "stringMilliamps", "Heater supply: 12AU7 itself cannot run on it"],
    ];
    for (const [query, field, text] of cases) {
      const response = await page(query);
      expect(response.statusCode, query).toBe(422);
      expect(response.body, query).toContain(`id="${field}-error"`);
      expect(response.body, query).toContain(text);
    }
    // A section the type lacks is named in the summary above the form.
    const third = await page("type=12AU7&values=circuit&s3PlateVolts=250&s3PlateMilliamps=8");
    expect(third.statusCode).toBe(422);
    expect(third.body).toContain("Section 3: 12AU7 has only 2 sections");
    const repeated = await page("type=12AU7&type=6SN7GT");
    expect(repeated.statusCode).toBe(422);
    expect(repeated.body).toContain('id="type-error"');
    expect(await t.app.db.tube.count()).toBe(tubesBefore);
    expect(await t.app.db.tubeType.count()).toBe(typesBefore);
  });
});

describe("POST /api/substitutes", () => {
  it("returns ranked candidates and excluded types with reasons, as the page does", async () => {
    const response = await ask({ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, operating: at250and8 });
    expect(response.statusCode).toBe(200);
    const body = response.json();
    expect(body.socketType).toBe("12AU7");
    expect(body.operatingFromTypical).toBe(false);
    expect(body.caution).toContain("lethal voltages");
    expect(body.candidates[0].designation).toBe("12AU7");
    const at7 = body.candidates.find((candidate: { designation: string }) => candidate.designation === "12AT7");
    expect(at7.pins.fit).toBe("direct");
    expect(at7.inStockGood).toBe(3);
    const excluded = new Map(body.excluded.map((entry: { designation: string; reasons: string[] }) => [entry.designation, entry.reasons]));
    expect(excluded.get("6DJ8")).toContain("plate voltage of section 1: the circuit applies 250 V, above 6DJ8's 130 V");
  });

  it("has 12AT7 and 12AX7 as direct fits while the circuit stays within the 12AX7's 1 W", async () => {
    // 250 V × 1 mA = 0.25 W per section, below 12AX7's 1 W and 12AT7's 2.5 W.
    const response = await ask({ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, operating: [{ section: 1, plateVolts: 250, plateMilliamps: 1 }, { section: 2, plateVolts: 250, plateMilliamps: 1 }] });
    const fits = new Map(response.json().candidates.map((candidate: { designation: string; pins: { fit: string } }) => [candidate.designation, candidate.pins.fit]));
    expect(fits.get("12AT7")).toBe("direct");
    expect(fits.get("12AX7")).toBe("direct");
  });

  it("puts the octal 6SN7GT in a noval 12AU7 socket only through an adapter", async () => {
    const question = { type: "12AU7", heaterSupply: { kind: "parallel", volts: 6.3 }, operating: at250and8 };
    const allowed = (await ask({ ...question, allowAdapter: true })).json();
    const adapter = allowed.candidates.find((candidate: { designation: string }) => candidate.designation === "6SN7GT");
    expect(adapter.pins.fit).toBe("adapter");
    // 12AU7 section 1 plate on pin 6 (9A); 6SN7GT section 1 plate on pin 5 (8BD).
    expect(adapter.pins.adapterMap).toContainEqual({ element: "a", section: 1, socketPins: ["6"], candidatePins: ["5"] });
    // 0.6 A against 0.3 A for the 12AU7 halves in parallel.
    expect(adapter.heater.heaterCurrentDeltaAmps).toBeCloseTo(0.3, 6);
    const refused = (await ask(question)).json();
    const reasons = refused.excluded.find((entry: { designation: string }) => entry.designation === "6SN7GT").reasons;
    expect(reasons).toContain("6SN7GT's base is octal, the socket's is B9A, and an adapter is not allowed");
  });

  it("derates the maxima: at 0.8, 250 V is above 80 % of the 12AT7's 300 V", async () => {
    const response = await ask({ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, operating: at250and8, deratingFactor: 0.8 });
    const reasons = response.json().excluded.find((entry: { designation: string }) => entry.designation === "12AT7").reasons;
    // 300 V × 0.8 = 240 V, hand arithmetic.
    expect(reasons).toContain("plate voltage of section 1: the circuit applies 250 V, above 12AT7's 240 V (80 % of 300 V)");
  });

  it("runs a series string: 12AU7 in a 150 mA string (its 12.6 V heater draws 0.15 A), warned when the string has a controlled warm-up", async () => {
    const plain = await ask({ type: "12AU7", heaterSupply: { kind: "series", milliamps: 150 } });
    expect(plain.statusCode).toBe(200);
    const ownPlain = plain.json().candidates.find((candidate: { designation: string }) => candidate.designation === "12AU7");
    expect(ownPlain.heater.fit).toBe("same");
    // The library's 12AU7 heater states no controlled warm-up time, so an 11 s string makes it only compatible.
    const timed = await ask({ type: "12AU7", heaterSupply: { kind: "series", milliamps: 150, warmUpSeconds: 11 } });
    const ownTimed = timed.json().candidates.find((candidate: { designation: string }) => candidate.designation === "12AU7");
    expect(ownTimed.heater.fit).toBe("compatible");
    expect(ownTimed.heater.seriesStringNote).toContain("no controlled warm-up, the string's is 11 s");
    expect(timed.json().heaterSupply).toEqual({ kind: "series", milliamps: 150, warmUpSeconds: 11 });
  });

  it("rejects bad questions with 4xx and the field named", async () => {
    const cases: Array<[unknown, number, string, string]> = [
      [{}, 422, "type", "type is required"],
      [{ type: "12AU7" }, 422, "heaterSupply", "heater supply must be"],
      [{ type: "12AU7", heaterSupply: { kind: "dc", volts: 12 } }, 422, "heaterSupply.kind", "heater supply must be"],
      [{ type: "12AU7", heaterSupply: { kind: "parallel", volts: -1 } }, 422, "heaterSupply.volts", "heater supply volts must be greater than zero"],
      [{ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, deratingFactor: 1.5 }, 422, "deratingFactor", "derating factor must be at most 1"],
      [{ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, allowRewire: "yes" }, 422, "allowRewire", "allowRewire must be true or false"],
      [{ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, operating: [at250and8[0], at250and8[0]] }, 422, "operating.1.section", "section 1 is given twice"],
      [{ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, operating: [{ section: 1, plateVolts: "250" }] }, 422, "operating.0.plateVolts", "plate volts must be a number"],
      [{ type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 }, extra: 1 }, 422, "_form", ""],
      [{ type: "NOSUCH", heaterSupply: { kind: "parallel", volts: 12.6 } }, 422, "type", "NOSUCH is not in the library"],
      [{ type: "12AU7", heaterSupply: { kind: "parallel", volts: 5 } }, 422, "heaterSupply", "12AU7 itself cannot run on it"],
    ];
    for (const [body, status, field, text] of cases) {
      const response = await ask(body as Record<string, unknown>);
      expect(response.statusCode, JSON.stringify(body)).toBe(status);
      const answer = response.json();
      expect(Object.keys(answer.fields), JSON.stringify(body)).toContain(field);
      expect(answer.fields[field].toLowerCase()).toContain(text.toLowerCase());
    }
    const notJson = await t.app.inject({ method: "POST", url: "/api/substitutes", headers: { "content-type": "text/plain" }, payload: "type=12AU7" });
    expect(notJson.statusCode).toBe(415);
  });
});

describe("which sockets a held type could fill", () => {
  it("lists the sockets 12AT7 fits and why the others not, with stock counts", async () => {
    const response = await t.app.inject({ url: "/substitutes/sockets?type=12AT7" });
    expect(response.statusCode).toBe(200);
    const html = decoded(response.body);
    expect(html).toContain("lethal voltages");
    expect(html).toContain("3 good 12AT7</a> on the shelf");
    // 12AX7 socket at its typical 250 V, 1.2 mA: same pins and heater, 0.3 W against 12AT7's 2.5 W.
    expect(rowOf(html, "12AX7")).toContain("direct");
    // 12AU7 socket at its typical 250 V, 10.5 mA: 2.625 W is above the 12AT7's 2.5 W.
    expect(whyNotOf(html, "12AU7")).toContain("plate dissipation of section 1: the circuit applies 2.625 W (250 V × 10.5 mA), above 12AT7's 2.5 W");
    // Its own socket is no question.
    expect(html).not.toContain('data-designation="12AT7"');
  });

  it("answers the API with fits and misses, and rejects a bad query", async () => {
    const response = await t.app.inject({ url: "/api/types/ecc81/sockets?allowRewire=true" });
    expect(response.statusCode).toBe(200);
    const body = response.json();
    expect(body.heldType).toBe("12AT7");
    expect(body.inStockGood).toBe(3);
    expect(body.fits.map((fit: { socketDesignation: string }) => fit.socketDesignation)).toContain("12AX7");
    expect(body.misses.find((miss: { socketDesignation: string }) => miss.socketDesignation === "12AU7")).toBeTruthy();

    const noVolts = await t.app.inject({ url: "/api/types/12AT7/sockets?supply=parallel" });
    expect(noVolts.statusCode).toBe(400);
    expect(noVolts.json().fields.heaterVolts).toContain("Heater supply volts is required");
    expect((await t.app.inject({ url: "/api/types/NOSUCH/sockets" })).statusCode).toBe(404);
    const badPage = await t.app.inject({ url: "/substitutes/sockets?type=12AT7&supply=series" });
    expect(badPage.statusCode).toBe(422);
    expect(badPage.body).toContain('id="stringMilliamps-error"');
    const unknownPage = await t.app.inject({ url: "/substitutes/sockets?type=NOSUCH" });
    expect(unknownPage.statusCode).toBe(422);
    expect(unknownPage.body).toContain("NOSUCH is not in the library");
  });
});
