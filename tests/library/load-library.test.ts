import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import {
  checkLibraryConsistency,
  DEFAULT_TUBE_LIBRARY_DIRECTORY,
  indexByName,
  loadTubeLibrary,
  lookupTubeType,
} from "../../server/library/load-library.ts";

const library = loadTubeLibrary(DEFAULT_TUBE_LIBRARY_DIRECTORY);

describe("the reference library", () => {
  it("loads every file and passes the consistency check", () => {
    expect(checkLibraryConsistency(library.types)).toEqual([]);
  });

  it("holds at least 150 types", () => {
    expect(library.types.length).toBeGreaterThanOrEqual(150);
  });

  it("covers the families restorers and tube-logic builders meet", () => {
    const classes = new Set(library.types.map((spec) => spec.class));
    for (const expected of ["dual-triode", "triode", "pentode", "beam-tetrode", "rectifier", "dual-diode", "diode-triode", "thyratron", "voltage-regulator", "indicator", "triode-pentode", "diode-pentode"]) {
      expect(classes, expected).toContain(expected);
    }
    const bases = new Set(library.types.map((spec) => spec.base));
    for (const expected of ["B7G", "B9A", "octal", "loctal", "other"]) expect(bases, expected).toContain(expected);
  });

  it("marks every value that is not from a named document as from memory, never blank", () => {
    for (const spec of library.types) {
      for (const [key, source] of Object.entries(spec.sources)) {
        expect(source.trim().length, `${spec.designation} ${key}`).toBeGreaterThan(0);
      }
    }
  });

  it("gives every series-string type with controlled warm-up a heater current of a standard string", () => {
    // 150, 300, 450 and 600 mA strings: common practice, no source
    const stringCurrents = [0.15, 0.3, 0.45, 0.6];
    for (const spec of library.types.filter((candidate) => candidate.heater.warmUpSeconds !== undefined)) {
      expect(stringCurrents, spec.designation).toContain(spec.heater.amps);
    }
  });
});

describe("name resolution", () => {
  it("resolves Pro Electron names to the EIA designation", () => {
    expect(library.byName.get("ECC82")?.designation).toBe("12AU7");
    expect(library.byName.get("ECC83")?.designation).toBe("12AX7");
    expect(library.byName.get("ECC81")?.designation).toBe("12AT7");
    expect(library.byName.get("EL34")?.designation).toBe("EL34");
    expect(library.byName.get("6CA7")?.designation).toBe("EL34");
    expect(library.byName.get("GZ34")?.designation).toBe("5AR4");
    expect(library.byName.get("EN91")?.designation).toBe("2D21");
  });

  it("keys the map by upper-cased names and looks up case-insensitively", () => {
    expect(library.byName.get("ecc82")).toBeUndefined();
    expect(lookupTubeType(library, "ecc82")?.designation).toBe("12AU7");
    expect(lookupTubeType(library, "  Ecc83 ")?.designation).toBe("12AX7");
    expect(lookupTubeType(library, "6sn7")?.designation).toBe("6SN7GT");
    expect(lookupTubeType(library, "no-such-tube")).toBeUndefined();
  });

  it("indexes every designation and alias exactly once", () => {
    const names = library.types.flatMap((spec) => [spec.designation, ...spec.aliases]);
    expect(library.byName.size).toBe(names.length);
  });

  it("lets a designation win over a clashing alias", () => {
    const [first, second] = library.types;
    const clash = { ...second, aliases: [first.designation] };
    expect(indexByName([clash, first]).get(first.designation)).toBe(first);
  });

  it("points each variant at a type in the library", () => {
    const variants = library.types.filter((spec) => spec.variantOf !== undefined);
    expect(variants.length).toBeGreaterThan(20);
    for (const spec of variants) expect(library.byName.get(spec.variantOf as string), spec.designation).toBeDefined();
    expect(lookupTubeType(library, "5814A")?.variantOf).toBe("12AU7");
    expect(lookupTubeType(library, "E88CC")?.designation).toBe("6922");
    expect(lookupTubeType(library, "6922")?.variantOf).toBe("6DJ8");
  });
});

describe("loadTubeLibrary errors", () => {
  let directory = "";
  afterEach(() => {
    if (directory) rmSync(directory, { recursive: true, force: true });
    directory = "";
  });

  function libraryDirectory(files: Record<string, string>): string {
    directory = mkdtempSync(path.join(tmpdir(), "tube-library-"));
    for (const [name, text] of Object.entries(files)) writeFileSync(path.join(directory, name), text);
    return directory;
  }

  function firstTypeOf(fileName: string): Record<string, unknown> {
    const file = JSON.parse(readFileSync(path.join(DEFAULT_TUBE_LIBRARY_DIRECTORY, fileName), "utf8"));
    return structuredClone(file.types[0]);
  }

  it("lists every schema problem as file › path: message in one error", () => {
    const good = firstTypeOf("dual-triodes-noval.json");
    const badHeater = { ...structuredClone(good), designation: "TESTA", aliases: [], heater: { volts: -1, amps: 0.15 } };
    const badClass = { ...structuredClone(good), designation: "TESTB", aliases: [], class: "octode" };
    const dir = libraryDirectory({
      "a.json": JSON.stringify({ types: [good, good, good, badHeater] }),
      "b.json": JSON.stringify({ types: [badClass] }),
      "notes.txt": "ignored: not a .json file",
    });
    let message = "";
    try {
      loadTubeLibrary(dir);
    } catch (error) {
      message = (error as Error).message;
    }
    expect(message).toMatch(/has 2 problems/);
    expect(message).toContain("a.json › types[3].heater.volts: heater volts must not be negative");
    expect(message).toMatch(/b\.json › types\[0\]\.class: class must be one of/);
  });

  it("reports invalid JSON by file name", () => {
    const dir = libraryDirectory({ "broken.json": "{ \"types\": [" });
    expect(() => loadTubeLibrary(dir)).toThrow(/broken\.json: not valid JSON/);
  });

  it("reports library-wide problems with the file and position of the type", () => {
    const good = firstTypeOf("dual-triodes-noval.json");
    const dir = libraryDirectory({
      "one.json": JSON.stringify({ types: [good] }),
      "two.json": JSON.stringify({ $comment: "second copy", types: [{ ...structuredClone(good), aliases: [] }] }),
    });
    expect(() => loadTubeLibrary(dir)).toThrow(/one\.json › types\[0\], two\.json › types\[0\] \(12AU7\): designation 12AU7 is used by 2 types/);
  });

  it("refuses a user-added type in a reference file", () => {
    const good = { ...firstTypeOf("dual-triodes-noval.json"), userAdded: true };
    const dir = libraryDirectory({ "mine.json": JSON.stringify({ types: [good] }) });
    expect(() => loadTubeLibrary(dir)).toThrow(/mine\.json › types\[0\]\.userAdded: reference library types cannot be marked user-added/);
  });

  it("loads a small valid directory", () => {
    const good = firstTypeOf("dual-triodes-noval.json");
    const loaded = loadTubeLibrary(libraryDirectory({ "only.json": JSON.stringify({ types: [good] }) }));
    expect(loaded.types).toHaveLength(1);
    expect(loaded.byName.get("ECC82")?.designation).toBe("12AU7");
  });
});

describe("reference files", () => {
  it("never mark a type as user-added", () => {
    expect(library.types.filter((spec) => spec.userAdded)).toEqual([]);
  });
});
