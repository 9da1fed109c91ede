import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput, type GroupOutput } from '../../src/mechanics/group-model.js';
import { principal2, tresca3, vonMises2, vonMises6 } from '../../src/mechanics/principal.js';
import { baseDoc, compileOrThrow, planeRosetteDoc } from '../support/structures.js';
import { digits, type ReferenceCase } from './case.js';

const E = 210000, NU = 0.3;
const memo = new Map<string, GroupOutput>();
/** A 0/45/90 rosette on steel read under plane stress (sx, sy, txy) MPa, the readings by Hooke's law (common practice). */
export function rosetteUnder(sx: number, sy: number, txy: number): GroupOutput {
  const key = `${sx},${sy},${txy}`;
  let out = memo.get(key);
  if (out === undefined) {
    const exx = ((sx - NU * sy) / E) * 1e6, eyy = ((sy - NU * sx) / E) * 1e6, gxy = ((2 * (1 + NU) * txy) / E) * 1e6;
    out = createGroupOutput(3);
    evaluateGroup(compileOrThrow(planeRosetteDoc([0, 45, 90])).groups[0].model, Float64Array.of(exx, (exx + eyy + gxy) / 2, eyy), 20, Number.NaN, out);
    memo.set(key, out);
  }
  return out;
}

const MOHR = "Mohr's circles (common practice; e.g. J. M. Gere, Mechanics of Materials, plane stress chapter, from memory)";
const HOOKE = "plane-stress Hooke's law, the readings made from the stress (common practice)";
const VM = 'von Mises equivalent stress sqrt(((s1-s2)^2 + (s2-s3)^2 + (s3-s1)^2) / 2), in plane stress sqrt(sx^2 - sx sy + sy^2 + 3 txy^2) (common practice)';
const TRESCA = 'Tresca equivalent stress: the largest difference of principal stresses (common practice)';
const IN = 'max shear in plane (MPa)', ABS = 'max shear absolute (MPa)';

/** Plane states (sx, sy, txy) and their hand-worked in-plane and absolute max shear: (s1 - s2)/2; (s_max - s_min)/2 with s3 = 0. */
const SHEAR_STATES: Array<{ state: [number, number, number]; label: string; inPlane: number; abs: number }> = [
  { state: [100, 40, 0], label: 'same-sign principals 100, 40', inPlane: 30, abs: 50 },
  { state: [100, -40, 0], label: 'opposite-sign principals 100, -40', inPlane: 70, abs: 70 },
  { state: [0, 0, 55], label: 'pure shear 55', inPlane: 55, abs: 55 },
  // Centre -30, radius sqrt(30^2 + 20^2) = 36.056: s1 = 6.056, s2 = -66.056.
  { state: [-60, 0, 20], label: 'web panel -60, 0, 20', inPlane: Math.sqrt(30 * 30 + 20 * 20), abs: Math.sqrt(30 * 30 + 20 * 20) },
  // Both compressive: the absolute maximum is |s2| / 2.
  { state: [-60, -20, 0], label: 'both compressive -60, -20', inPlane: 20, abs: 30 },
];

export const STRESS_CASES: ReferenceCase[] = [
  ...SHEAR_STATES.flatMap(({ state: [sx, sy, txy], label, inPlane, abs }): ReferenceCase[] => [
    { quantity: IN, label, source: MOHR, expected: inPlane, tolerance: digits(9), actual: () => rosetteUnder(sx, sy, txy).maxShearInPlaneMPa },
    { quantity: ABS, label, source: MOHR, expected: abs, tolerance: digits(9), actual: () => rosetteUnder(sx, sy, txy).maxShearAbsMPa },
    { quantity: 'stress components, plane and single (MPa)', label: `${label}: s_xx`, source: HOOKE, expected: sx, tolerance: digits(9), actual: () => rosetteUnder(sx, sy, txy).stressMPa[0] },
    { quantity: 'stress components, plane and single (MPa)', label: `${label}: s_yy`, source: HOOKE, expected: sy, tolerance: digits(9), actual: () => rosetteUnder(sx, sy, txy).stressMPa[1] },
    { quantity: 'stress components, plane and single (MPa)', label: `${label}: t_xy`, source: HOOKE, expected: txy, tolerance: digits(9), actual: () => rosetteUnder(sx, sy, txy).stressMPa[5] },
  ]),
  { quantity: 'Tresca (MPa)', label: 'same-sign principals 100, 40: Tresca = s1 - 0', source: TRESCA, expected: 100, tolerance: digits(9), actual: () => rosetteUnder(100, 40, 0).trescaMPa },
  { quantity: 'Tresca (MPa)', label: 'principals 100, 0, -50', source: TRESCA, expected: 150, tolerance: digits(12), actual: () => tresca3(100, 0, -50) },
  { quantity: 'von Mises (MPa)', label: 'uniaxial 250', source: VM, expected: 250, tolerance: digits(12), actual: () => vonMises6(Float64Array.of(250, 0, 0, 0, 0, 0)) },
  { quantity: 'von Mises (MPa)', label: 'pure shear 100: sqrt(3) x 100', source: VM, expected: 100 * Math.sqrt(3), tolerance: digits(12), actual: () => vonMises2(0, 0, 100) },
  { quantity: 'von Mises (MPa)', label: 'plane 120, -40, 30', source: VM, expected: Math.sqrt(120 * 120 + 120 * 40 + 40 * 40 + 3 * 900), tolerance: digits(12), actual: () => vonMises2(120, -40, 30) },
  { quantity: 'principal stresses (MPa)', label: 'pure shear 100: s1', source: MOHR, expected: 100, tolerance: digits(12), actual: () => principal2(0, 0, 100, new Float64Array(3))[0] },
  { quantity: 'principal angle (deg)', label: 'pure shear 100: s1 at 45 degrees', source: MOHR, expected: 45, tolerance: digits(12), actual: () => principal2(0, 0, 100, new Float64Array(3))[2] },
  { quantity: 'principal angle (deg)', label: 'sx -50, sy 80: s1 at 90 degrees', source: MOHR, expected: 90, tolerance: digits(12), actual: () => principal2(-50, 80, 0, new Float64Array(3))[2] },
];

/**
 * A concrete cluster whose free strain is measured by an unstressed companion gauge with transverse
 * sensitivity. Every gauge reads total strain (a zero thermal-output curve characterised on a
 * zero-expansion reference), so the hand calculation is the transverse-sensitivity relation alone.
 */
const CONCRETE = { id: 'concrete', kind: 'isotropic', E_MPa: 33000, nu: 0.2, alpha_per_degC: 10e-6 };
const DIRS = [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [1, 0, 1]];
export const COMPANION_T0 = 20, COMPANION_T = 28.5; // dT 8.5 degC: free thermal strain 10e-6 x 8.5 = 85 microstrain
const KT = 0.02, NU0 = 0.285;
function gauge(id: string, ch: string, kt: number) {
  return {
    id, kind: 'embedded_resistance', channel: { logger: 'lg', channel: ch }, signal: { unit: 'microstrain' },
    zero_reading: 0, zero_temperature_degC: COMPANION_T0, ...(kt === 0 ? {} : { transverse_sensitivity: kt, transverse_calibration_nu: NU0 }),
    thermal_output: { coefficients_micro: [0], characterised_on_alpha_per_degC: 0 },
  };
}
export function companionCluster() {
  const gauges = [...DIRS.map((_, i) => gauge(`e${i}`, `c${i}`, 0)), gauge('free', 'cf', KT)];
  const doc = baseDoc([{
    id: 's', kind: 'solid_cluster', material: 'concrete', zone: 'z', location: 'bench',
    elements: DIRS.map((d, i) => ({ gauge: `e${i}`, direction: d })), companion_gauge: 'free',
  }], gauges, { materials: [CONCRETE] });
  return compileOrThrow(doc).groups[0].model;
}
// ASTM E251 definition of Kt: a gauge calibrated on a beam of Poisson ratio nu0 indicates
// (eps_a + Kt eps_t) / (1 - nu0 Kt). The companion is free: eps_a = eps_t = 85, so it reads
// 85 x 1.02 / 0.9943 = 87.19702 microstrain.
export const COMPANION_READS = (85 * 1.02) / 0.9943;
/** sigma_xx = 4 MPa: exx = 4 / 33000, eyy = ezz = -0.2 exx; each element reads n.eps.n plus the free 85. */
const EXX = (4 / 33000) * 1e6, EYY = -0.2 * EXX;
export const UNIAXIAL_READINGS = [EXX, EYY, EYY, (EXX + EYY) / 2, EYY, (EXX + EYY) / 2].map((e) => e + 85);
let clusterMemo: Map<string, GroupOutput> | null = null;
export function companionOutput(readings: number[]): GroupOutput {
  clusterMemo ??= new Map();
  const key = readings.join(',');
  let out = clusterMemo.get(key);
  if (out === undefined) {
    const g = companionCluster();
    out = createGroupOutput(g.m);
    evaluateGroup(g, Float64Array.from(readings), COMPANION_T, COMPANION_READS, out);
    clusterMemo.set(key, out);
  }
  return out;
}
const E251 = 'ASTM E251 transverse sensitivity on the companion; isotropic Hooke\'s law (common practice)';
const SOLID = 'stress components, solid (MPa)';
const C = ['xx', 'yy', 'zz', 'yz', 'xz', 'xy'];
STRESS_CASES.push(
  ...C.map((c, k): ReferenceCase => ({ quantity: SOLID, label: `free concrete cluster with its companion: s_${c}`, source: E251, expected: 0, tolerance: 1e-9, actual: () => companionOutput(DIRS.map(() => 85)).stressMPa[k] })),
  ...C.map((c, k): ReferenceCase => ({ quantity: SOLID, label: `uniaxial 4 MPa on the free strain: s_${c}`, source: E251, expected: k === 0 ? 4 : 0, tolerance: k === 0 ? digits(9) : 1e-9, actual: () => companionOutput(UNIAXIAL_READINGS).stressMPa[k] })),
);
