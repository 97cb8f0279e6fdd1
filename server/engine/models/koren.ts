/**
 * Koren's vacuum-tube equations, as published in Norman Koren, "Improved vacuum
 * tube models for SPICE simulations" (Glass Audio 1996, revised on his site to
 * 2003). All voltages are relative to the cathode; currents are in amps.
 */

export interface KorenTriodeParameters {
  kind: "koren-triode";
  /** Amplification factor µ. */
  mu: number;
  /** Space-charge exponent (Koren's EX). */
  exponent: number;
  /** Perveance scale, V^ex / A (Koren's KG1). */
  kg1: number;
  /** Knee sharpness of the low-current region, dimensionless (Koren's KP). */
  kp: number;
  /** Plate-voltage knee, volts² (Koren's KVB). */
  kvb: number;
}

export interface KorenPentodeParameters {
  kind: "koren-pentode";
  mu: number;
  exponent: number;
  kg1: number;
  /** Screen-current scale, V^ex / A (Koren's KG2). */
  kg2: number;
  kp: number;
  /** Plate knee voltage in volts (the atan knee term). */
  kvb: number;
}

export type KorenParameters = KorenTriodeParameters | KorenPentodeParameters;

/** ln(1 + e^x) without overflow for large x or underflow loss for very negative x. Example: softplus(0) = ln 2. */
export function softplus(x: number): number {
  return x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x));
}

/**
 * Koren triode plate current:
 * E1 = (Vp/kp)·ln(1 + exp(kp·(1/µ + Vg/sqrt(kvb + Vp²)))),
 * Ip = (E1^ex / kg1)·(1 + sgn E1), i.e. 2·E1^ex/kg1 for E1 > 0 and 0 otherwise.
 * Never throws; a non-positive plate voltage gives 0.
 * Example: korenTriodePlateAmps({ kind: "koren-triode", mu: 21.5, exponent: 1.3, kg1: 1180, kp: 84, kvb: 300 }, 250, -8.5) ≈ 0.01039
 */
export function korenTriodePlateAmps(parameters: KorenTriodeParameters, plateVolts: number, gridVolts: number): number {
  if (!(plateVolts > 0)) return 0;
  const drive = parameters.kp * (1 / parameters.mu + gridVolts / Math.sqrt(parameters.kvb + plateVolts * plateVolts));
  const e1 = (plateVolts / parameters.kp) * softplus(drive);
  if (!(e1 > 0)) return 0;
  return (2 * Math.pow(e1, parameters.exponent)) / parameters.kg1;
}

/**
 * Koren pentode plate current:
 * E1 = (Vg2/kp)·ln(1 + exp(kp·(1/µ + Vg1/Vg2))),
 * Ip = (E1^ex / kg1)·(1 + sgn E1)·atan(Vp/kvb).
 * A non-positive plate or screen voltage gives 0 (the equation would go negative). Never throws.
 * Example: korenPentodePlateAmps(EL34 set { mu: 11, exponent: 1.35, kg1: 650, kg2: 4200, kp: 60, kvb: 24 }, 250, 250, -13.5) ≈ 0.0970
 */
export function korenPentodePlateAmps(
  parameters: KorenPentodeParameters,
  plateVolts: number,
  screenVolts: number,
  gridVolts: number,
): number {
  if (!(plateVolts > 0) || !(screenVolts > 0)) return 0;
  const drive = parameters.kp * (1 / parameters.mu + gridVolts / screenVolts);
  const e1 = (screenVolts / parameters.kp) * softplus(drive);
  if (!(e1 > 0)) return 0;
  return ((2 * Math.pow(e1, parameters.exponent)) / parameters.kg1) * Math.atan(plateVolts / parameters.kvb);
}

/**
 * Koren pentode screen current: Ig2 = (Vg2/µ + Vg1)^ex / kg2 for a positive base, else 0.
 * Assumption beyond Koren: for a positive grid (outside every fitted range) Vg1 is taken
 * as 0 here, so the current stays continuous as the screen voltage falls to 0 (the
 * published form would jump there). It does not depend on plate voltage, which the
 * bistable solver relies on. Never throws.
 * Example: korenPentodeScreenAmps(EL34 set, 250, -13.5) ≈ 0.00478
 */
export function korenPentodeScreenAmps(parameters: KorenPentodeParameters, screenVolts: number, gridVolts: number): number {
  if (!(screenVolts > 0)) return 0;
  const base = screenVolts / parameters.mu + Math.min(gridVolts, 0);
  if (!(base > 0)) return 0;
  return Math.pow(base, parameters.exponent) / parameters.kg2;
}

/** Positive-grid current law Ig = k·Vg^1.5 for Vg > 0, 0 otherwise. Example: gridAmpsFromPerveance(0.35e-3, 4) = 0.0028. */
export function gridAmpsFromPerveance(ampsPerVolt1p5: number, gridVolts: number): number {
  return gridVolts > 0 ? ampsPerVolt1p5 * gridVolts * Math.sqrt(gridVolts) : 0;
}
