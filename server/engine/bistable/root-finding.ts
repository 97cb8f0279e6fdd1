/** Raised inside the solver when an iteration cap is hit or a bracket is lost; caught at the public entry. */
export class SolverError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "SolverError";
  }
}

const MACHINE_EPSILON = 2.220446049250313e-16;
/** Doubling steps allowed when widening a bracket around a guess. */
const MAX_BRACKET_EXPANSIONS = 80;

/**
 * Brent's method on a bracket [a, b] whose ends have opposite signs (fa, fb given).
 * Stops when the bracket is narrower than `tolerance` (absolute, in x), or at a point where
 * |f| ≤ `residualTolerance` (default 0: only an exact zero). When |f'| ≥ s everywhere, a
 * residualTolerance of at most s·tolerance puts that point within `tolerance` of the root as
 * well, and it often comes one or two evaluations before the bracket closes.
 * Throws SolverError when the bracket is invalid or the iteration cap is hit.
 */
export function brentRoot(
  f: (x: number) => number,
  a: number,
  b: number,
  fa: number,
  fb: number,
  tolerance: number,
  maxIterations: number,
  label: string,
  residualTolerance = 0,
): number {
  if (fa === 0) return a;
  if (fb === 0) return b;
  // Compare signs, not the product, which underflows to zero for tiny values.
  if (!((fa < 0 && fb > 0) || (fa > 0 && fb < 0))) throw new SolverError(`${label}: root not bracketed (${fa}, ${fb})`);
  let c = a;
  let fc = fa;
  let step = b - a;
  let previousStep = step;
  for (let iteration = 0; iteration < maxIterations; iteration++) {
    if ((fb > 0 && fc > 0) || (fb < 0 && fc < 0)) {
      c = a;
      fc = fa;
      step = b - a;
      previousStep = step;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const halfTolerance = 2 * MACHINE_EPSILON * Math.abs(b) + 0.5 * tolerance;
    const midpointOffset = 0.5 * (c - b);
    if (Math.abs(midpointOffset) <= halfTolerance || Math.abs(fb) <= residualTolerance) return b;
    if (Math.abs(previousStep) >= halfTolerance && Math.abs(fa) > Math.abs(fb)) {
      // Inverse quadratic interpolation, or secant when only two distinct points exist.
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * midpointOffset * s;
        q = 1 - s;
      } else {
        const qa = fa / fc;
        const rb = fb / fc;
        p = s * (2 * midpointOffset * qa * (qa - rb) - (b - a) * (rb - 1));
        q = (qa - 1) * (rb - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      const limitInterpolation = 3 * midpointOffset * q - Math.abs(halfTolerance * q);
      const limitPrevious = Math.abs(previousStep * q);
      if (2 * p < Math.min(limitInterpolation, limitPrevious)) {
        previousStep = step;
        step = p / q;
      } else {
        step = midpointOffset;
        previousStep = step;
      }
    } else {
      step = midpointOffset;
      previousStep = step;
    }
    a = b;
    fa = fb;
    b += Math.abs(step) > halfTolerance ? step : midpointOffset > 0 ? halfTolerance : -halfTolerance;
    fb = f(b);
    if (!Number.isFinite(fb)) throw new SolverError(`${label}: function is not finite at ${b}`);
  }
  throw new SolverError(`${label}: no convergence in ${maxIterations} iterations`);
}

/**
 * Root of a monotone function on [lo, hi] (`increasing` says which way it runs; the
 * caller guarantees a sign change over the interval). A guess inside the interval is
 * used to find a narrow bracket first, which is cheap when consecutive solves move little.
 */
export function monotoneRoot(
  f: (x: number) => number,
  lo: number,
  hi: number,
  increasing: boolean,
  guess: number | undefined,
  guessStep: number,
  tolerance: number,
  maxIterations: number,
  label: string,
): number {
  if (guess !== undefined && guess > lo && guess < hi && guessStep > 0) {
    const fGuess = f(guess);
    if (fGuess === 0) return guess;
    const rootIsAbove = (fGuess < 0) === increasing;
    let near = guess;
    let fNear = fGuess;
    let stride = guessStep;
    for (let expansion = 0; expansion < MAX_BRACKET_EXPANSIONS; expansion++) {
      const far = rootIsAbove ? Math.min(hi, near + stride) : Math.max(lo, near - stride);
      const fFar = f(far);
      if (fFar === 0) return far;
      if (fFar > 0 !== fNear > 0) {
        return rootIsAbove
          ? brentRoot(f, near, far, fNear, fFar, tolerance, maxIterations, label)
          : brentRoot(f, far, near, fFar, fNear, tolerance, maxIterations, label);
      }
      if (far === hi || far === lo) {
        throw new SolverError(`${label}: no sign change between the guess and the interval end`);
      }
      near = far;
      fNear = fFar;
      stride *= 2;
    }
  }
  return brentRoot(f, lo, hi, f(lo), f(hi), tolerance, maxIterations, label);
}

/** Golden-section search for the maximum of f on [a, b]; returns the best x seen. */
export function goldenSectionMaximum(
  f: (x: number) => number,
  a: number,
  b: number,
  tolerance: number,
  maxIterations: number,
): { x: number; value: number } {
  const inverseGolden = (Math.sqrt(5) - 1) / 2;
  let x1 = b - inverseGolden * (b - a);
  let x2 = a + inverseGolden * (b - a);
  let f1 = f(x1);
  let f2 = f(x2);
  for (let iteration = 0; iteration < maxIterations && b - a > tolerance; iteration++) {
    if (f1 < f2) {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + inverseGolden * (b - a);
      f2 = f(x2);
    } else {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - inverseGolden * (b - a);
      f1 = f(x1);
    }
  }
  // Reaching the cap still leaves a usable best point; callers only use it to look for a sign change.
  return f1 > f2 ? { x: x1, value: f1 } : { x: x2, value: f2 };
}
