import { describe, expect, it } from "vitest";
import { naturalHeaterSupply, socketsForType } from "../../../server/engine/substitution/index.ts";
import { fixtureLibrary, tube12AU7, tube6CG7 } from "./fixtures.ts";

describe("socketsForType", () => {
  it("lists the sockets a 12AU7 fills as wired, each at that socket type's own typical point and heater", () => {
    const result = socketsForType(tube12AU7, fixtureLibrary, { allowRewire: false, allowAdapter: false });
    const fits = new Map(result.fits.map((fit) => [fit.socketDesignation, fit]));
    const misses = new Map(result.misses.map((miss) => [miss.socketDesignation, miss.reasons]));

    // 12AX7, 12AT7, 5814A: basing 9A, 12.6 V heaters, typical points inside 12AU7's 300 V / 2.75 W (RCA/GE data sheets, from memory)
    for (const designation of ["12AU7", "12AX7", "12AT7", "5814A"]) expect(fits.get(designation)?.candidate.pins.fit).toBe("direct");
    expect(fits.get("12AU7")?.heaterSupply).toEqual({ kind: "parallel", volts: 12.6 });

    // 12BH7 typical 250 V × 11.5 mA = 2.875 W against 12AU7's 2.75 W (RCA data sheets, hand computation)
    expect(misses.get("12BH7")).toContain("plate dissipation of section 1: the circuit applies 2.875 W (250 V × 11.5 mA), above 12AU7's 2.75 W");
    // 6CG7 socket on 6.3 V: 9AJ heater and shield pins differ from 9A
    expect(misses.get("6CG7")?.some((reason) => reason.startsWith("pins differ"))).toBe(true);
    expect(misses.get("6SN7GT")).toEqual(["12AU7's base is B9A, the socket's is octal, and an adapter is not allowed"]);
    expect(misses.get("6AU6")?.[0]).toContain("offers triode, triode");
  });

  it("with rewiring allowed the 6CG7 socket becomes a fit with its moves", () => {
    const result = socketsForType(tube12AU7, [tube6CG7], { allowRewire: true, allowAdapter: false });
    expect(result.fits[0].socketDesignation).toBe("6CG7");
    expect(result.fits[0].candidate.pins.fit).toBe("rewire");
    expect(result.fits[0].candidate.pins.operationCount).toBe(3);
  });

  it("with one supply for all, sockets whose own type cannot run on it are reported as such", () => {
    const result = socketsForType(tube12AU7, [tube6CG7], { heaterSupply: { kind: "parallel", volts: 12.6 }, allowRewire: true, allowAdapter: true });
    expect(result.fits).toEqual([]);
    expect(result.misses[0].reasons[0]).toContain("the 6CG7 socket's own type cannot run on this supply");
  });

  it("takes the natural supply as parallel at full heater volts", () => {
    // 12AU7 full heater 12.6 V (RCA data sheet, from memory)
    expect(naturalHeaterSupply(tube12AU7)).toEqual({ kind: "parallel", volts: 12.6 });
  });
});
