import { isotropicCompliance, isotropicStiffness, lameConstants, orthotropicCompliance, planeStressStiffness } from '../../src/mechanics/stiffness.js';
import type { GroupModel } from '../../src/mechanics/group-model.js';
import { baseDoc, compileOrThrow, microGauge } from '../support/structures.js';
import { digits, type ReferenceCase } from './case.js';

/**
 * Constants of a unidirectional carbon/epoxy-like ply, picked as round test numbers (from memory, of
 * the order a composites text tabulates); inputs of the formulas below, not check values.
 */
export const PLY = { E1: 140000, E2: 10000, E3: 10000, nu12: 0.3, nu13: 0.3, nu23: 0.45, G12: 5000, G13: 5000, G23: 3448 };
export const PLY_ALPHA = [-0.5e-6, 30e-6, 30e-6];
export const ORTHO = {
  id: 'ply', kind: 'orthotropic', E1_MPa: PLY.E1, E2_MPa: PLY.E2, E3_MPa: PLY.E3, nu12: PLY.nu12, nu13: PLY.nu13, nu23: PLY.nu23,
  G12_MPa: PLY.G12, G13_MPa: PLY.G13, G23_MPa: PLY.G23, alpha_per_degC: PLY_ALPHA,
};
const DEG = Math.PI / 180;
/** Gauges that read total strain (a zero thermal-output curve on a zero-expansion reference): the host's expansion shows. */
export const totalGauge = (id: string, ch: string) => microGauge(id, ch, { thermal_output: { coefficients_micro: [0], characterised_on_alpha_per_degC: 0 } });

/** A 0/45/90/135 rosette on `material`, oriented at `angleDeg` (material_angle_deg) when given. */
export function planeModel(material: Record<string, unknown>, angleDeg?: number): GroupModel {
  const angles = [0, 45, 90, 135];
  const doc = baseDoc([{
    id: 'p', kind: 'plane_rosette', material: material.id, zone: 'z', location: 'bench',
    elements: angles.map((a, i) => ({ gauge: `g${i}`, angle_deg: a })),
    ...(angleDeg === undefined ? {} : { material_angle_deg: angleDeg }),
  }], angles.map((_, i) => totalGauge(`g${i}`, `c${i}`)), { materials: [material] });
  return compileOrThrow(doc).groups[0].model;
}

const ISO = 'isotropic relations lambda = E nu / ((1+nu)(1-2nu)), mu = E / (2(1+nu)) (common practice)';
const Q_ISO = 'isotropic plane stress Q = E/(1-nu^2) [[1, nu, 0], [nu, 1, 0], [0, 0, (1-nu)/2]] (any elasticity text; common practice)';
const JONES = 'R. M. Jones, Mechanics of Composite Materials, ch. 2 (from memory)';
const S = 'stiffness (MPa)', ROT = 'rotated orthotropic stiffness (MPa)', ALPHA = 'rotated expansion (per degC)';

const q = planeStressStiffness(orthotropicCompliance(PLY));
const nu21 = (PLY.nu12 * PLY.E2) / PLY.E1, d = 1 - PLY.nu12 * nu21;
const [Q11, Q12, Q22, Q66] = [PLY.E1 / d, (PLY.nu12 * PLY.E2) / d, PLY.E2 / d, PLY.G12];
const kIso = 210000 / (1 - 0.09);
const qIso = planeStressStiffness(isotropicCompliance(210000, 0.3));
const c200 = isotropicStiffness(200000, 0.3);
const LAMBDA = (200000 * 0.3) / (1.3 * 0.4), MU = 200000 / 2.6;

export const STIFFNESS_CASES: ReferenceCase[] = [
  // Worked by hand: lambda = 60000 / (1.3 x 0.4) = 115,384.6 MPa, mu = 200000 / 2.6 = 76,923.1 MPa.
  { quantity: S, label: 'Lame lambda of E 200 GPa, nu 0.3', source: ISO, expected: LAMBDA, tolerance: digits(6), actual: () => lameConstants(200000, 0.3).lambda },
  { quantity: S, label: 'Lame mu of E 200 GPa, nu 0.3', source: ISO, expected: MU, tolerance: digits(6), actual: () => lameConstants(200000, 0.3).mu },
  { quantity: S, label: 'isotropic C11 = lambda + 2 mu', source: ISO, expected: LAMBDA + 2 * MU, tolerance: digits(2), actual: () => c200[0] },
  { quantity: S, label: 'isotropic C12 = lambda', source: ISO, expected: LAMBDA, tolerance: digits(2), actual: () => c200[1] },
  { quantity: S, label: 'isotropic C66 = mu', source: ISO, expected: MU, tolerance: digits(2), actual: () => c200[35] },
  ...[kIso, kIso * 0.3, 0, kIso * 0.3, kIso, 0, 0, 0, (kIso * 0.7) / 2].map((v, i): ReferenceCase => ({
    quantity: S, label: `isotropic plane-stress Q[${Math.floor(i / 3)}][${i % 3}]`, source: Q_ISO, expected: v, tolerance: digits(6), actual: () => qIso[i],
  })),
  // Q11 = E1/(1-nu12 nu21), Q12 = nu12 E2/(1-nu12 nu21), Q22 = E2/(1-nu12 nu21), Q66 = G12.
  { quantity: S, label: 'orthotropic lamina Q11', source: JONES, expected: Q11, tolerance: digits(4), actual: () => q[0] },
  { quantity: S, label: 'orthotropic lamina Q12', source: JONES, expected: Q12, tolerance: digits(4), actual: () => q[1] },
  { quantity: S, label: 'orthotropic lamina Q22', source: JONES, expected: Q22, tolerance: digits(4), actual: () => q[4] },
  { quantity: S, label: 'orthotropic lamina Q66', source: JONES, expected: Q66, tolerance: digits(6), actual: () => q[8] },
  { quantity: S, label: 'orthotropic lamina Q16', source: JONES, expected: 0, tolerance: digits(9), actual: () => q[2] },
];

/** Transformed reduced stiffness and expansion of the lamina at `theta` (deg, from x to the 1 axis), written out. */
export function qBar(theta: number) {
  const c = Math.cos(theta * DEG), s = Math.sin(theta * DEG);
  const [a1, a2] = PLY_ALPHA;
  return {
    11: Q11 * c ** 4 + 2 * (Q12 + 2 * Q66) * s * s * c * c + Q22 * s ** 4,
    12: (Q11 + Q22 - 4 * Q66) * s * s * c * c + Q12 * (s ** 4 + c ** 4),
    22: Q11 * s ** 4 + 2 * (Q12 + 2 * Q66) * s * s * c * c + Q22 * c ** 4,
    16: (Q11 - Q12 - 2 * Q66) * s * c ** 3 + (Q12 - Q22 + 2 * Q66) * s ** 3 * c,
    26: (Q11 - Q12 - 2 * Q66) * s ** 3 * c + (Q12 - Q22 + 2 * Q66) * s * c ** 3,
    66: (Q11 + Q22 - 2 * Q12 - 2 * Q66) * s * s * c * c + Q66 * (s ** 4 + c ** 4),
    // Transformed expansion (Jones, ch. 4; from memory): alpha_x = a1 c^2 + a2 s^2, alpha_y = a1 s^2 + a2 c^2,
    // alpha_xy (engineering) = 2 (a1 - a2) s c.
    ax: a1 * c * c + a2 * s * s, ay: a1 * s * s + a2 * c * c, axy: 2 * (a1 - a2) * s * c,
  };
}

const rotated = new Map<number, GroupModel>();
const modelAt = (theta: number) => {
  let m = rotated.get(theta);
  if (m === undefined) rotated.set(theta, (m = planeModel(ORTHO, theta)));
  return m;
};
export const ROTATION_ANGLES = [30, -55, 72.5];
for (const theta of ROTATION_ANGLES) {
  const e = qBar(theta);
  const tol = 1e-9 * Q11;
  // Entry of the compiled 3 x 3 plane stiffness (row-major) for each Q-bar term; Q12 also at [1][0].
  const at: Array<[keyof typeof e, number]> = [[11, 0], [12, 1], [12, 3], [22, 4], [16, 2], [26, 5], [66, 8]];
  for (const [key, idx] of at) {
    STIFFNESS_CASES.push({ quantity: ROT, label: `Q-bar ${key} at ${theta} degrees (entry ${idx})`, source: `transformed reduced stiffness, ${JONES}`, expected: e[key], tolerance: tol, actual: () => modelAt(theta).stiffness[idx] });
  }
  STIFFNESS_CASES.push(
    { quantity: ALPHA, label: `alpha_x at ${theta} degrees`, source: 'Jones, ch. 4 (from memory)', expected: e.ax, tolerance: digits(18), actual: () => modelAt(theta).hostAlpha[0] },
    { quantity: ALPHA, label: `alpha_y at ${theta} degrees`, source: 'Jones, ch. 4 (from memory)', expected: e.ay, tolerance: digits(18), actual: () => modelAt(theta).hostAlpha[1] },
    { quantity: ALPHA, label: `alpha_xy at ${theta} degrees`, source: 'Jones, ch. 4 (from memory)', expected: e.axy, tolerance: digits(18), actual: () => modelAt(theta).hostAlpha[2] },
  );
}
