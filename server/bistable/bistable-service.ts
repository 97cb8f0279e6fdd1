/**
 * Bistable questions: turns a question (tube types, resistors, supplies) into a circuit of
 * published tube models — each optionally scaled to a measured transconductance — and calls the
 * bistable engine. Engine refusals and impossible inputs come back as field errors, never thrown.
 */
import {
  analyzeBistable,
  analyzeYield,
  suggestResistors,
  type BistableAnalysis,
  type BistableCircuit,
  type BistableSide,
  type ResistorSearchResult,
  type SearchTube,
  type YieldResult,
} from "../engine/bistable/index.ts";
import {
  findTubeModel,
  scaleModelToMeasuredTransconductance,
  tubeElementFromModel,
  tubeModelLibrary,
  type TubeElement,
  type TubeModel,
} from "../engine/models/index.ts";
import { formatQuantity } from "../engine/units/index.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import type { ServiceResult } from "../stock/stock-service.ts";
import type { BistableQuestion, ResistorRequest, TubeChoice } from "../schemas/bistable-schemas.ts";

export const BISTABLE_CAUTION =
  "Tube logic runs at lethal voltages, and filter and speed-up capacitors hold their charge after power-off. These figures come from published average tube models: check every resistor value, its power and voltage rating, and the levels on the bench before relying on them, and defer to local codes and qualified practice.";

export interface SideModelInfo {
  type: string;
  modelSource: string;
  /** Multiplier on the published model's plate and screen current (1 = an average new tube). */
  currentScale: number;
  /** Where the measured gm was applied, e.g. "250 V plate, −8.5 V grid"; null when not scaled. */
  scaledAt: string | null;
}

export interface BistableAnswer {
  circuit: BistableCircuit;
  analysis: BistableAnalysis;
  yield: YieldResult | null;
  sides: { A: SideModelInfo; B: SideModelInfo };
  notes: string[];
}

/** Spreads the helper ranks its designs by (resistors, supplies, tubes); rules of thumb, no source. */
export const HELPER_WORST_CASE = { resistorTolerancePercent: 5, supplyDriftPercent: 5, tubeSpreadPercent: 15 } as const;

export interface ResistorAnswer {
  result: ResistorSearchResult;
  worstCase: typeof HELPER_WORST_CASE;
  series: "E12" | "E24";
  sides: { A: SideModelInfo; B: SideModelInfo };
  notes: string[];
}

export interface ModelChoice {
  designation: string;
  aliases: string[];
  kind: "triode" | "pentode";
  /** "250 V, −8.5 V" — the point a measured gm is applied at; null when the library has none. */
  testPointText: string | null;
}

interface ResolvedTube {
  element: TubeElement;
  model: TubeModel;
  info: SideModelInfo;
  screen: BistableSide["screen"];
  notes: string[];
}

const volts = (value: number) => formatQuantity(value, "volts").replace(/^-/, "−");

export class BistableService {
  constructor(private readonly catalog: TypeCatalog) {}

  /** Every tube type with a Koren parameter set, for the form's choices. */
  modelChoices(): ModelChoice[] {
    return Object.values(tubeModelLibrary).map((model) => {
      const point = this.testPointFor(model);
      return {
        designation: model.designation,
        aliases: model.aliases,
        kind: model.parameters.kind === "koren-pentode" ? "pentode" : "triode",
        testPointText: point ? this.describePoint(point) : null,
      };
    });
  }

  /** States, levels, margins and loop gain of the circuit; the yield too when asked. */
  analyze(question: BistableQuestion): ServiceResult<BistableAnswer> {
    const errors: FieldErrors = {};
    const sideA = this.resolveTube(question.sideA, "A", errors);
    const sideB = this.resolveTube(question.sideB, "B", errors);
    if (!sideA || !sideB || Object.keys(errors).length > 0) return { ok: false, errors };
    const circuit: BistableCircuit = {
      bPlusVolts: question.bPlusVolts,
      negativeRailVolts: question.negativeRailVolts,
      sideA: this.sideOf(sideA, question.sideA),
      sideB: this.sideOf(sideB, question.sideB),
      cathode: question.cathode,
    };
    try {
      const analysis = analyzeBistable(circuit);
      const yieldResult = question.yield
        ? analyzeYield(circuit, {
            resistorTolerancePercent: question.yield.resistorTolerancePercent,
            supplyDriftPercent: question.yield.supplyDriftPercent,
            tubeSpreadPercent: question.yield.tubeSpreadPercent,
            ...(question.yield.wornScale !== undefined ? { wornScale: question.yield.wornScale } : {}),
            trials: question.yield.trials,
            seed: question.yield.seed,
            thresholds: { minSwingVolts: question.yield.minSwingVolts, minCutoffMarginVolts: question.yield.minCutoffMarginVolts },
          })
        : null;
      return { ok: true, value: { circuit, analysis, yield: yieldResult, sides: { A: sideA.info, B: sideB.info }, notes: [...sideA.notes, ...sideB.notes] } };
    } catch (error) {
      if (error instanceof RangeError) return { ok: false, errors: { _form: `The circuit cannot be analysed: ${error.message}` } };
      throw error;
    }
  }

  /** E12/E24 plate loads, coupling and grid-return resistors that reach the target levels. */
  suggest(request: ResistorRequest): ServiceResult<ResistorAnswer> {
    const errors: FieldErrors = {};
    const sideA = this.resolveTube(request.sideA, "A", errors);
    const sideB = this.resolveTube(request.sideB ?? request.sideA, "B", errors);
    if (!sideA || !sideB || Object.keys(errors).length > 0) return { ok: false, errors };
    const searchTube = (resolved: ResolvedTube): SearchTube => ({ tube: resolved.element, ...(resolved.screen ? { screen: resolved.screen } : {}) });
    try {
      const result = suggestResistors(
        { sideA: searchTube(sideA), sideB: searchTube(sideB) },
        { bPlusVolts: request.bPlusVolts, negativeRailVolts: request.negativeRailVolts, cathode: request.cathode },
        {
          highLevelVolts: request.targets.highLevelVolts,
          lowLevelVolts: request.targets.lowLevelVolts,
          toleranceVolts: request.targets.toleranceVolts,
          ...(request.targets.minCutoffMarginVolts !== undefined ? { minCutoffMarginVolts: request.targets.minCutoffMarginVolts } : {}),
        },
        request.series,
        { topN: request.topN, ...HELPER_WORST_CASE },
      );
      return { ok: true, value: { result, worstCase: HELPER_WORST_CASE, series: request.series, sides: { A: sideA.info, B: sideB.info }, notes: [...sideA.notes, ...sideB.notes] } };
    } catch (error) {
      if (error instanceof RangeError) return { ok: false, errors: { _form: `No search was run: ${error.message}` } };
      throw error;
    }
  }

  private sideOf(resolved: ResolvedTube, side: BistableQuestion["sideA"]): BistableSide {
    return {
      tube: resolved.element,
      plateLoadOhms: side.plateLoadOhms,
      couplingOhms: side.couplingOhms,
      gridReturnOhms: side.gridReturnOhms,
      ...(resolved.screen ? { screen: resolved.screen } : {}),
    };
  }

  /** The first typical point of the type in the reference library: where a tester's gm is compared. */
  private testPointFor(model: TubeModel): { plateVolts: number; gridVolts: number; screenVolts?: number } | null {
    const entry = [model.designation, ...model.aliases].map((name) => this.catalog.resolve(name)).find((found) => found !== undefined);
    const pentode = model.parameters.kind === "koren-pentode";
    for (const section of entry?.spec.sections ?? []) {
      for (const point of section.typical) {
        if (pentode && point.screenVolts === undefined) continue;
        return { plateVolts: point.plateVolts, gridVolts: point.gridVolts, ...(pentode ? { screenVolts: point.screenVolts } : {}) };
      }
    }
    return null;
  }

  private describePoint(point: { plateVolts: number; gridVolts: number; screenVolts?: number }): string {
    return [`${volts(point.plateVolts)} plate`, ...(point.screenVolts !== undefined ? [`${volts(point.screenVolts)} screen`] : []), `${volts(point.gridVolts)} grid`].join(", ");
  }

  private resolveTube(choice: TubeChoice, side: "A" | "B", errors: FieldErrors): ResolvedTube | null {
    const prefix = `side${side}`;
    const model = findTubeModel(choice.type);
    if (!model) {
      const available = Object.values(tubeModelLibrary).map((entry) => entry.designation).join(", ");
      errors[`${prefix}.type`] = `Side ${side} tube type: no Koren parameter set for "${choice.type}" — available: ${available}`;
      return null;
    }
    const notes: string[] = [];
    let scaled = model;
    let scaledAt: string | null = null;
    if (choice.measuredTransconductanceMicroSiemens !== undefined) {
      const point = this.testPointFor(model);
      if (!point) {
        errors[`${prefix}.measuredTransconductanceMicroSiemens`] = `Side ${side} measured gm: the library has no typical test point for ${model.designation} to compare it at — leave it blank`;
        return null;
      }
      const result = scaleModelToMeasuredTransconductance(model, point, choice.measuredTransconductanceMicroSiemens);
      if (!result.ok) {
        errors[`${prefix}.measuredTransconductanceMicroSiemens`] = `Side ${side} measured gm: ${result.reason}`;
        return null;
      }
      scaled = result.model;
      scaledAt = this.describePoint(point);
      notes.push(
        `Side ${side}: ${model.designation} model scaled to ${(result.scale * 100).toFixed(0)} % of its average current, so its gm at ${scaledAt} is the measured ${Math.round(choice.measuredTransconductanceMicroSiemens)} µS (the model gives ${Math.round(result.modelMicroSiemensBefore)} µS there).`,
      );
    }
    const pentode = model.parameters.kind === "koren-pentode";
    if (pentode && !choice.screen) {
      errors[`${prefix}.screen`] = `Side ${side} screen supply is required: ${model.designation} is a pentode (give the screen supply volts; add a screen resistor, or leave it blank for a fixed screen voltage)`;
      return null;
    }
    if (!pentode && choice.screen) notes.push(`Side ${side}: the screen supply is ignored — ${model.designation} is a triode.`);
    return {
      element: tubeElementFromModel(scaled),
      model: scaled,
      screen: pentode ? choice.screen : undefined,
      notes,
      info: { type: model.designation, modelSource: model.source, currentScale: scaled.currentScale, scaledAt },
    };
  }
}
