/**
 * White-box check of the pin planner: the search over section mappings and heater orientations
 * counts work without building text, then builds the winning plan in full. The two must agree.
 */
import { describe, expect, it } from "vitest";
import { describeSocketWiring, enumerateSectionMappings, planWiring } from "../../../server/engine/substitution/pin-fit.ts";
import { heaterModeOnSupply } from "../../../server/engine/substitution/heater-fit.ts";
import type { HeaterSupply } from "../../../server/engine/substitution/index.ts";
import { constructedInternalConnectionTriode, fixtureLibrary } from "./fixtures.ts";

const library = [...fixtureLibrary, constructedInternalConnectionTriode];
const supplies: HeaterSupply[] = [
  { kind: "parallel", volts: 6.3 },
  { kind: "parallel", volts: 12.6 },
  { kind: "series", amps: 0.3 },
];

describe("planWiring", () => {
  it("counts the same work and problems with and without detail, for every fixture pair, mapping and heater orientation", () => {
    let compared = 0;
    for (const supply of supplies) {
      for (const socketType of library) {
        const socketHeater = heaterModeOnSupply(socketType, supply);
        if (!socketHeater.ok) continue;
        const wiring = describeSocketWiring(socketType, socketHeater);
        for (const candidate of library) {
          const candidateHeater = heaterModeOnSupply(candidate, supply);
          const mappings = enumerateSectionMappings(socketType, wiring.usedSections, candidate);
          if (!candidateHeater.ok || !mappings.ok) continue;
          for (const sectionMap of mappings.mappings) {
            for (const swap of [false, true]) {
              const counted = planWiring(wiring, candidate, candidateHeater, sectionMap, swap, false);
              const detailed = planWiring(wiring, candidate, candidateHeater, sectionMap, swap, true);
              const label = `${candidate.designation} in ${socketType.designation} on ${JSON.stringify(supply)}, swap ${swap}`;
              expect(counted.operationCount, label).toBe(detailed.moves.length + detailed.jumpers.length + detailed.removals.length);
              expect(detailed.operationCount, label).toBe(counted.operationCount);
              expect(counted.problemCount, label).toBe(detailed.problems.length);
              expect(counted.heaterLeadsMove, label).toBe(detailed.heaterLeadsMove);
              compared += 1;
            }
          }
        }
      }
    }
    // Brute force over the fixtures: enough pairs to cover direct, rewire and adapter cases.
    expect(compared).toBeGreaterThan(100);
  });
});
