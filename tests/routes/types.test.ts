/**
 * Type list, type page, user-added types (form and API) and the type API, against the reference
 * library in data/tube-types. Library facts used, with the file and the source it names:
 *   dual-triodes-noval.json — 12AU7: aliases ECC82 and 12AU7A (from memory); B9A basing 9A, pins and
 *     heater 12.6 V 0.15 A / 6.3 V 0.3 A (Brimar 12AU7 application report VAD/513.4, 1950); variants
 *     5814A, 6189, 6680, E82CC, ECC802S (each entry's variantOf); 12AT7 alias ECC81 (from memory).
 *   pentodes.json — 6AU6 is a pentode on a B7G base; 6J7 (octal-based list) carries its grid on the top cap.
 *   octal-triodes.json — 6SN7GT on an octal base.
 * The user-added "9QX7" is invented for these tests; its figures are chosen to pass or break the
 * library rules on purpose, no datasheet is claimed for them.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { makeTestApp, postForm } from "../helpers/app.ts";
import { loadTubeLibrary } from "../../server/library/load-library.ts";
import { referenceLibraryDir } from "../../server/plugins/app/services.ts";
import type { TubeTypeSpec } from "../../server/engine/tube-types/index.ts";

let t: Awaited<ReturnType<typeof makeTestApp>>;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(async () => {
  await t.close();
});

function decoded(html: string): string {
  return html.replace(/&#39;/g, "'").replace(/&quot;/g, '"').replace(/&amp;/g, "&");
}

const NOVAL_PINS = "1=a:2\n2=g1:2\n3=k:2\n4=h\n5=h\n6=a:1\n7=g1:1\n8=k:1\n9=hct";

/** An invented noval dual triode with the 12AU7's pin-out and heater. */
const newTypeForm: Record<string, string> = {
  designation: "9qx7",
  aliases: "QX7A",
  class: "dual-triode",
  base: "B9A",
  basingCode: "9A",
  pins: NOVAL_PINS,
  heaterVolts: "12.6",
  heaterAmps: "0.15",
  heaterHalfVolts: "6.3",
  heaterHalfAmps: "0.3",
  maxPlateVolts: "300 V",
  maxPlateWatts: "3",
  maxHeaterCathodeVolts: "200",
  s1Kind: "triode",
  s1PlateVolts: "250",
  s1GridVolts: "-8.5",
  s1PlateMilliamps: "10.5",
  s1Gm: "2200",
  s1Mu: "17",
  s1Rp: "7.7k",
  s2Kind: "triode",
  s2PlateVolts: "250",
  s2GridVolts: "-8.5",
  s2PlateMilliamps: "10.5",
  s2Gm: "2.2 mA/V",
  s2Mu: "17",
  s2Rp: "7700",
  notes: "Invented for a test.",
  source: "entered by owner from an invented test sheet",
};

/** The same kind of type as JSON for POST /api/types. */
function apiType(designation: string, overrides: Partial<TubeTypeSpec> = {}): TubeTypeSpec {
  return {
    designation,
    aliases: [],
    class: "dual-triode",
    base: "B9A",
    pins: [
      { pin: "1", element: "a", section: 2 },
      { pin: "2", element: "g1", section: 2 },
      { pin: "3", element: "k", section: 2 },
      { pin: "4", element: "h" },
      { pin: "5", element: "h" },
      { pin: "6", element: "a", section: 1 },
      { pin: "7", element: "g1", section: 1 },
      { pin: "8", element: "k", section: 1 },
      { pin: "9", element: "hct" },
    ],
    sections: [
      { index: 1, kind: "triode", typical: [] },
      { index: 2, kind: "triode", typical: [] },
    ],
    heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } },
    maxRatings: { plateVolts: 300 },
    sources: { pins: "entered by a test", heater: "entered by a test", maxRatings: "entered by a test" },
    ...overrides,
  };
}

describe("the type list", () => {
  it("lists every type and filters by class, base and search text", async () => {
    const all = await t.app.inject({ url: "/types" });
    expect(all.statusCode).toBe(200);
    expect(all.body).toContain('href="/types/12AU7"');
    expect(all.body).toContain('href="/types/new"');
    const pentodes = await t.app.inject({ url: "/types?class=pentode" });
    expect(pentodes.body).toContain('href="/types/6AU6"');
    expect(pentodes.body).not.toContain('href="/types/12AU7"');
    const octal = await t.app.inject({ url: "/types?base=octal" });
    expect(octal.body).toContain('href="/types/6SN7GT"');
    expect(octal.body).not.toContain('href="/types/12AU7"');
    const byAlias = await t.app.inject({ url: "/types?q=ecc8" });
    expect(byAlias.body).toContain('href="/types/12AU7"');
    expect(byAlias.body).not.toContain('href="/types/6SN7GT"');
    const fragment = await t.app.inject({ url: "/types?base=B7G", headers: { "hx-request": "true" } });
    expect(fragment.body.trimStart().startsWith('<div id="type-table">')).toBe(true);
  });

  it("refuses a bad filter with 400 and says which", async () => {
    const response = await t.app.inject({ url: "/types?class=triodes&base=UX4" });
    expect(response.statusCode).toBe(400);
    expect(response.body).toContain("Class must be one of");
    expect(response.body).toContain("Base must be one of");
  });
});

describe("a type's page", () => {
  it("shows the pin diagram, heater, ratings, typical points, sources, variants and stock links", async () => {
    const response = await t.app.inject({ url: "/types/12AU7" });
    expect(response.statusCode).toBe(200);
    const html = decoded(response.body);
    expect(html).toContain('<svg id="pin-diagram"');
    expect(html.match(/<g class="pin pin-/g)).toHaveLength(9);
    expect(html).toContain("pin 9: heater centre tap");
    expect(html).toContain("B9A base seen from below");
    expect(html).toContain("12.6 V, 0.15 A — or 6.3 V, 0.3 A with the two halves in parallel (centre tap)");
    expect(html).toContain("Brimar 12AU7 application report VAD/513.4, Standard Telephones and Cables, 1950");
    for (const variant of ["5814A", "6189", "6680", "E82CC", "ECC802S"]) expect(html).toContain(`href="/types/${variant}"`);
    expect(html).toContain('href="/substitutes?type=12AU7"');
    expect(html).toContain("Find substitutes for this type");
    expect(html).toContain('href="/tubes?type=12AU7&verdict=good&state=active"');
    expect(html).toContain('href="/tubes?type=12AU7&verdict=failed&state=active"');
  });

  it("redirects an alias to the designation and answers 404 for an unknown type", async () => {
    const alias = await t.app.inject({ url: "/types/ecc82" });
    expect(alias.statusCode).toBe(301);
    expect(alias.headers.location).toBe("/types/12AU7");
    const lower = await t.app.inject({ url: "/types/12au7" });
    expect(lower.headers.location).toBe("/types/12AU7");
    expect((await t.app.inject({ url: "/types/NOSUCH" })).statusCode).toBe(404);
  });

  it("sends a mixed envelope's ratings to its sections", async () => {
    // pentodes.json — 6BM8: per-section ratings only (triode 1 W, pentode 7 W), as the entry's sources say.
    const page = decoded((await t.app.inject({ url: "/types/6BM8" })).body);
    expect(page).toContain("Rated per section: see Sections below.");
    expect(page).toMatch(/<td>triode<\/td><td><\/td><td>Plate dissipation 1 W/);
  });

  it("draws a top cap and an octal spigot", async () => {
    const html = (await t.app.inject({ url: "/types/6J7" })).body;
    expect(html).toContain("top cap: control grid");
    expect(html).toContain('class="spigot-key"');
  });
});

describe("user-added types through the form", () => {
  it("saves a valid type, marks it as the owner's, and ranks it as a substitute", async () => {
    const response = await postForm(t.app, "/types/new", newTypeForm, { from: "/types/new" });
    expect(response.statusCode, response.body.slice(0, 400)).toBe(303);
    expect(response.headers.location).toBe("/types/9QX7");
    const page = await t.app.inject({ url: "/types/9QX7" });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain("added by you");
    expect(decoded(page.body)).toContain("entered by owner from an invented test sheet");
    expect((await t.app.inject({ url: "/types/qx7a" })).headers.location).toBe("/types/9QX7");
    const list = await t.app.inject({ url: "/types?q=9QX" });
    expect(list.body).toContain("yours");

    const api = (await t.app.inject({ url: "/api/types/9QX7" })).json();
    expect(api).toMatchObject({ designation: "9QX7", aliases: ["QX7A"], userAdded: true, heater: { volts: 12.6, amps: 0.15 } });
    expect(api.sections[1].typical[0].transconductanceMicroSiemens).toBe(2200);
    expect(api.sections[0].typical[0].plateResistanceOhms).toBe(7700);

    // Same pins and heater as the 12AU7, so it goes straight into a 12AU7 socket.
    const ranking = await t.app.inject({ method: "POST", url: "/api/substitutes", payload: { type: "12AU7", heaterSupply: { kind: "parallel", volts: 12.6 } } });
    const mine = ranking.json().candidates.find((candidate: { designation: string }) => candidate.designation === "9QX7");
    expect(mine.pins.fit).toBe("direct");
  });

  it("keeps a user-added type when the reference library is synced again", async () => {
    const before = t.app.catalog.resolve("9QX7")!;
    const reference = loadTubeLibrary(referenceLibraryDir).types;
    t.app.catalog.syncReferenceTypes([...reference, { ...before.spec, userAdded: false, notes: "a reference entry of the same name" }]);
    const after = t.app.catalog.resolve("9QX7")!;
    expect(after.userAdded).toBe(true);
    expect(after.spec.notes).toBe("Invented for a test.");
  });

  it("puts every problem beside its field and saves nothing", async () => {
    const before = await t.app.db.tubeType.count();
    const other = { ...newTypeForm, designation: "9QX8", aliases: "" };
    const cases: Array<[Record<string, string>, number, string, string]> = [
      [{ ...newTypeForm, designation: "12AU7" }, 409, "designation", "12AU7 is already in the library"],
      [{ ...newTypeForm, designation: "ecc82" }, 409, "designation", "ECC82 is already a name of 12AU7"],
      [{ ...other, aliases: "ECC81" }, 409, "aliases", "alias ECC81 is already a name of 12AT7"],
      [{ ...other, pins: NOVAL_PINS.replace("2=g1:2", "1=g1:2") }, 422, "pins", "Pins, line 2: pin 1 is listed twice"],
      [{ ...other, pins: NOVAL_PINS.replace("3=k:2", "3=nc") }, 422, "pins", "section 2 (triode) lacks k"],
      [{ ...other, pins: NOVAL_PINS.replace("9=hct", "9=grid") }, 422, "pins", 'line 9 ("9=grid"): "grid" is not an element'],
      [{ ...other, pins: NOVAL_PINS.replace("\n9=hct", "") }, 422, "pins", "pin 9 of the B9A base is missing"],
      [{ ...newTypeForm, designation: "9 QX8" }, 422, "designation", "designation must be upper-case letters and digits"],
      [{ ...other, class: "" }, 422, "class", "Class: choose one of"],
      [{ ...other, heaterAmps: "0,15" }, 422, "heaterAmps", "Heater amps"],
      [{ ...other, heaterHalfAmps: "" }, 422, "heaterHalfAmps", "give both the half volts and the half amps"],
      [{ ...other, heaterHalfVolts: "5", heaterHalfAmps: "0.3" }, 422, "heaterHalfVolts", "heater half volts 5 is not half of 12.6"],
      // 300 V × 10.5 mA = 3.15 W, above the 3 W entered (hand arithmetic).
      [{ ...other, s1PlateVolts: "300" }, 422, "s1PlateVolts", "dissipates 3.15 W at the plate, above the maximum 3 W"],
      [{ ...other, s2Kind: "pentode" }, 422, "class", "class dual-triode needs two triodes"],
      [{ ...other, variantOf: "12XX9" }, 422, "variantOf", "variantOf names 12XX9, which is not a designation in the library"],
      [{ ...other, source: "a book" }, 422, "source", "source must name a document with its year"],
    ];
    for (const [fields, status, field, text] of cases) {
      const response = await postForm(t.app, "/types/new", fields, { from: "/types/new", htmx: true });
      expect(response.statusCode, `${field}: ${text}`).toBe(status);
      const html = decoded(response.body);
      expect(html, text).toContain(`id="${field}-error"`);
      const message = new RegExp(`id="${field}-error" role="alert">([^<]*)<`).exec(html)?.[1] ?? "";
      expect(message, field).toContain(text);
      expect(html).toContain("Nothing was saved");
    }
    expect(await t.app.db.tubeType.count()).toBe(before);
    const noToken = await t.app.inject({ method: "POST", url: "/types/new", headers: { "content-type": "application/x-www-form-urlencoded" }, payload: new URLSearchParams({ ...newTypeForm, designation: "9QX9" }).toString() });
    expect(noToken.statusCode).toBe(403);
    expect(t.app.catalog.resolve("9QX9")).toBeUndefined();
  });

  it("adds a cold-cathode regulator with its glow discharge, and puts a missing one beside its field", async () => {
    // Invented regulator "9QR1"; its figures only have to satisfy the library rules.
    const regulator: Record<string, string> = {
      designation: "9QR1",
      class: "voltage-regulator",
      base: "B7G",
      pins: "1=a:1\n2=k:1\n3=nc\n4=nc\n5=nc\n6=nc\n7=nc",
      heaterVolts: "0",
      heaterAmps: "0",
      maxOutputMilliamps: "40",
      s1Kind: "regulator",
      glowOperatingVolts: "120",
      glowStrikingVolts: "150 V",
      glowMinMilliamps: "5",
      glowMaxMilliamps: "40 mA",
      source: "entered by owner for a test",
    };
    const cases: Array<[Record<string, string>, string, string]> = [
      [{ ...regulator, glowStrikingVolts: "" }, "glowStrikingVolts", "Glow striking volts is required with the other glow values"],
      [{ ...regulator, glowStrikingVolts: "", glowOperatingVolts: "", glowMinMilliamps: "", glowMaxMilliamps: "" }, "glowOperatingVolts", "needs glow data: operating and striking volts, current range"],
      [{ ...regulator, glowStrikingVolts: "100" }, "glowStrikingVolts", "glow striking volts must be at least the operating volts"],
      [{ ...regulator, maxOutputMilliamps: "30" }, "glowOperatingVolts", "regulates up to 40 mA, above the maximum output 30 mA"],
      [{ ...regulator, s1Kind: "triode", pins: "1=a:1\n2=k:1\n3=h\n4=h\n5=g1:1\n6=nc\n7=nc", heaterVolts: "6.3", heaterAmps: "0.3" }, "glowOperatingVolts", "Glow values belong to a regulator"],
      [{ ...regulator, s1Label: "Main Gap!" }, "s1Label", "Section 1: section label must be lower-case letters"],
    ];
    for (const [fields, field, text] of cases) {
      const response = await postForm(t.app, "/types/new", fields, { from: "/types/new", htmx: true });
      expect(response.statusCode, `${field}: ${text}`).toBe(422);
      const message = new RegExp(`id="${field}-error" role="alert">([^<]*)<`).exec(decoded(response.body))?.[1] ?? "";
      expect(message, field).toContain(text);
    }
    expect(t.app.catalog.resolve("9QR1")).toBeUndefined();

    const saved = await postForm(t.app, "/types/new", regulator, { from: "/types/new" });
    expect(saved.statusCode, saved.body.slice(0, 400)).toBe(303);
    const api = (await t.app.inject({ url: "/api/types/9QR1" })).json();
    expect(api.heater).toEqual({ volts: 0, amps: 0, coldCathode: true });
    expect(api.sections[0].glow).toEqual({ operatingVolts: 120, strikingVolts: 150, minMilliamps: 5, maxMilliamps: 40 });
    const page = decoded((await t.app.inject({ url: "/types/9QR1" })).body);
    expect(page).toContain("none (cold cathode)");
    expect(page).toContain("holds 120 V over 5–40 mA; strikes at 150 V");
  });

  it("takes a pentode's cutoff and refuses it on a triode, beside the field", async () => {
    // Invented pentode "9QP1" on the 7BK pin-out; its figures only have to satisfy the library rules.
    const pentode: Record<string, string> = {
      designation: "9QP1",
      class: "pentode",
      base: "B7G",
      pins: "1=g1:1\n2=g3:1\n3=h\n4=h\n5=a:1\n6=g2:1\n7=k:1",
      heaterVolts: "6.3",
      heaterAmps: "0.3",
      s1Kind: "pentode",
      s1Cutoff: "remote",
      source: "entered by owner for a test",
    };
    const wrong = await postForm(t.app, "/types/new", { ...newTypeForm, designation: "9QX6", aliases: "", s1Cutoff: "sharp" }, { from: "/types/new", htmx: true });
    expect(wrong.statusCode).toBe(422);
    expect(new RegExp('id="s1Cutoff-error" role="alert">([^<]*)<').exec(decoded(wrong.body))?.[1]).toContain("cutoff describes pentode and heptode sections, not a triode");
    const bad = await postForm(t.app, "/types/new", { ...pentode, s1Cutoff: "soft" }, { from: "/types/new", htmx: true });
    expect(new RegExp('id="s1Cutoff-error" role="alert">([^<]*)<').exec(decoded(bad.body))?.[1]).toContain("Section 1 cutoff must be sharp or remote");
    const saved = await postForm(t.app, "/types/new", pentode, { from: "/types/new" });
    expect(saved.statusCode, saved.body.slice(0, 300)).toBe(303);
    expect((await t.app.inject({ url: "/api/types/9QP1" })).json().sections[0].cutoff).toBe("remote");
  });

  it("shows the empty form with the pin-line hint", async () => {
    const response = await t.app.inject({ url: "/types/new" });
    expect(response.statusCode).toBe(200);
    expect(response.body).toContain('name="pins"');
    expect(response.body).toContain("pin=element:section");
    expect(response.body).toContain('name="s4Kind"');
  });
});

describe("the type API", () => {
  it("lists types with their heater and origin, filtered", async () => {
    const all = await t.app.inject({ url: "/api/types" });
    expect(all.statusCode).toBe(200);
    const au7 = all.json().find((entry: { designation: string }) => entry.designation === "12AU7");
    expect(au7).toEqual({ designation: "12AU7", aliases: ["ECC82", "12AU7A"], class: "dual-triode", base: "B9A", heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } }, userAdded: false });
    // The search reads names, aliases and notes: 12AU7 by its alias, its variants by their notes.
    const found = (await t.app.inject({ url: "/api/types?q=ECC82" })).json();
    expect(found.map((entry: { designation: string }) => entry.designation)).toContain("12AU7");
    expect(found.map((entry: { designation: string }) => entry.designation)).not.toContain("12AT7");
    const pentodes = (await t.app.inject({ url: "/api/types?class=pentode&base=B7G" })).json();
    expect(pentodes.every((entry: { class: string; base: string }) => entry.class === "pentode" && entry.base === "B7G")).toBe(true);
    expect(pentodes.some((entry: { designation: string }) => entry.designation === "6AU6")).toBe(true);
    const bad = await t.app.inject({ url: "/api/types?class=tetrode" });
    expect(bad.statusCode).toBe(400);
    expect(bad.json().fields.class).toContain("Class must be one of");
  });

  it("resolves an alias and answers 404 for an unknown name", async () => {
    const alias = await t.app.inject({ url: "/api/types/ecc82" });
    expect(alias.statusCode).toBe(200);
    expect(alias.json().designation).toBe("12AU7");
    expect(alias.json().variants).toContain("5814A");
    expect(alias.json().sources.pins).toContain("Brimar");
    expect((await t.app.inject({ url: "/api/types/NOSUCH" })).statusCode).toBe(404);
  });

  it("adds a type from JSON and refuses a bad one with every problem by path", async () => {
    const created = await t.app.inject({ method: "POST", url: "/api/types", payload: apiType("9QY7") });
    expect(created.statusCode, created.body).toBe(201);
    expect(created.headers.location).toBe("/api/types/9QY7");
    expect(created.json().userAdded).toBe(true);
    expect((await t.app.inject({ url: "/api/types/9QY7" })).json().userAdded).toBe(true);

    const before = await t.app.db.tubeType.count();
    const twice = apiType("9QY8");
    twice.pins[1] = { pin: "1", element: "g1", section: 2 };
    const cases: Array<[unknown, number, string, string]> = [
      [apiType("9QY7"), 409, "designation", "9QY7 is already in the library"],
      [apiType("9QY8", { aliases: ["ECC82"] }), 409, "aliases", "alias ECC82 is already a name of 12AU7"],
      [twice, 422, "pins.1.pin", "pin 1 is listed twice"],
      [apiType("9QY8", { pins: apiType("X").pins.map((pin) => (pin.pin === "3" ? { pin: "3", element: "nc" } : pin)) }), 422, "pins", "section 2 (triode) lacks k"],
      [apiType("9QY8", { sources: {} }), 422, "sources", "no source for pins"],
      [apiType("9QY8", { heater: { volts: -6.3, amps: 0.3 } }), 422, "heater.volts", "heater volts must not be negative"],
      [{ designation: "9QY8" }, 422, "aliases", "aliases must be a list"],
    ];
    for (const [body, status, field, text] of cases) {
      const response = await t.app.inject({ method: "POST", url: "/api/types", payload: body as object });
      expect(response.statusCode, `${field}: ${text}`).toBe(status);
      expect(response.json().fields[field], field).toContain(text);
    }
    const csv = await t.app.inject({ method: "POST", url: "/api/types", headers: { "content-type": "text/plain" }, payload: "designation=9QY8" });
    expect(csv.statusCode).toBe(415);
    expect(await t.app.db.tubeType.count()).toBe(before);
  });

  it("documents the type and substitute operations in the OpenAPI document", async () => {
    const document = (await t.app.inject({ url: "/api/openapi.json" })).json();
    expect(document.paths["/api/types"].get).toBeTruthy();
    expect(document.paths["/api/types"].post.requestBody).toBeTruthy();
    expect(document.paths["/api/types/{designation}"].get).toBeTruthy();
    expect(document.paths["/api/types/{designation}/sockets"].get).toBeTruthy();
    expect(document.paths["/api/substitutes"].post.requestBody.content["application/json"].schema.properties.heaterSupply).toBeTruthy();
  });
});
