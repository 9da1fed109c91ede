/**
 * Wheatstone-bridge equations: from the change in bridge output ratio to indicated strain.
 *
 * Sign convention: vr = (Vout/Vexc)_now - (Vout/Vexc)_zero in V/V, positive when the active
 * arm is in tension. Arrangements:
 * - quarter: one active gauge. Exact: vr = x / (4 + 2x) with x = GF eps, hence
 *   eps = 4 vr / (GF (1 - 2 vr)). The (1 - 2 vr) term is the quarter bridge's non-linearity.
 * - half: two active gauges in adjacent arms with equal and opposite strain (bending pair):
 *   linear, eps = 2 vr / GF.
 * - full: four active gauges, alternating sign (bending): linear, eps = vr / GF.
 * All functions are pure and return microstrain.
 */
export type BridgeArrangement = 'quarter' | 'half' | 'full';

/** Arrangement code used in compiled (numeric) form: quarter 0, half 1, full 2. */
export const BRIDGE_CODE: Readonly<Record<BridgeArrangement, number>> = { quarter: 0, half: 1, full: 2 };

/** Indicated strain in microstrain from vr (V/V) and the gauge factor, by arrangement code. */
export function bridgeStrainMicro(vr: number, gaugeFactor: number, arrangementCode: number): number {
  if (arrangementCode === 0) return (4e6 * vr) / (gaugeFactor * (1 - 2 * vr));
  if (arrangementCode === 1) return (2e6 * vr) / gaugeFactor;
  return (1e6 * vr) / gaugeFactor;
}

/** Inverse of bridgeStrainMicro: vr (V/V) produced by an indicated strain (microstrain). */
export function bridgeOutputRatio(strainMicro: number, gaugeFactor: number, arrangementCode: number): number {
  const x = gaugeFactor * strainMicro * 1e-6;
  if (arrangementCode === 0) return x / (4 + 2 * x);
  if (arrangementCode === 1) return x / 2;
  return x;
}

/**
 * Lead-wire desensitisation: leads of resistance `leadOhm` in series with a gauge of `gaugeOhm`
 * in the active arm make the bridge see a smaller relative change, by gaugeOhm / (gaugeOhm + leadOhm).
 * Returns the factor that restores the true strain: 1 + leadOhm / gaugeOhm.
 */
export function leadWireFactor(leadOhm: number, gaugeOhm: number): number {
  return 1 + leadOhm / gaugeOhm;
}

/**
 * Gauge factor at temperature tempC, changing linearly from gfRef at refTempC with
 * coefficient perDegC (fractional change per degC, e.g. 0.0001 for +1 %/100 degC).
 */
export function gaugeFactorAt(gfRef: number, perDegC: number, tempC: number, refTempC: number): number {
  return gfRef * (1 + perDegC * (tempC - refTempC));
}
