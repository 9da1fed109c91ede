import { bridgeOutputRatio, gaugeFactorAt } from './bridge.js';
import { elementGaugeFactorAt, elementThermalOutputMicro } from './evaluate-group.js';
import {
  GROUP_PLANE, GROUP_SOLID, SIGNAL_BRIDGE, SIGNAL_MICROSTRAIN, SIGNAL_VW_HZ,
  type ElementModel, type GroupModel,
} from './group-model.js';
import { invertSquare } from './stiffness.js';

/**
 * The mechanics run backwards: from a known stress state and temperature to the raw readings a
 * group's gauges would give. Used by the simulator (ground truth) and by the round-trip tests;
 * never by the live path. Mirrors evaluate-group.ts step by step.
 */

/**
 * Mechanical strain (microstrain) of the group's unknowns for a stress in the group's own space:
 * plane [sx, sy, txy], solid Voigt 6-vector, uniaxial [sigma] (MPa). Writes into out (n). Returns out.
 */
export function strainFromStress(g: GroupModel, stress: ArrayLike<number>, out: Float64Array): Float64Array {
  if (g.kind === GROUP_PLANE || g.kind === GROUP_SOLID) {
    // Solve stiffness * x = stress by the compliance: the stiffness was inverted from it, so invert back.
    const n = g.n;
    const inv = invertSquare(g.stiffness, n);
    for (let i = 0; i < n; i++) {
      let acc = 0;
      for (let j = 0; j < n; j++) acc += inv[i * n + j] * stress[j];
      out[i] = acc * 1e6;
    }
    return out;
  }
  out[0] = (stress[0] / g.stiffness[0]) * 1e6;
  return out;
}

/** Raw reading of one element whose indicated strain is `indicated` microstrain, at tempC. */
export function rawFromIndicated(el: ElementModel, indicated: number, tempC: number): number {
  if (el.signal === SIGNAL_MICROSTRAIN) return indicated + el.zero;
  if (el.signal === SIGNAL_BRIDGE) {
    const gf = gaugeFactorAt(el.gaugeFactor, el.gfTempCoeff, tempC, el.gfRefTempC);
    return bridgeOutputRatio(indicated / el.leadFactor, gf, el.bridgeCode) * 1e3 + el.zero;
  }
  const digits = indicated / el.vwMicroPerDigit + el.zero;
  return el.signal === SIGNAL_VW_HZ ? Math.sqrt(digits * 1000) : digits;
}

/** Indicated strain of an element whose TOTAL strain along its row is `total` (inverse of totalStrainMicro). */
export function indicatedFromTotal(el: ElementModel, total: number, tempC: number, zeroTempC: number): number {
  const to = elementThermalOutputMicro(el, tempC, elementGaugeFactorAt(el, tempC));
  return total + to - el.referenceExpansionMicroPerDegC * (tempC - zeroTempC);
}

/**
 * Raw readings (out, m) of every element for a stress state (group space, MPa) at tempC. The host's
 * free strain is alpha dT, or `freeStrainMicro` when finite (a companion-gauge group: shrinkage and
 * thermal strain together). `extraMechanicalMicro` (m, optional) adds a per-element error, e.g. a
 * debonding drift.
 */
export function readingsFromStress(
  g: GroupModel, stress: ArrayLike<number>, tempC: number, freeStrainMicro: number, out: Float64Array,
  extraMechanicalMicro?: ArrayLike<number>,
): Float64Array {
  const x = strainFromStress(g, stress, new Float64Array(g.n));
  const dT = tempC - g.zeroTempC;
  const obs = g.reduction.obs;
  for (let i = 0; i < g.m; i++) {
    const el = g.elements[i];
    let mech = 0;
    for (let j = 0; j < g.n; j++) mech += obs[i * g.n + j] * x[j];
    if (extraMechanicalMicro) mech += extraMechanicalMicro[i];
    const free = freeStrainMicro === freeStrainMicro ? el.rowNormalSum * freeStrainMicro : el.hostExpansionMicroPerDegC * dT;
    out[i] = rawFromIndicated(el, indicatedFromTotal(el, mech + free, tempC, g.zeroTempC), tempC);
  }
  return out;
}

/** Raw reading of an unstressed companion gauge seeing free strain freeStrainMicro at tempC. */
export function companionReading(g: GroupModel, freeStrainMicro: number, tempC: number): number {
  const el = g.companion;
  if (el === null) return Number.NaN;
  // Free strain in every direction: its row (transverse sensitivity included) sums it as rowNormalSum.
  return rawFromIndicated(el, indicatedFromTotal(el, el.rowNormalSum * freeStrainMicro, tempC, g.zeroTempC), tempC);
}
