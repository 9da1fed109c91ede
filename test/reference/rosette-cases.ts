import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput, type GroupOutput } from '../../src/mechanics/group-model.js';
import { compileOrThrow, planeRosetteDoc } from '../support/structures.js';
import { digits, type ReferenceCase } from './case.js';

/** Rosette reduction cases worked from closed forms (steel, E 210000 MPa, nu 0.3, 20 degC, no thermal output). */
const E = 210000, NU = 0.3;
const E1561 = 'ASTM E1561, Standard Practice for Analysis of Strain Gage Rosette Data: closed forms';

const memo = new Map<string, GroupOutput>();
/** The core's output for readings of microstrain gauges at `angles` (memoised: the cases share evaluations). */
export function rosetteOutput(angles: number[], readings: number[], gaugeExtra: Record<string, unknown> = {}): GroupOutput {
  const key = JSON.stringify([angles, readings, gaugeExtra]);
  let out = memo.get(key);
  if (out === undefined) {
    const g = compileOrThrow(planeRosetteDoc(angles, gaugeExtra)).groups[0].model;
    out = createGroupOutput(g.m);
    evaluateGroup(g, Float64Array.from(readings), 20, Number.NaN, out);
    memo.set(key, out);
  }
  return out;
}

/** Principal strains from the core's strain state: centre +- radius of Mohr's circle. */
function principalStrains(out: GroupOutput): [number, number] {
  const [exx, eyy, gxy] = [out.strainMicro[0], out.strainMicro[1], out.strainMicro[5]];
  const r = Math.hypot((exx - eyy) / 2, gxy / 2);
  return [(exx + eyy) / 2 + r, (exx + eyy) / 2 - r];
}

export const ROSETTE_READINGS = [[1000, 300, -200], [-450, 120, 800], [50, 50, 50], [1200, -800, 400]];

export const ROSETTE_CASES: ReferenceCase[] = ROSETTE_READINGS.flatMap(([e1, e2, e3]): ReferenceCase[] => {
  const rect = () => rosetteOutput([0, 45, 90], [e1, e2, e3]);
  const delta = () => rosetteOutput([0, 60, 120], [e1, e2, e3]);
  const at = `${e1}/${e2}/${e3} microstrain`;
  const tol = digits(9);
  const rad = Math.SQRT1_2 * Math.hypot(e1 - e2, e2 - e3);
  const root = Math.sqrt((e1 - e2) ** 2 + (e2 - e3) ** 2 + (e3 - e1) ** 2);
  const cases: ReferenceCase[] = [
    // Rectangular (0/45/90): eps_xx = e1, eps_yy = e3, gamma_xy = 2 e2 - e1 - e3.
    { quantity: 'strain components, rectangular rosette (microstrain)', label: `rectangular ${at}: eps_xx`, source: E1561, expected: e1, actual: () => rect().strainMicro[0], tolerance: tol },
    { quantity: 'strain components, rectangular rosette (microstrain)', label: `rectangular ${at}: eps_yy`, source: E1561, expected: e3, actual: () => rect().strainMicro[1], tolerance: tol },
    { quantity: 'strain components, rectangular rosette (microstrain)', label: `rectangular ${at}: gamma_xy`, source: E1561, expected: 2 * e2 - e1 - e3, actual: () => rect().strainMicro[5], tolerance: tol },
    // Principal stresses: E/2 [ (e1+e3)/(1-nu) +- sqrt(2)/(1+nu) sqrt((e1-e2)^2 + (e2-e3)^2) ].
    { quantity: 'principal stresses (MPa)', label: `rectangular ${at}: s1`, source: E1561, expected: (E / 2) * ((e1 + e3) / (1 - NU) + (Math.SQRT2 / (1 + NU)) * Math.hypot(e1 - e2, e2 - e3)) * 1e-6, actual: () => rect().principalMPa[0], tolerance: tol },
    { quantity: 'principal stresses (MPa)', label: `rectangular ${at}: s2`, source: E1561, expected: (E / 2) * ((e1 + e3) / (1 - NU) - (Math.SQRT2 / (1 + NU)) * Math.hypot(e1 - e2, e2 - e3)) * 1e-6, actual: () => rect().principalMPa[1], tolerance: tol },
    // Principal strains: (e1 + e3)/2 +- sqrt(2)/2 sqrt((e1-e2)^2 + (e2-e3)^2).
    { quantity: 'principal strains (microstrain)', label: `rectangular ${at}: e_max`, source: E1561, expected: (e1 + e3) / 2 + rad, actual: () => principalStrains(rect())[0], tolerance: tol },
    { quantity: 'principal strains (microstrain)', label: `rectangular ${at}: e_min`, source: E1561, expected: (e1 + e3) / 2 - rad, actual: () => principalStrains(rect())[1], tolerance: tol },
    // Delta (0/60/120): eps_xx = e1, eps_yy = (2 e2 + 2 e3 - e1) / 3, gamma_xy = 2 (e2 - e3) / sqrt(3).
    { quantity: 'strain components, delta rosette (microstrain)', label: `delta ${at}: eps_xx`, source: E1561, expected: e1, actual: () => delta().strainMicro[0], tolerance: tol },
    { quantity: 'strain components, delta rosette (microstrain)', label: `delta ${at}: eps_yy`, source: E1561, expected: (2 * e2 + 2 * e3 - e1) / 3, actual: () => delta().strainMicro[1], tolerance: tol },
    { quantity: 'strain components, delta rosette (microstrain)', label: `delta ${at}: gamma_xy`, source: E1561, expected: (2 * (e2 - e3)) / Math.sqrt(3), actual: () => delta().strainMicro[5], tolerance: tol },
    // Principal stresses: E/3 [ sum/(1-nu) +- sqrt(2)/(1+nu) sqrt((e1-e2)^2 + (e2-e3)^2 + (e3-e1)^2) ].
    { quantity: 'principal stresses (MPa)', label: `delta ${at}: s1`, source: E1561, expected: (E / 3) * ((e1 + e2 + e3) / (1 - NU) + (Math.SQRT2 / (1 + NU)) * root) * 1e-6, actual: () => delta().principalMPa[0], tolerance: tol },
    { quantity: 'principal stresses (MPa)', label: `delta ${at}: s2`, source: E1561, expected: (E / 3) * ((e1 + e2 + e3) / (1 - NU) - (Math.SQRT2 / (1 + NU)) * root) * 1e-6, actual: () => delta().principalMPa[1], tolerance: tol },
    { quantity: 'principal strains (microstrain)', label: `delta ${at}: e_max`, source: E1561, expected: (e1 + e2 + e3) / 3 + (Math.SQRT2 / 3) * root, actual: () => principalStrains(delta())[0], tolerance: tol },
    { quantity: 'principal strains (microstrain)', label: `delta ${at}: e_min`, source: E1561, expected: (e1 + e2 + e3) / 3 - (Math.SQRT2 / 3) * root, actual: () => principalStrains(delta())[1], tolerance: tol },
  ];
  // Principal angle from gauge 1: rectangular tan 2 theta = (2 e2 - e1 - e3) / (e1 - e3); delta
  // tan 2 theta = sqrt(3) (e2 - e3) / (2 e1 - e2 - e3). Undefined for an isotropic strain state.
  if (Math.abs(e1 - e3) + Math.abs(2 * e2 - e1 - e3) > 0) {
    cases.push({ quantity: 'principal angle (deg)', label: `rectangular ${at}: theta`, source: E1561, expected: (0.5 * Math.atan2(2 * e2 - e1 - e3, e1 - e3) * 180) / Math.PI, actual: () => rect().principalAngleDeg, tolerance: tol });
  }
  if (root > 0) {
    cases.push({ quantity: 'principal angle (deg)', label: `delta ${at}: theta`, source: E1561, expected: (0.5 * Math.atan2(Math.sqrt(3) * (e2 - e3), 2 * e1 - e2 - e3) * 180) / Math.PI, actual: () => delta().principalAngleDeg, tolerance: tol });
  }
  return cases;
});

/** Transverse sensitivity Kt 0.04 on a 0/45/90 rosette calibrated at nu0 0.285. */
export const KT_CASE = { kt: 0.04, nu0: 0.285, readings: [850, 260, -310] };
const ktOut = () => rosetteOutput([0, 45, 90], KT_CASE.readings, { transverse_sensitivity: KT_CASE.kt, transverse_calibration_nu: KT_CASE.nu0 });
const DALLY = 'Dally and Riley, Experimental Stress Analysis, transverse sensitivity: orthogonal-pair correction (from memory)';
{
  const { kt, nu0, readings: [ex, , ey] } = KT_CASE;
  // eps_x = (1 - nu0 Kt)(e'_x - Kt e'_y)/(1 - Kt^2), eps_y = (1 - nu0 Kt)(e'_y - Kt e'_x)/(1 - Kt^2).
  ROSETTE_CASES.push(
    { quantity: 'strain components, transverse sensitivity corrected (microstrain)', label: 'Kt 0.04: eps_x', source: DALLY, expected: ((1 - nu0 * kt) * (ex - kt * ey)) / (1 - kt * kt), actual: () => ktOut().strainMicro[0], tolerance: digits(9) },
    { quantity: 'strain components, transverse sensitivity corrected (microstrain)', label: 'Kt 0.04: eps_y', source: DALLY, expected: ((1 - nu0 * kt) * (ey - kt * ex)) / (1 - kt * kt), actual: () => ktOut().strainMicro[1], tolerance: digits(9) },
  );
}

/** Normal strain along a gauge at angle a (deg) of the state (exx, eyy, gxy): strain transformation (common practice). */
export function alongGauge(exx: number, eyy: number, gxy: number, a: number): number {
  const c = Math.cos((a * Math.PI) / 180), s = Math.sin((a * Math.PI) / 180);
  return c * c * exx + s * s * eyy + s * c * gxy;
}
const REDUNDANT = [0, 45, 90, 135];
/** A consistent 0/45/90/135 rosette under (600, -150, 420) microstrain, and the same with gauge 2 off by +100. */
export const REDUNDANT_READINGS = REDUNDANT.map((a) => alongGauge(600, -150, 420, a));
export const OFFSET_READINGS = REDUNDANT_READINGS.map((r, i) => (i === 1 ? r + 100 : r));
const LSQ = 'linear least squares, one degree of freedom: residual = offset projected on (1, -1, 1, -1)/2 (common practice)';
const offsetOut = () => rosetteOutput(REDUNDANT, OFFSET_READINGS);
ROSETTE_CASES.push(
  { quantity: 'strain components, redundant rosette (microstrain)', label: '0/45/90/135 consistent: eps_xx', source: 'strain transformation (common practice)', expected: 600, actual: () => rosetteOutput(REDUNDANT, REDUNDANT_READINGS).strainMicro[0], tolerance: digits(9) },
  { quantity: 'strain components, redundant rosette (microstrain)', label: '0/45/90/135 consistent: eps_yy', source: 'strain transformation (common practice)', expected: -150, actual: () => rosetteOutput(REDUNDANT, REDUNDANT_READINGS).strainMicro[1], tolerance: digits(9) },
  { quantity: 'strain components, redundant rosette (microstrain)', label: '0/45/90/135 one element missing: gamma_xy', source: 'strain transformation (common practice)', expected: 420, actual: () => rosetteOutput(REDUNDANT, [REDUNDANT_READINGS[0], Number.NaN, REDUNDANT_READINGS[2], REDUNDANT_READINGS[3]]).strainMicro[5], tolerance: digits(9) },
  { quantity: 'strain components, redundant rosette (microstrain)', label: '0/45/90/135 one gauge +100: eps_xx', source: `${LSQ}; the offset adds (A^T A)^-1 A^T e_45 x 100 = (25, 25, 100)`, expected: 600 + 25, actual: () => offsetOut().strainMicro[0], tolerance: digits(9) },
  ...[-25, 25, -25, 25].map((r, i): ReferenceCase => ({ quantity: 'fit residuals (microstrain)', label: `one gauge +100: residual of element ${i}`, source: LSQ, expected: r, actual: () => offsetOut().elementResidualMicro[i], tolerance: digits(9) })),
  // RMS = sqrt(4 x 25^2 / 4) = 25; standard error of the fit = sqrt(4 x 25^2 / (4 - 3)) = 50.
  { quantity: 'fit residuals (microstrain)', label: 'one gauge +100: residual_rms', source: LSQ, expected: 25, actual: () => offsetOut().residualRmsMicro, tolerance: digits(9) },
  { quantity: 'fit residuals (microstrain)', label: 'one gauge +100: fit standard error', source: LSQ, expected: 50, actual: () => offsetOut().fitStdErrorMicro, tolerance: digits(9) },
  { quantity: 'fit residuals (microstrain)', label: 'consistent: fit standard error', source: LSQ, expected: 0, actual: () => rosetteOutput(REDUNDANT, REDUNDANT_READINGS).fitStdErrorMicro, tolerance: 1e-9 },
);
