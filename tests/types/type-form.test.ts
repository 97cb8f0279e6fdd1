/**
 * The add-a-type form: pin lines, assembling the spec from the form's fields, and putting every
 * library-check message beside the right field. The type entered is an invented "TEST6"
 * noval dual triode; its figures are for the test only, chosen to pass or break the library
 * rules on purpose (no datasheet is claimed for them).
 */
import { describe, expect, it } from "vitest";
import { parseTypeFormFields } from "../../server/schemas/type-form-schemas.ts";
import { formErrorsFromSpecErrors, formFieldForSpecPath, formatPinLines, parsePinLines, typeFormToSpec } from "../../server/types/type-form.ts";
import { checkNewType, consistencyPath, designationClash } from "../../server/types/type-validation.ts";

const NOVAL_PINS = "1=a:2\n2=g1:2\n3=k:2\n4=h\n5=h\n6=a:1\n7=g1:1\n8=k:1\n9=hct";

const goodForm: Record<string, string> = {
  designation: "test6",
  aliases: "tst6, TST6A",
  class: "dual-triode",
  base: "B9A",
  basingCode: "9a",
  pins: NOVAL_PINS,
  heaterVolts: "12.6 V",
  heaterAmps: "150 mA",
  heaterHalfVolts: "6.3",
  heaterHalfAmps: "0.3",
  maxPlateVolts: "300",
  maxPlateWatts: "2.5 W",
  s1Kind: "triode",
  s1PlateVolts: "250",
  s1GridVolts: "-8",
  s1PlateMilliamps: "10",
  s1Gm: "2.2 mA/V",
  s1Mu: "17",
  s1Rp: "7k7",
  s2Kind: "triode",
  source: "entered by owner from an invented test sheet",
};

const noKnownTypes = { specs: [], ownerOf: () => undefined };

describe("pin lines", () => {
  it("reads pin=element[:section] lines, skipping blanks and # comments", () => {
    const parsed = parsePinLines("# noval\n1 = A:2\n\n4=h\ncap=g1:1\n09=nc");
    expect(parsed).toEqual({
      ok: true,
      pins: [
        { pin: "1", element: "a", section: 2 },
        { pin: "4", element: "h" },
        { pin: "cap", element: "g1", section: 1 },
        { pin: "9", element: "nc" },
      ],
      lineNumbers: [2, 4, 5, 6],
    });
    expect(formatPinLines(parsed.ok ? parsed.pins : [])).toBe("1=a:2\n4=h\ncap=g1:1\n9=nc");
  });

  it("names every bad line and what is wrong with it", () => {
    const parsed = parsePinLines("1=a:2\n2 g1\n3=grid:1");
    expect(parsed.ok).toBe(false);
    const message = (parsed as { message: string }).message;
    expect(message).toContain('line 2 ("2 g1") is not pin=element');
    expect(message).toContain('line 3 ("3=grid:1"): "grid" is not an element');
    expect(parsePinLines("  \n# only a comment")).toEqual({ ok: false, message: "Pins: list every pin, one pin=element[:section] a line (e.g. 1=a:2)" });
  });
});

describe("form to spec", () => {
  it("assembles a spec that passes the library's schema and consistency checks", () => {
    const parsed = parseTypeFormFields(goodForm);
    expect(parsed.errors).toEqual({});
    const built = typeFormToSpec(parsed.values, parsed.errors);
    expect(built.errors).toEqual({});
    expect(built.spec).toMatchObject({
      designation: "TEST6",
      aliases: ["TST6", "TST6A"],
      basingCode: "9A",
      heater: { volts: 12.6, amps: 0.15, centreTap: { half: { volts: 6.3, amps: 0.3 } } },
      maxRatings: { plateVolts: 300, plateWatts: 2.5 },
      sections: [
        { index: 1, kind: "triode", typical: [{ plateVolts: 250, gridVolts: -8, plateMilliamps: 10, transconductanceMicroSiemens: 2200, mu: 17, plateResistanceOhms: 7700 }] },
        { index: 2, kind: "triode", typical: [] },
      ],
      sources: {
        pins: goodForm.source,
        heater: goodForm.source,
        maxRatings: goodForm.source,
        sections: goodForm.source,
        aliases: goodForm.source,
      },
    });
    const check = checkNewType(built.spec, noKnownTypes);
    expect(check.ok).toBe(true);
    expect(check.ok && check.spec.userAdded).toBe(true);
  });

  it("reports every field of a bad form in one answer", () => {
    const parsed = parseTypeFormFields({ ...goodForm, class: "", heaterVolts: "6,3", s1GridVolts: "", s3PlateVolts: "100", source: "" });
    const built = typeFormToSpec(parsed.values, parsed.errors);
    expect(built.errors.class).toContain("Class: choose one of");
    expect(built.errors.heaterVolts).toContain("Heater volts");
    expect(built.errors.s1GridVolts).toBe("Section 1 grid volts is required for its typical point");
    expect(built.errors.s3Kind).toBe("Section 3 kind: choose the kind of section 3, or clear its values");
    expect(built.errors.source).toBe("Source is required");
    expect(built.spec).toBeNull();
  });

  it("asks for sections in order", () => {
    const parsed = parseTypeFormFields({ ...goodForm, s2Kind: "", s3Kind: "triode" });
    expect(typeFormToSpec(parsed.values, parsed.errors).errors.s3Kind).toBe("Section 3 kind: sections are numbered in order; fill in section 2 first");
  });
});

describe("library checks beside the right field", () => {
  it("puts a pin used twice on its line, and a missing section electrode on the pins", () => {
    const pins = NOVAL_PINS.replace("3=k:2", "3=k:1").replace("2=g1:2", "1=g1:2");
    const parsed = parseTypeFormFields({ ...goodForm, pins });
    const built = typeFormToSpec(parsed.values, parsed.errors);
    const check = checkNewType(built.spec, noKnownTypes);
    expect(check.ok).toBe(false);
    const errors = formErrorsFromSpecErrors((check as { errors: Record<string, string> }).errors, built.pinLineNumbers);
    expect(errors.pins).toContain("Pins, line 2: pin 1 is listed twice");
    expect(Object.keys(errors)).toEqual(["pins"]);

    const noCathode = parseTypeFormFields({ ...goodForm, pins: NOVAL_PINS.replace("3=k:2", "3=nc") });
    const builtNoCathode = typeFormToSpec(noCathode.values, noCathode.errors);
    const checkNoCathode = checkNewType(builtNoCathode.spec, noKnownTypes);
    expect(checkNoCathode.ok).toBe(false);
    const errorsNoCathode = formErrorsFromSpecErrors((checkNoCathode as { errors: Record<string, string> }).errors, builtNoCathode.pinLineNumbers);
    expect(errorsNoCathode.pins).toBe("Pins: section 2 (triode) lacks k");
  });

  it("says which name is taken, with 409", () => {
    const known = { specs: [], ownerOf: (name: string) => (name === "TEST6" ? "TEST6" : name === "TST6A" ? "OTHER1" : undefined) };
    const parsed = parseTypeFormFields(goodForm);
    const check = checkNewType(typeFormToSpec(parsed.values, parsed.errors).spec, known);
    expect(check).toEqual({ ok: false, status: 409, errors: { designation: "TEST6 is already in the library", aliases: "alias TST6A is already a name of OTHER1" } });
    expect(designationClash(" ecc82 ", (name) => (name === "ECC82" ? "12AU7" : undefined))).toBe("ECC82 is already a name of 12AU7");
  });

  it("maps spec paths and consistency messages to fields", () => {
    expect(formFieldForSpecPath("pins.2.pin", [1, 2, 4])).toEqual({ field: "pins", prefix: "Pins, line 4: ", shortPrefix: "line 4: " });
    expect(formFieldForSpecPath("sections.1.typical.0.plateVolts", []).field).toBe("s2PlateVolts");
    expect(formFieldForSpecPath("heater.centreTap.half.amps", []).field).toBe("heaterHalfAmps");
    expect(formFieldForSpecPath("maxRatings.plateWatts", []).field).toBe("maxPlateWatts");
    expect(formFieldForSpecPath("sources.heater", []).field).toBe("source");
    expect(consistencyPath("section 2 (triode) lacks k")).toBe("pins");
    expect(consistencyPath("pin 3 is used 2 times")).toBe("pins");
    expect(consistencyPath("an indirectly heated type needs two heater (h) pins")).toBe("pins");
    expect(consistencyPath("section 1 typical point 0 has 400 V on the plate, above the maximum 300 V")).toBe("sections.0.typical");
    expect(consistencyPath("heater half volts 6 is not half of 12.6")).toBe("heater.centreTap");
    expect(consistencyPath("class dual-triode needs two triodes, but the sections are triode")).toBe("class");
    expect(consistencyPath("variantOf names 12XY7, which is not a designation in the library")).toBe("variantOf");
  });

  it("checks the typical point against the ratings, as the library does", () => {
    // 300 V × 10 mA = 3 W, above the 2.5 W entered: hand arithmetic.
    const parsed = parseTypeFormFields({ ...goodForm, s1PlateVolts: "300" });
    const built = typeFormToSpec(parsed.values, parsed.errors);
    const check = checkNewType(built.spec, noKnownTypes);
    const errors = formErrorsFromSpecErrors((check as { errors: Record<string, string> }).errors, built.pinLineNumbers);
    expect(errors.s1PlateVolts).toBe("Section 1: section 1 typical point 0 dissipates 3 W at the plate, above the maximum 2.5 W");
  });
});
