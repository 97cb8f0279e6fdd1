/**
 * What one stage draws from B+ and the negative rail, and what its plates dissipate. A bistable
 * stage is solved with the bistable solver when a Koren parameter set exists for the type; else
 * the type's typical operating point stands in; else a bound from the plate loads.
 */
import { analyzeBistable, type BistableCircuit, type BistableState } from "../bistable/index.ts";
import { findTubeModel, tubeElementFromModel } from "../models/index.ts";
import type { OperatingPoint, SectionKind, TubeTypeSpec } from "../tube-types/index.ts";
import type { BistableResistors, BuildSupplies, SingleStageValues, StageLoad } from "./types.ts";

const AMPLIFYING_KINDS: readonly SectionKind[] = ["triode", "pentode", "beam-tetrode"];

/**
 * Sections that can serve as a stage (triode, pentode, beam tetrode), by index; empty for a
 * rectifier or regulator. Never throws.
 * @example amplifyingSections(spec12AU7) // → [1, 2]
 */
export function amplifyingSections(spec: TubeTypeSpec): number[] {
  return spec.sections.filter((section) => AMPLIFYING_KINDS.includes(section.kind)).map((section) => section.index);
}

function firstTypicalPoint(spec: TubeTypeSpec): OperatingPoint | null {
  for (const section of spec.sections) {
    if (AMPLIFYING_KINDS.includes(section.kind) && section.typical.length > 0) return section.typical[0];
  }
  return null;
}

/** Milliamps through a resistor with `volts` across it. */
function milliampsThrough(volts: number, ohms: number): number {
  return (1000 * volts) / ohms;
}

/** Grid-return current into the rail with both grids taken at 0 V (the on grid clamps near its cathode). */
function railEstimateMilliamps(resistors: BistableResistors, railVolts: number | null): number {
  if (railVolts === null) return 0;
  return 2 * milliampsThrough(0 - railVolts, resistors.gridReturnOhms);
}

function bPlusOfState(state: BistableState, bPlusVolts: number, resistors: BistableResistors): number {
  // Everything a stage takes from B+ flows through its two plate loads.
  return milliampsThrough(bPlusVolts - state.sideA.plateVolts, resistors.plateLoadOhms) + milliampsThrough(bPlusVolts - state.sideB.plateVolts, resistors.plateLoadOhms);
}

function railOfState(state: BistableState, railVolts: number, resistors: BistableResistors): number {
  return milliampsThrough(state.sideA.gridVolts - railVolts, resistors.gridReturnOhms) + milliampsThrough(state.sideB.gridVolts - railVolts, resistors.gridReturnOhms);
}

function format(value: number, digits = 2): string {
  return Number(value.toFixed(digits)).toString();
}

/**
 * Currents of one bistable stage (both sides the same type and resistor values). Basis, in order:
 * "koren-solve" — the solver's stable state drawing the most B+ current (B+ current = Σ current
 * through the two plate loads; rail current = Σ current through the two grid returns);
 * "typical-point" — the on side at the type's first typical point, the off side cut off, grid
 * returns with both grids at 0 V; "plate-load-bound" — at most B+/RL through each plate load
 * (plates at or above ground), plate dissipation at most B+²/(4·RL) for the on side.
 * Never throws: a solver refusal falls back to the next basis with a warning.
 *
 * @example bistableStageLoad(spec12AU7, { plateLoadOhms: 27000, couplingOhms: 220000, gridReturnOhms: 220000, cathodeOhms: null },
 *   { heater: [], bPlus: { volts: 250, milliamps: 100 }, negativeRail: { volts: -150, milliamps: 20 } })
 *   // → { basis: "koren-solve", bPlusMilliamps ≈ 8.57, … } (levels ≈ 45.8 V and 222.8 V)
 */
export function bistableStageLoad(spec: TubeTypeSpec, resistors: BistableResistors, supplies: BuildSupplies): StageLoad {
  const bPlusVolts = supplies.bPlus.volts;
  const railVolts = supplies.negativeRail?.volts ?? null;
  const warnings: string[] = [];
  const model = findTubeModel(spec.designation) ?? spec.aliases.map((alias) => findTubeModel(alias)).find((found) => found !== null) ?? null;
  if (model !== null && model.parameters.kind === "koren-triode") {
    const side = { tube: tubeElementFromModel(model), plateLoadOhms: resistors.plateLoadOhms, couplingOhms: resistors.couplingOhms, gridReturnOhms: resistors.gridReturnOhms };
    const circuit: BistableCircuit = {
      bPlusVolts,
      negativeRailVolts: railVolts ?? 0,
      sideA: side,
      sideB: side,
      cathode: resistors.cathodeOhms !== null ? { kind: "common", ohms: resistors.cathodeOhms } : { kind: "grounded" },
    };
    try {
      const analysis = analyzeBistable(circuit);
      const stable = analysis.states.filter((state) => state.stable);
      const candidates = stable.length > 0 ? stable : analysis.states;
      if (analysis.solverFailure === undefined && candidates.length > 0) {
        let worst = candidates[0];
        for (const state of candidates) if (bPlusOfState(state, bPlusVolts, resistors) > bPlusOfState(worst, bPlusVolts, resistors)) worst = state;
        if (!analysis.bistable) warnings.push(`not bistable with these values: ${analysis.reasons.join("; ")}`);
        // The solver repeats the model-range warning per state; once per stage says it.
        const outside = analysis.warnings.filter((warning) => warning.includes("outside the range"));
        warnings.push(...analysis.warnings.filter((warning) => !warning.includes("outside the range")));
        if (outside.length > 0) warnings.push("the Koren model runs outside the range its parameters were fitted over here; treat the currents as estimates");
        const on = worst.onSide === "B" ? worst.sideB : worst.sideA;
        return {
          basis: "koren-solve",
          bPlusMilliamps: bPlusOfState(worst, bPlusVolts, resistors),
          negativeRailMilliamps: railVolts === null ? 0 : railOfState(worst, railVolts, resistors),
          plateWatts: worst.sideA.plateWatts + worst.sideB.plateWatts,
          note: `solved with the Koren ${model.designation} parameter set (${stable.length > 0 ? "stable state drawing the most B+ current" : "no stable state; the state drawing the most current"}): plates at ${format(worst.sideA.plateVolts, 1)} V and ${format(worst.sideB.plateVolts, 1)} V`,
          bistable: analysis.bistable,
          warnings,
          onSide: { plateVolts: on.plateVolts - on.cathodeVolts, plateMilliamps: on.plateMilliamps },
        };
      }
      warnings.push(`the solver could not finish (${analysis.solverFailure ?? "no equilibrium found"})`);
    } catch (error) {
      if (!(error instanceof RangeError)) throw error;
      warnings.push(`the solver refused these values: ${error.message}`);
    }
  } else if (model !== null) {
    warnings.push(`the ${model.designation} parameter set is a pentode's, and a line gives no screen supply: not solved`);
  }
  const typical = firstTypicalPoint(spec);
  if (typical !== null) {
    const onMilliamps = typical.plateMilliamps + (typical.screenMilliamps ?? 0);
    return {
      basis: "typical-point",
      bPlusMilliamps: onMilliamps,
      negativeRailMilliamps: railEstimateMilliamps(resistors, railVolts),
      plateWatts: (typical.plateVolts * typical.plateMilliamps) / 1000,
      note: `no Koren parameter set for ${spec.designation}: the on side at its typical point (${typical.plateVolts} V, ${typical.plateMilliamps} mA), the off side cut off, divider currents not included; rail current with both grids at 0 V`,
      bistable: null,
      warnings,
      onSide: { plateVolts: typical.plateVolts, plateMilliamps: typical.plateMilliamps },
    };
  }
  return {
    basis: "plate-load-bound",
    bPlusMilliamps: 2 * milliampsThrough(bPlusVolts, resistors.plateLoadOhms),
    negativeRailMilliamps: railEstimateMilliamps(resistors, railVolts),
    plateWatts: (bPlusVolts * bPlusVolts) / (4 * resistors.plateLoadOhms),
    note: `no Koren parameter set and no typical point for ${spec.designation}: upper bound of B+/RL through each plate load and B+²/(4·RL) on the on plate; rail current with both grids at 0 V`,
    bistable: null,
    warnings,
    onSide: null,
  };
}

/**
 * Currents of one single stage (one section) at the values given: B+ = plate + screen current,
 * plate dissipation = plate volts × plate current.
 * @example singleStageLoad({ plateVolts: 250, plateMilliamps: 10.6, screenMilliamps: 4.3 })
 *   // → { basis: "given-values", bPlusMilliamps: 14.9, plateWatts: 2.65, … }
 */
export function singleStageLoad(values: SingleStageValues): StageLoad {
  return {
    basis: "given-values",
    bPlusMilliamps: values.plateMilliamps + (values.screenMilliamps ?? 0),
    negativeRailMilliamps: 0,
    plateWatts: (values.plateVolts * values.plateMilliamps) / 1000,
    note: `at the values given: ${values.plateVolts} V, ${values.plateMilliamps} mA plate${values.screenMilliamps !== null ? ` + ${values.screenMilliamps} mA screen` : ""} per section`,
    bistable: null,
    warnings: [],
    onSide: { plateVolts: values.plateVolts, plateMilliamps: values.plateMilliamps },
  };
}

/**
 * A rectifier or regulator tube: it supplies B+ (rectifier) or shunts the current given
 * (regulator); its own dissipation is not counted.
 * @example rectifierLoad(30) // → { basis: "given-values", bPlusMilliamps: 30, plateWatts: 0, … }
 */
export function rectifierLoad(loadMilliamps: number | null): StageLoad {
  const given = loadMilliamps !== null && loadMilliamps > 0;
  return {
    basis: given ? "given-values" : "none",
    bPlusMilliamps: given ? loadMilliamps : 0,
    negativeRailMilliamps: 0,
    plateWatts: 0,
    note: given ? `draws the ${loadMilliamps} mA given from B+` : "supplies B+ or regulates it; draws nothing counted here",
    bistable: null,
    warnings: [],
    onSide: null,
  };
}
