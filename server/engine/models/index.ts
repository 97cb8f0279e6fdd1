/**
 * Tube models: Koren's published triode and pentode equations, parameter sets
 * per type with their sources and validity ranges, positive-grid current,
 * small-signal parameters by numerical differentiation, a per-tube current
 * scale from a measured transconductance, and a least-squares fit of Koren's
 * triode parameters to datasheet points.
 *
 * All voltages given to these functions are relative to the cathode.
 */
import {
  gridAmpsFromPerveance,
  korenPentodePlateAmps,
  korenPentodeScreenAmps,
  korenTriodePlateAmps,
  type KorenParameters,
} from "./koren.ts";
import {
  fitKorenTriodeImpl,
  type FitKorenTriodeOptions,
  type FitKorenTriodeResult,
  type KorenTriodeStart,
  type TriodeCurvePoint,
} from "./fit.ts";
import { tubeModelLibrary, type TubeModel } from "./parameter-sets.ts";

export type { KorenTriodeParameters, KorenPentodeParameters, KorenParameters } from "./koren.ts";
export { korenTriodePlateAmps, korenPentodePlateAmps, korenPentodeScreenAmps } from "./koren.ts";
export type { TubeModel, ModelValidity, VoltageRange } from "./parameter-sets.ts";
export { tubeModelLibrary, SIX_SN7_FIT_POINTS } from "./parameter-sets.ts";
export type { FitKorenTriodeOptions, FitKorenTriodeResult, KorenTriodeStart, TriodeCurvePoint } from "./fit.ts";

/** Electrode voltages relative to the cathode. `screenVolts` is required for pentodes. */
export interface ElectrodeVolts {
  plateVolts: number;
  gridVolts: number;
  screenVolts?: number;
}

export interface ModelEvaluation {
  plateMilliamps: number;
  /** 0 for triodes. */
  screenMilliamps: number;
  gridMilliamps: number;
  /** True when the point lies outside the range the parameter set was fitted over. */
  outsideValidity: boolean;
  validityNotes: string[];
}

/** Grid step for the numerical transconductance, volts. */
const GRID_DIFFERENCE_STEP_VOLTS = 0.01;
/** Plate step for the numerical plate resistance, volts. */
const PLATE_DIFFERENCE_STEP_VOLTS = 0.1;

/**
 * Looks a parameter set up by designation or alias, ignoring case.
 * Returns null when the library has no set for it.
 * Example: findTubeModel("ecc82")?.designation → "12AU7".
 */
export function findTubeModel(designation: string): TubeModel | null {
  const wanted = designation.trim().toUpperCase();
  for (const model of Object.values(tubeModelLibrary)) {
    if (model.designation.toUpperCase() === wanted) return model;
    if (model.aliases.some((alias) => alias.toUpperCase() === wanted)) return model;
  }
  return null;
}

function requireScreenVolts(model: TubeModel, point: ElectrodeVolts): number {
  if (model.parameters.kind === "koren-pentode") {
    if (point.screenVolts === undefined || !Number.isFinite(point.screenVolts)) {
      throw new RangeError(`${model.designation} is a pentode: screenVolts is required`);
    }
    return point.screenVolts;
  }
  return 0;
}

function plateAmpsOf(parameters: KorenParameters, plateVolts: number, gridVolts: number, screenVolts: number): number {
  return parameters.kind === "koren-triode"
    ? korenTriodePlateAmps(parameters, plateVolts, gridVolts)
    : korenPentodePlateAmps(parameters, plateVolts, screenVolts, gridVolts);
}

function screenAmpsOf(parameters: KorenParameters, gridVolts: number, screenVolts: number): number {
  return parameters.kind === "koren-pentode" ? korenPentodeScreenAmps(parameters, screenVolts, gridVolts) : 0;
}

function validityNotesFor(model: TubeModel, plateVolts: number, gridVolts: number, screenVolts: number): string[] {
  const notes: string[] = [];
  const { validity } = model;
  if (plateVolts < validity.plateVolts.min || plateVolts > validity.plateVolts.max) {
    notes.push(`plate ${plateVolts.toFixed(1)} V outside ${validity.plateVolts.min}…${validity.plateVolts.max} V`);
  }
  if (gridVolts < validity.gridVolts.min || gridVolts > validity.gridVolts.max) {
    notes.push(`grid ${gridVolts.toFixed(2)} V outside ${validity.gridVolts.min}…${validity.gridVolts.max} V`);
  }
  if (model.parameters.kind === "koren-pentode" && validity.screenVolts) {
    if (screenVolts < validity.screenVolts.min || screenVolts > validity.screenVolts.max) {
      notes.push(`screen ${screenVolts.toFixed(1)} V outside ${validity.screenVolts.min}…${validity.screenVolts.max} V`);
    }
  }
  return notes;
}

/**
 * Plate, screen and grid current of a model at one point, scaled by the model's
 * currentScale (grid current is not scaled: it follows the grid, not the emission).
 * Outside the validity range the value is still returned, flagged `outsideValidity`.
 * Throws RangeError when a pentode point lacks screenVolts.
 * Example: evaluateTubeModel(tubeModelLibrary["12AU7"], { plateVolts: 250, gridVolts: -8.5 }).plateMilliamps ≈ 10.39
 */
export function evaluateTubeModel(model: TubeModel, point: ElectrodeVolts): ModelEvaluation {
  const screenVolts = requireScreenVolts(model, point);
  const plateAmps = model.currentScale * plateAmpsOf(model.parameters, point.plateVolts, point.gridVolts, screenVolts);
  const screenAmps = model.currentScale * screenAmpsOf(model.parameters, point.gridVolts, screenVolts);
  const gridAmps = gridAmpsFromPerveance(model.gridCurrentAmpsPerVolt1p5, point.gridVolts);
  const validityNotes = validityNotesFor(model, point.plateVolts, point.gridVolts, screenVolts);
  return {
    plateMilliamps: 1000 * plateAmps,
    screenMilliamps: 1000 * screenAmps,
    gridMilliamps: 1000 * gridAmps,
    outsideValidity: validityNotes.length > 0,
    validityNotes,
  };
}

/**
 * Grid current for a positive grid, Ig = k·Vg^1.5 (k from the parameter set), 0 for Vg ≤ 0.
 * Example: gridCurrentMilliamps(tubeModelLibrary["12AU7"], 1) → 0.35
 */
export function gridCurrentMilliamps(model: TubeModel, gridVolts: number): number {
  return 1000 * gridAmpsFromPerveance(model.gridCurrentAmpsPerVolt1p5, gridVolts);
}

/**
 * Transconductance gm = ∂Ip/∂Vg by central difference (±0.01 V), in µS, including currentScale.
 * Throws RangeError when a pentode point lacks screenVolts.
 * Example: transconductanceMicroSiemens(tubeModelLibrary["12AU7"], { plateVolts: 250, gridVolts: -8.5 }).microSiemens ≈ 2480
 */
export function transconductanceMicroSiemens(
  model: TubeModel,
  point: ElectrodeVolts,
): { microSiemens: number; outsideValidity: boolean } {
  const screenVolts = requireScreenVolts(model, point);
  const step = GRID_DIFFERENCE_STEP_VOLTS;
  const above = plateAmpsOf(model.parameters, point.plateVolts, point.gridVolts + step, screenVolts);
  const below = plateAmpsOf(model.parameters, point.plateVolts, point.gridVolts - step, screenVolts);
  const microSiemens = (1e6 * model.currentScale * (above - below)) / (2 * step);
  return {
    microSiemens,
    outsideValidity: validityNotesFor(model, point.plateVolts, point.gridVolts, screenVolts).length > 0,
  };
}

/**
 * Plate resistance rp = ∂Vp/∂Ip by central difference (±0.1 V; forward near 0 V), in ohms,
 * including currentScale. Infinity when the plate current does not rise with plate voltage
 * (a cut-off tube). Throws RangeError when a pentode point lacks screenVolts.
 * Example: plateResistanceOhms(tubeModelLibrary["12AU7"], { plateVolts: 250, gridVolts: -8.5 }).ohms ≈ 7250
 */
export function plateResistanceOhms(model: TubeModel, point: ElectrodeVolts): { ohms: number; outsideValidity: boolean } {
  const screenVolts = requireScreenVolts(model, point);
  const step = PLATE_DIFFERENCE_STEP_VOLTS;
  const lowerVolts = point.plateVolts - step > 0 ? point.plateVolts - step : point.plateVolts;
  const upperVolts = point.plateVolts + step;
  const slope =
    (model.currentScale *
      (plateAmpsOf(model.parameters, upperVolts, point.gridVolts, screenVolts) -
        plateAmpsOf(model.parameters, lowerVolts, point.gridVolts, screenVolts))) /
    (upperVolts - lowerVolts);
  return {
    ohms: slope > 0 ? 1 / slope : Number.POSITIVE_INFINITY,
    outsideValidity: validityNotesFor(model, point.plateVolts, point.gridVolts, screenVolts).length > 0,
  };
}

/**
 * Plate current, gm, rp and µ = gm·rp (Barkhausen) at one point.
 * Throws RangeError when a pentode point lacks screenVolts.
 * Example: smallSignalParameters(tubeModelLibrary["12AU7"], { plateVolts: 250, gridVolts: -8.5 }).mu ≈ 18
 */
export function smallSignalParameters(
  model: TubeModel,
  point: ElectrodeVolts,
): {
  plateMilliamps: number;
  transconductanceMicroSiemens: number;
  plateResistanceOhms: number;
  mu: number;
  outsideValidity: boolean;
} {
  const evaluation = evaluateTubeModel(model, point);
  const gm = transconductanceMicroSiemens(model, point).microSiemens;
  const rp = plateResistanceOhms(model, point).ohms;
  return {
    plateMilliamps: evaluation.plateMilliamps,
    transconductanceMicroSiemens: gm,
    plateResistanceOhms: rp,
    mu: (gm * 1e-6) * rp,
    outsideValidity: evaluation.outsideValidity,
  };
}

export type ScaleToTransconductanceResult =
  | { ok: true; scale: number; model: TubeModel; modelMicroSiemensBefore: number }
  | { ok: false; reason: string };

/**
 * Scales a model's plate and screen current so its gm at the test point equals a
 * measured gm (a worn or strong tube). Because gm is proportional to the current
 * scale, the new scale is old scale × measured / model gm. `scale` is the total
 * currentScale of the returned model.
 * Returns { ok: false } when the measurement is not positive or the model has no gm there.
 * Example: scaleModelToMeasuredTransconductance(tubeModelLibrary["12AU7"],
 *   { plateVolts: 250, gridVolts: -8.5 }, 1736).scale ≈ 0.70
 */
export function scaleModelToMeasuredTransconductance(
  model: TubeModel,
  testPoint: ElectrodeVolts,
  measuredMicroSiemens: number,
): ScaleToTransconductanceResult {
  if (!(measuredMicroSiemens > 0) || !Number.isFinite(measuredMicroSiemens)) {
    return { ok: false, reason: "measured transconductance must be a positive number" };
  }
  if (model.parameters.kind === "koren-pentode" && testPoint.screenVolts === undefined) {
    return { ok: false, reason: `${model.designation} is a pentode: the test point needs screenVolts` };
  }
  const before = transconductanceMicroSiemens(model, testPoint).microSiemens;
  if (!(before > 0)) return { ok: false, reason: "the model has no transconductance at the test point (cut off)" };
  const scale = (model.currentScale * measuredMicroSiemens) / before;
  return { ok: true, scale, model: { ...model, currentScale: scale }, modelMicroSiemensBefore: before };
}

/**
 * Least-squares fit of Koren's triode parameters (µ, ex, kg1, kp; kvb too when
 * options.fitKvb) to plate-curve points, with ml-levenberg-marquardt, starting from
 * `initial` (defaults: µ 20, ex 1.35, kg1 1000, kp 200, kvb 300). Residuals are
 * relative to each point's current (floored at 5 % of the largest, so cut-off points
 * count without dominating). Returns { ok: false, reason } on too few points,
 * divergence, or no convergence within the iteration cap.
 * Example: fitKorenTriode(SIX_SN7_FIT_POINTS) → { ok: true, parameters: { mu ≈ 21.2, exponent ≈ 1.28, kg1 ≈ 1281, kp ≈ 167, kvb: 300 } }
 */
export function fitKorenTriode(
  points: TriodeCurvePoint[],
  initial?: KorenTriodeStart,
  options?: FitKorenTriodeOptions,
): FitKorenTriodeResult {
  return fitKorenTriodeImpl(points, initial, options);
}

// ── The element contract the bistable solver works with ─────────────────────

/**
 * A tube as a circuit element. Voltages are relative to the cathode, currents in amps.
 * Contract the solver relies on: plate current is 0 for plate ≤ 0 and never falls as the
 * grid rises; screen current does not depend on plate voltage; grid current is 0 for a
 * grid at or below the cathode and rises with it.
 */
export interface TubeElement {
  designation: string;
  hasScreen: boolean;
  plateAmps(plateVolts: number, gridVolts: number, screenVolts: number): number;
  screenAmps(gridVolts: number, screenVolts: number): number;
  gridAmps(gridVolts: number): number;
  /** Set when gridAmps is exactly k·Vg^1.5 (k given here); lets the solver clamp grids in closed form. */
  gridPerveanceAmpsPerVolt1p5?: number;
  /** Set when screenAmps is exactly ampsPerVoltPower·(screen/µ + min(grid, 0))^exponent for a positive base (0 otherwise). */
  screenPowerLaw?: { mu: number; exponent: number; ampsPerVoltPower: number };
  outsideValidity(plateVolts: number, gridVolts: number, screenVolts: number): boolean;
  maxPlateWatts?: number;
}

/**
 * Wraps a parameter set as a circuit element (current scale included).
 * Example: tubeElementFromModel(tubeModelLibrary["12AU7"]).plateAmps(250, -8.5, 0) ≈ 0.01039
 */
export function tubeElementFromModel(model: TubeModel): TubeElement {
  const { parameters, currentScale, gridCurrentAmpsPerVolt1p5, validity } = model;
  // Local bindings keep the per-call path free of module-namespace lookups.
  const triodePlate = korenTriodePlateAmps;
  const pentodePlate = korenPentodePlateAmps;
  const pentodeScreen = korenPentodeScreenAmps;
  const gridLaw = gridAmpsFromPerveance;
  const isPentode = parameters.kind === "koren-pentode";
  const plateAmps =
    parameters.kind === "koren-triode"
      ? (plateVolts: number, gridVolts: number) => currentScale * triodePlate(parameters, plateVolts, gridVolts)
      : (plateVolts: number, gridVolts: number, screenVolts: number) =>
          currentScale * pentodePlate(parameters, plateVolts, screenVolts, gridVolts);
  const screenAmps =
    parameters.kind === "koren-pentode"
      ? (gridVolts: number, screenVolts: number) => currentScale * pentodeScreen(parameters, screenVolts, gridVolts)
      : () => 0;
  return {
    designation: model.designation,
    hasScreen: isPentode,
    plateAmps,
    screenAmps,
    gridAmps: (gridVolts) => gridLaw(gridCurrentAmpsPerVolt1p5, gridVolts),
    gridPerveanceAmpsPerVolt1p5: gridCurrentAmpsPerVolt1p5,
    screenPowerLaw:
      parameters.kind === "koren-pentode"
        ? { mu: parameters.mu, exponent: parameters.exponent, ampsPerVoltPower: currentScale / parameters.kg2 }
        : undefined,
    outsideValidity: (plateVolts, gridVolts, screenVolts) =>
      plateVolts < validity.plateVolts.min ||
      plateVolts > validity.plateVolts.max ||
      gridVolts < validity.gridVolts.min ||
      gridVolts > validity.gridVolts.max ||
      (isPentode &&
        validity.screenVolts !== undefined &&
        (screenVolts < validity.screenVolts.min || screenVolts > validity.screenVolts.max)),
    maxPlateWatts: model.maxPlateWatts,
  };
}
