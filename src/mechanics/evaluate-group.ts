import { bridgeStrainMicro, gaugeFactorAt } from './bridge.js';
import {
  GROUP_PLANE, GROUP_SOLID, SIGNAL_BRIDGE, SIGNAL_MICROSTRAIN, SIGNAL_VW_HZ,
  type ElementModel, type GroupModel, type GroupOutput,
} from './group-model.js';
import { principal2, principal3, tresca3, vonMises2, vonMises6 } from './principal.js';
import { applyPseudoInverse, countBits, pseudoInverseFor, residualSumOfSquares } from './reduction.js';
import { horner, vibratingWireDigits } from './thermal.js';

// Quality bits, in the order of QUALITY_FLAGS (src/model/quality.ts; a test keeps them in step).
export const BIT_TEMPERATURE_STALE = 1 << 0;
export const BIT_TEMPERATURE_MISSING = 1 << 1;
export const BIT_ELEMENT_MISSING = 1 << 2;
export const BIT_ELEMENT_OUT_OF_RANGE = 1 << 3;
export const BIT_RESIDUAL_HIGH = 1 << 4;
export const BIT_COMPANION_MISSING = 1 << 5;
export const BIT_UNDERDETERMINED = 1 << 6;

/** Gauge factor of a bridge element at tempC (its nominal one when tempC is NaN or it has no coefficient). */
export function elementGaugeFactorAt(el: ElementModel, tempC: number): number {
  return tempC === tempC && el.gfTempCoeff !== 0 ? gaugeFactorAt(el.gaugeFactor, el.gfTempCoeff, tempC, el.gfRefTempC) : el.gaugeFactor;
}

/** Indicated strain (microstrain) of one element from its raw reading; tempC may be NaN (no GF correction). */
export function indicatedStrainMicro(el: ElementModel, raw: number, tempC: number): number {
  return indicatedWithFactor(el, raw, elementGaugeFactorAt(el, tempC));
}

/** Indicated strain (microstrain) with the gauge factor already taken at the sample's temperature. */
export function indicatedWithFactor(el: ElementModel, raw: number, gaugeFactor: number): number {
  const signal = el.signal;
  if (signal === SIGNAL_MICROSTRAIN) return raw - el.zero;
  if (signal === SIGNAL_BRIDGE) return bridgeStrainMicro((raw - el.zero) * 1e-3, gaugeFactor, el.bridgeCode) * el.leadFactor;
  const digits = signal === SIGNAL_VW_HZ ? vibratingWireDigits(raw) : raw;
  return (digits - el.zero) * el.vwMicroPerDigit;
}

/**
 * Total strain along the element's observation row (microstrain): indicated strain less the
 * gauge's thermal output, plus the free expansion of the body the reading is relative to.
 */
export function totalStrainMicro(el: ElementModel, indicated: number, tempC: number, zeroTempC: number): number {
  return indicated - elementThermalOutputMicro(el, tempC, elementGaugeFactorAt(el, tempC)) + el.referenceExpansionMicroPerDegC * (tempC - zeroTempC);
}

/**
 * The gauge's thermal output at tempC, referenced to its zero-reading temperature, as this reading
 * shows it (microstrain; 0 without a curve). A bridge curve was recorded with the instrument set to
 * thermalOutputGaugeFactor: its relative resistance change is that factor times the curve, and the
 * reading converts it with the gauge factor at tempC, `gaugeFactorAtT`.
 */
export function elementThermalOutputMicro(el: ElementModel, tempC: number, gaugeFactorAtT: number): number {
  if (el.thermalOutput.length === 0) return 0;
  const curve = horner(el.thermalOutput, tempC) - el.thermalOutputAtZeroMicro;
  return el.thermalOutputGaugeFactor > 0 ? (curve * el.thermalOutputGaugeFactor) / gaugeFactorAtT : curve;
}

/**
 * One sample of one group: raw readings (one per element, NaN = missing) and the group
 * temperature (degC, NaN = missing) to mechanical strain, stress, principal values, equivalent
 * stresses, residual and quality bits. companionRaw is the companion gauge's reading (NaN if none).
 * Writes everything into `out`; allocates nothing (a never-seen subset of missing elements is the
 * one exception: its pseudo-inverse is computed once and cached).
 */
export function evaluateGroup(g: GroupModel, raw: Float64Array, tempC: number, companionRaw: number, out: GroupOutput): void {
  let flags = 0;
  let t = tempC;
  if (!(t === t)) {
    flags |= BIT_TEMPERATURE_MISSING;
    t = g.zeroTempC; // no thermal correction is possible; the flag says so
  }
  out.temperatureC = tempC;
  const dT = t - g.zeroTempC;

  // Free strain of the host: measured by an unstressed companion gauge when there is one,
  // otherwise alpha dT from the material (per element, projected on its row below).
  let freeStrain = Number.NaN;
  const comp = g.companion;
  if (comp !== null) {
    if (companionRaw === companionRaw && companionRaw >= comp.validMin && companionRaw <= comp.validMax) {
      // Its row sums to (1 + Kt) / (1 - nu0 Kt) on the free strain (transverse sensitivity of the companion).
      freeStrain = totalStrainMicro(comp, indicatedStrainMicro(comp, companionRaw, t), t, g.zeroTempC) / comp.rowNormalSum;
    } else flags |= BIT_COMPANION_MISSING;
  }

  const m = g.m;
  const ind = out.elementIndicatedMicro;
  const app = out.elementApparentMicro;
  const mech = out.elementMechanicalMicro;
  const w = out.work;
  const gfAt = w.gaugeFactor;
  const thermalAt = w.thermalMicro;
  // Temperature-only terms per element: gauge factor at t, and what temperature does to the
  // reading (thermal output, reference expansion, less the host's free strain). They depend on t
  // and the free strain alone, and a group's strain scans outnumber its temperature readings (10 Hz
  // against one every few seconds): kept from the sample before while both are the same.
  const sameTemperature = w.thermalFor === g && w.thermalT === t && (t !== 0 || 1 / t === 1 / w.thermalT)
    && (w.thermalFree === freeStrain || (w.thermalFree !== w.thermalFree && freeStrain !== freeStrain));
  if (!sameTemperature) {
    for (let i = 0; i < m; i++) {
      const el = g.elements[i];
      // Gauges of one batch share them, so a twin reuses the first one's values.
      const twin = el.thermalTwin;
      if (twin >= 0) {
        gfAt[i] = gfAt[twin];
        thermalAt[i] = thermalAt[twin];
        continue;
      }
      gfAt[i] = el.gfTempCoeff === 0 ? el.gaugeFactor : gaugeFactorAt(el.gaugeFactor, el.gfTempCoeff, t, el.gfRefTempC);
      const thermalOutput = elementThermalOutputMicro(el, t, gfAt[i]);
      const free = freeStrain === freeStrain ? el.rowNormalSum * freeStrain : el.hostExpansionMicroPerDegC * dT;
      thermalAt[i] = el.referenceExpansionMicroPerDegC * dT - thermalOutput - free;
    }
    w.thermalFor = g;
    w.thermalT = t;
    w.thermalFree = freeStrain;
  }
  let missing = 0;
  for (let i = 0; i < m; i++) {
    const el = g.elements[i];
    const r = raw[i];
    if (r - r !== 0) { // NaN or +-Infinity
      missing |= 1 << i;
      flags |= BIT_ELEMENT_MISSING;
      ind[i] = app[i] = Number.NaN;
      mech[i] = 0;
      continue;
    }
    if (r < el.validMin || r > el.validMax) {
      missing |= 1 << i;
      flags |= BIT_ELEMENT_OUT_OF_RANGE;
      ind[i] = app[i] = Number.NaN;
      mech[i] = 0;
      continue;
    }
    const indicated = indicatedWithFactor(el, r, gfAt[i]);
    // Stress-producing strain = total strain - free strain, both along this element's row:
    // total = indicated - thermal output + reference expansion; free = companion or alpha dT.
    const mechanical = indicated + thermalAt[i];
    ind[i] = indicated;
    mech[i] = mechanical;
    app[i] = -thermalAt[i]; // what temperature alone made this element read
  }

  const p = missing === 0 ? g.reduction.full : pseudoInverseFor(g.reduction, missing);
  if (p === null) {
    out.flags = flags | BIT_UNDERDETERMINED;
    clearResults(out);
    for (let i = 0; i < m; i++) if ((missing & (1 << i)) !== 0) mech[i] = Number.NaN;
    return;
  }
  const x = applyPseudoInverse(p, mech, m, g.n, w.x);
  // Without redundancy the fit is exact: skip the residual (NaN says "not applicable").
  out.residualRmsMicro = out.fitStdErrorMicro = Number.NaN;
  if (m > g.n) {
    const sum = residualSumOfSquares(g.reduction.obs, mech, x, m, g.n, missing, out.elementResidualMicro);
    const used = m - countBits(missing);
    if (used > g.n) {
      out.residualRmsMicro = Math.sqrt(sum / used);
      // The standard error estimates one element's noise whatever the redundancy: the limit compares it.
      out.fitStdErrorMicro = Math.sqrt(sum / (used - g.n));
    }
  }
  if (out.fitStdErrorMicro > g.fitStdErrorLimitMicro) flags |= BIT_RESIDUAL_HIGH;
  for (let i = 0; i < m; i++) if ((missing & (1 << i)) !== 0) mech[i] = Number.NaN;
  out.flags = flags;

  if (g.kind === GROUP_PLANE) finishPlane(g, x, out);
  else if (g.kind === GROUP_SOLID) finishSolid(g, x, out);
  else finishUniaxial(g, x, out);
}

function finishPlane(g: GroupModel, x: Float64Array, out: GroupOutput): void {
  const q = g.stiffness;
  const sx = (q[0] * x[0] + q[1] * x[1] + q[2] * x[2]) * 1e-6;
  const sy = (q[3] * x[0] + q[4] * x[1] + q[5] * x[2]) * 1e-6;
  const txy = (q[6] * x[0] + q[7] * x[1] + q[8] * x[2]) * 1e-6;
  const e = out.strainMicro;
  const s = out.stressMPa;
  e[0] = x[0]; e[1] = x[1]; e[5] = x[2];
  e[2] = (g.zzCompliance[0] * sx + g.zzCompliance[1] * sy + g.zzCompliance[2] * txy) * 1e6;
  e[3] = e[4] = Number.NaN;
  s[0] = sx; s[1] = sy; s[5] = txy;
  s[2] = s[3] = s[4] = Number.NaN; // plane stress: zero by assumption, not measured
  // principal2 and vonMises2 (principal.ts), written out here: the same expressions, without the
  // calls and the round trip through out.principalMPa (7 % faster in bench:core).
  const c = 0.5 * (sx + sy);
  const dd = 0.5 * (sx - sy);
  const r = Math.sqrt(dd * dd + txy * txy);
  const s1 = c + r;
  const s2 = c - r;
  let angle = (0.5 * Math.atan2(txy, dd) * 180) / Math.PI;
  if (angle <= -90) angle += 180;
  const pr = out.principalMPa;
  pr[0] = s1;
  pr[1] = s2;
  pr[2] = Number.NaN;
  out.principalAngleDeg = angle;
  const d = out.principalDir1;
  d[0] = d[1] = d[2] = Number.NaN;
  out.vonMisesMPa = Math.sqrt(sx * sx - sx * sy + sy * sy + 3 * txy * txy);
  out.trescaMPa = tresca3(s1, s2, 0); // the free surface's zero normal stress is the third principal
  out.maxShearInPlaneMPa = 0.5 * (s1 - s2);
  out.maxShearAbsMPa = 0.5 * out.trescaMPa;
  out.axialStrainMicro = out.axialStressMPa = Number.NaN;
  ratios(g, out, Math.max(s1, 0), Math.max(-s2, 0));
}

function finishSolid(g: GroupModel, x: Float64Array, out: GroupOutput): void {
  const c = g.stiffness;
  const s = out.stressMPa;
  const e = out.strainMicro;
  for (let i = 0; i < 6; i++) {
    let acc = 0;
    for (let j = 0; j < 6; j++) acc += c[i * 6 + j] * x[j];
    s[i] = acc * 1e-6;
    e[i] = x[i];
  }
  const pr = out.principalMPa;
  principal3(s, pr, out.work.dirs, out.work.w9);
  out.principalDir1[0] = out.work.dirs[0];
  out.principalDir1[1] = out.work.dirs[1];
  out.principalDir1[2] = out.work.dirs[2];
  out.principalAngleDeg = Number.NaN;
  out.vonMisesMPa = vonMises6(s);
  out.trescaMPa = pr[0] - pr[2];
  out.maxShearInPlaneMPa = Number.NaN; // a solid cluster has no privileged plane
  out.maxShearAbsMPa = 0.5 * out.trescaMPa;
  out.axialStrainMicro = out.axialStressMPa = Number.NaN;
  ratios(g, out, Math.max(pr[0], 0), Math.max(-pr[2], 0));
}

function finishUniaxial(g: GroupModel, x: Float64Array, out: GroupOutput): void {
  const sigma = g.stiffness[0] * x[0] * 1e-6;
  out.strainMicro.fill(Number.NaN);
  out.stressMPa.fill(Number.NaN);
  out.strainMicro[0] = x[0];
  out.stressMPa[0] = sigma;
  out.axialStrainMicro = x[0];
  out.axialStressMPa = sigma;
  out.principalMPa.fill(Number.NaN);
  out.principalDir1.fill(Number.NaN);
  out.principalAngleDeg = Number.NaN;
  out.vonMisesMPa = out.trescaMPa = Math.abs(sigma);
  // Uniaxial stress on the surface: principal values sigma and 0 in the plane, 0 out of it.
  out.maxShearInPlaneMPa = out.maxShearAbsMPa = 0.5 * Math.abs(sigma);
  ratios(g, out, Math.max(sigma, 0), Math.max(-sigma, 0));
}

function ratios(g: GroupModel, out: GroupOutput, tension: number, compression: number): void {
  out.ratioVonMisesToYield = out.vonMisesMPa / g.yieldMPa; // NaN when no capacity is configured
  out.ratioTensionToTensile = tension / g.tensileMPa;
  out.ratioCompressionToCompressive = compression / g.compressiveMPa;
}

function clearResults(out: GroupOutput): void {
  out.strainMicro.fill(Number.NaN);
  out.stressMPa.fill(Number.NaN);
  out.principalMPa.fill(Number.NaN);
  out.principalDir1.fill(Number.NaN);
  out.principalAngleDeg = out.vonMisesMPa = out.trescaMPa = out.maxShearInPlaneMPa = out.maxShearAbsMPa = Number.NaN;
  out.axialStrainMicro = out.axialStressMPa = out.residualRmsMicro = out.fitStdErrorMicro = Number.NaN;
  out.ratioVonMisesToYield = out.ratioTensionToTensile = out.ratioCompressionToCompressive = Number.NaN;
}
