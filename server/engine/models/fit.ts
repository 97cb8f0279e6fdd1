import { levenbergMarquardt } from "ml-levenberg-marquardt";
import { korenTriodePlateAmps, type KorenTriodeParameters } from "./koren.ts";

export interface TriodeCurvePoint {
  plateVolts: number;
  gridVolts: number;
  plateMilliamps: number;
}

/** Starting values; defaults are a medium-µ triode (µ 20, ex 1.35, kg1 1000, kp 200, kvb 300). */
export type KorenTriodeStart = Partial<Omit<KorenTriodeParameters, "kind">>;

export interface FitKorenTriodeOptions {
  /** Fit kvb too (default false: Koren held kvb at 300 V² for most triodes, and few points cannot pin it). */
  fitKvb?: boolean;
  maxIterations?: number;
}

export type FitKorenTriodeResult =
  | {
      ok: true;
      parameters: KorenTriodeParameters;
      /** Root-mean-square of (model − point)/scale over the points; scale is the point's current, floored at 5 % of the largest. */
      rmsRelativeError: number;
      maxRelativeError: number;
      iterations: number;
    }
  | { ok: false; reason: string };

const DEFAULT_INITIAL = { mu: 20, exponent: 1.35, kg1: 1000, kp: 200, kvb: 300 };
/** Points below this fraction of the largest current are weighted as if they had this current. */
const SMALL_CURRENT_FLOOR_FRACTION = 0.05;
const FIT_ERROR_TOLERANCE = 1e-14;
/** The fit has converged when a whole round of iterations improves the squared error by less than this fraction. */
const FIT_CONVERGENCE_RELATIVE_IMPROVEMENT = 1e-9;
const ITERATIONS_PER_ROUND = 50;
const DEFAULT_FIT_ITERATION_CAP = 2000;
/** Step for the finite-difference Jacobian, in ln(parameter), i.e. a relative step. */
const LOG_PARAMETER_STEP = 1e-6;

/** Implements fitKorenTriode (documented in index.ts); returns { ok: false, reason } instead of throwing. */
export function fitKorenTriodeImpl(
  points: TriodeCurvePoint[],
  initial: KorenTriodeStart = {},
  options: FitKorenTriodeOptions = {},
): FitKorenTriodeResult {
  const fitKvb = options.fitKvb ?? false;
  const parameterCount = fitKvb ? 5 : 4;
  if (points.length < parameterCount) {
    return { ok: false, reason: `need at least ${parameterCount} points, got ${points.length}` };
  }
  for (const point of points) {
    if (![point.plateVolts, point.gridVolts, point.plateMilliamps].every(Number.isFinite) || point.plateMilliamps < 0) {
      return { ok: false, reason: "every point needs finite volts and a non-negative current" };
    }
  }
  const start = { ...DEFAULT_INITIAL, ...initial };
  if (![start.mu, start.exponent, start.kg1, start.kp, start.kvb].every((value) => value > 0)) {
    return { ok: false, reason: "initial parameters must all be positive" };
  }
  const largestMilliamps = Math.max(...points.map((point) => point.plateMilliamps));
  if (!(largestMilliamps > 0)) return { ok: false, reason: "all points have zero current" };
  const scaleMilliamps = points.map((point) => Math.max(point.plateMilliamps, SMALL_CURRENT_FLOOR_FRACTION * largestMilliamps));

  // Parameters are fitted as logarithms so they stay positive without box constraints.
  const toParameters = (logValues: number[]): KorenTriodeParameters => ({
    kind: "koren-triode",
    mu: Math.exp(logValues[0]),
    exponent: Math.exp(logValues[1]),
    kg1: Math.exp(logValues[2]),
    kp: Math.exp(logValues[3]),
    kvb: fitKvb ? Math.exp(logValues[4]) : start.kvb,
  });
  const modelAt = (logValues: number[]) => {
    const parameters = toParameters(logValues);
    return (index: number) => {
      const point = points[index];
      return (1000 * korenTriodePlateAmps(parameters, point.plateVolts, point.gridVolts)) / scaleMilliamps[index];
    };
  };
  const initialValues = [start.mu, start.exponent, start.kg1, start.kp, start.kvb].slice(0, parameterCount).map(Math.log);
  const data = {
    x: points.map((_, index) => index),
    y: points.map((point, index) => point.plateMilliamps / scaleMilliamps[index]),
  };
  const iterationCap = options.maxIterations ?? DEFAULT_FIT_ITERATION_CAP;
  // The library stops only on an absolute error target, so it runs in rounds until a round stops paying.
  let fitted = initialValues;
  let iterations = 0;
  let previousError = Number.POSITIVE_INFINITY;
  let converged = false;
  try {
    while (iterations < iterationCap) {
      const result = levenbergMarquardt(data, modelAt, {
        initialValues: fitted,
        maxIterations: Math.min(ITERATIONS_PER_ROUND, iterationCap - iterations),
        errorTolerance: FIT_ERROR_TOLERANCE,
        gradientDifference: LOG_PARAMETER_STEP,
        centralDifference: true,
        damping: 1e-2,
      });
      fitted = result.parameterValues;
      iterations += Math.max(1, result.iterations);
      const error = result.parameterError;
      if (!Number.isFinite(error)) return { ok: false, reason: "fit diverged to non-finite values" };
      if (error <= FIT_ERROR_TOLERANCE || previousError - error <= FIT_CONVERGENCE_RELATIVE_IMPROVEMENT * previousError) {
        converged = true;
        break;
      }
      previousError = error;
    }
  } catch (error) {
    return { ok: false, reason: `least-squares fit failed: ${(error as Error).message}` };
  }
  if (!converged) return { ok: false, reason: `fit did not converge within ${iterationCap} iterations` };
  const parameters = toParameters(fitted);
  const evaluate = modelAt(fitted);
  const relativeErrors = points.map((_, index) => evaluate(index) - data.y[index]);
  if (!relativeErrors.every(Number.isFinite)) return { ok: false, reason: "fit diverged to non-finite values" };
  const rmsRelativeError = Math.sqrt(relativeErrors.reduce((sum, error) => sum + error * error, 0) / points.length);
  const maxRelativeError = Math.max(...relativeErrors.map(Math.abs));
  return { ok: true, parameters, rmsRelativeError, maxRelativeError, iterations };
}
