/**
 * EN 1993-1-9 fatigue strength curves (section 7.1, figures 7.1 and 7.2), in design form: the
 * stress range is multiplied by gamma_Ff and the strength divided by gamma_Mf.
 *
 * Direct stress: m = 3 up to 5e6 cycles, where the curve reaches the constant-amplitude fatigue
 * limit delta_sigma_D = (2/5)^(1/3) delta_sigma_C (0.737 to three digits); m = 5 from there to 1e8
 * cycles, where it reaches the cut-off delta_sigma_L = (5/100)^(1/5) delta_sigma_D (0.549). The
 * exact ratios keep the curve continuous at its knees; the standard prints them rounded.
 * Shear: m = 5 up to 1e8 cycles, cut-off delta_tau_L = (2/100)^(1/5) delta_tau_C (0.457).
 * Below the cut-off a range does no damage.
 */

/** Detail categories of EN 1993-1-9 tables 8.1 to 8.10 for direct stress, MPa at 2e6 cycles. */
export const DIRECT_STRESS_CATEGORIES_MPA = [160, 140, 125, 112, 100, 90, 80, 71, 63, 56, 50, 45, 40, 36] as const;
/** Detail categories for shear stress (EN 1993-1-9 table 8.1, 8.5), MPa at 2e6 cycles. */
export const SHEAR_STRESS_CATEGORIES_MPA = [100, 80] as const;

export const N_REFERENCE = 2e6;
export const N_KNEE = 5e6;
export const N_CUTOFF = 1e8;

export type SnKind = 'direct' | 'shear';

/** A curve with its partial factors folded in, built once per detail. Plain numbers only. */
export interface SnCurve {
  kind: SnKind;
  categoryMPa: number;
  gammaFf: number;
  gammaMf: number;
  /** Constant-amplitude limit, MPa (direct stress; for shear equal to the cut-off's knee at 1e8, unused). */
  limitDMPa: number;
  /** Cut-off limit, MPa: ranges below do no damage. */
  cutoffMPa: number;
}

export const RATIO_D_TO_C = Math.pow(N_REFERENCE / N_KNEE, 1 / 3);
export const RATIO_L_TO_D = Math.pow(N_KNEE / N_CUTOFF, 1 / 5);
export const RATIO_SHEAR_L_TO_C = Math.pow(N_REFERENCE / N_CUTOFF, 1 / 5);

export function snCurve(kind: SnKind, categoryMPa: number, gammaFf = 1, gammaMf = 1): SnCurve {
  if (!(categoryMPa > 0) || !(gammaFf > 0) || !(gammaMf > 0)) throw new RangeError('category and partial factors must be positive');
  if (kind === 'direct') {
    const d = RATIO_D_TO_C * categoryMPa;
    return { kind, categoryMPa, gammaFf, gammaMf, limitDMPa: d, cutoffMPa: RATIO_L_TO_D * d };
  }
  return { kind, categoryMPa, gammaFf, gammaMf, limitDMPa: RATIO_SHEAR_L_TO_C * categoryMPa, cutoffMPa: RATIO_SHEAR_L_TO_C * categoryMPa };
}

/**
 * Cycles to failure for a stress range (MPa, as counted at the detail, before gamma_Ff), with the
 * partial factors: Infinity below the cut-off. Pure; allocates nothing.
 */
export function cyclesToFailure(c: SnCurve, rangeMPa: number): number {
  const design = c.gammaFf * rangeMPa * c.gammaMf; // gamma_Ff * range against strength / gamma_Mf
  if (!(design > 0)) return Infinity;
  if (c.kind === 'direct') {
    if (design >= c.limitDMPa) return N_REFERENCE * Math.pow(c.categoryMPa / design, 3);
    if (design >= c.cutoffMPa) return N_KNEE * Math.pow(c.limitDMPa / design, 5);
    return Infinity;
  }
  if (design >= c.cutoffMPa) return N_REFERENCE * Math.pow(c.categoryMPa / design, 5);
  return Infinity;
}

/** Miner's rule: the damage of `count` cycles of one range (count 0.5 for a half cycle). */
export function damageOf(c: SnCurve, rangeMPa: number, count: number): number {
  const n = cyclesToFailure(c, rangeMPa);
  return n === Infinity ? 0 : count / n;
}

/**
 * The strength curve's stress range at `cycles` (MPa, in terms of the counted range, i.e. divided
 * by gamma_Ff * gamma_Mf), for plotting; NaN beyond the cut-off's cycle count.
 */
export function rangeAtCycles(c: SnCurve, cycles: number): number {
  const f = 1 / (c.gammaFf * c.gammaMf);
  if (c.kind === 'direct') {
    if (cycles <= N_KNEE) return f * c.categoryMPa * Math.pow(N_REFERENCE / cycles, 1 / 3);
    if (cycles <= N_CUTOFF) return f * c.limitDMPa * Math.pow(N_KNEE / cycles, 1 / 5);
    return f * c.cutoffMPa;
  }
  if (cycles <= N_CUTOFF) return f * c.categoryMPa * Math.pow(N_REFERENCE / cycles, 1 / 5);
  return f * c.cutoffMPa;
}
