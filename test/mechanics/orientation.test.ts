import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { compileStructure } from '../../src/config/compile.js';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput, type GroupModel } from '../../src/mechanics/group-model.js';
import { rotationFromAngles, strainRotation6, stressRotation6 } from '../../src/mechanics/rotation.js';
import { invertSquare, orthotropicCompliance, planeStressStiffness } from '../../src/mechanics/stiffness.js';
import { baseDoc, compileOrThrow, microGauge } from '../support/structures.js';
import { ORTHO, planeModel, PLY, PLY_ALPHA, STIFFNESS_CASES, totalGauge } from '../reference/stiffness-cases.js';

// The ply, its plane model and the hand-written Q-bar and expansion cases are in
// test/reference/stiffness-cases.ts (shared with `npm run check:references`).
const ALPHA = PLY_ALPHA;
const DEG = Math.PI / 180;
const T0 = 20;

const SOLID_DIRS = [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [1, 0, 1], [1, -1, 0.5]];
function solidModel(material: Record<string, unknown>, rotation?: Record<string, number>): GroupModel {
  const doc = baseDoc([{
    id: 's', kind: 'solid_cluster', material: material.id, zone: 'z', location: 'bench',
    elements: SOLID_DIRS.map((d, i) => ({ gauge: `g${i}`, direction: d })),
    ...(rotation === undefined ? {} : { material_rotation_deg: rotation }),
  }], SOLID_DIRS.map((_, i) => totalGauge(`g${i}`, `c${i}`)), { materials: [material] });
  return compileOrThrow(doc).groups[0].model;
}

/** Stresses from the same readings at the same temperature: what an engineer would see. */
function stresses(g: GroupModel, readings: number[], t: number): number[] {
  const out = createGroupOutput(g.m);
  evaluateGroup(g, Float64Array.from(readings), t, Number.NaN, out);
  return Array.from(out.stressMPa);
}

/**
 * Independent route: the fourth-order stiffness tensor rotated index by index,
 * C'_ijkl = R_ip R_jq R_kr R_ls C_pqrs (tensor transformation rule; common practice). With tensor
 * stress paired to engineering strain, C_ijkl is the Voigt entry C_IJ with no factors.
 */
const VOIGT = [[0, 5, 4], [5, 1, 3], [4, 3, 2]];
function rotateByTensor(c6: Float64Array, r: Float64Array): Float64Array {
  const c = (i: number, j: number, k: number, l: number) => c6[VOIGT[i][j] * 6 + VOIGT[k][l]];
  const out = new Float64Array(36);
  const pairs = [[0, 0], [1, 1], [2, 2], [1, 2], [0, 2], [0, 1]];
  pairs.forEach(([i, j], I) => pairs.forEach(([k, l], J) => {
    let acc = 0;
    for (let p = 0; p < 3; p++) for (let q = 0; q < 3; q++) for (let s = 0; s < 3; s++) for (let t = 0; t < 3; t++) {
      acc += r[i * 3 + p] * r[j * 3 + q] * r[k * 3 + s] * r[l * 3 + t] * c(p, q, s, t);
    }
    out[I * 6 + J] = acc;
  }));
  return out;
}
/** The expansion tensor diag(a1, a2, a3) rotated, R A R^T, as an engineering-strain Voigt vector. */
function rotateAlphaByTensor(a: number[], r: Float64Array): number[] {
  const t = (i: number, j: number) => a.reduce((acc, ak, k) => acc + r[i * 3 + k] * r[j * 3 + k] * ak, 0);
  return [t(0, 0), t(1, 1), t(2, 2), 2 * t(1, 2), 2 * t(0, 2), 2 * t(0, 1)];
}
const asStiffnessMaterial = (c: Float64Array, alpha: number[]) => ({
  id: 'full', kind: 'stiffness_matrix', stiffness_MPa: [0, 1, 2, 3, 4, 5].map((i) => Array.from(c.subarray(i * 6, i * 6 + 6))), alpha_per_degC: alpha,
});

describe('material orientation: Voigt rotation matrices', () => {
  it('N M^T is the identity for any rotation (equal work in both frames)', () => {
    const angle = fc.double({ min: -180, max: 180, noNaN: true });
    fc.assert(fc.property(angle, angle, angle, (a, b, c) => {
      const r = rotationFromAngles(a * DEG, b * DEG, c * DEG);
      const m = stressRotation6(r), n = strainRotation6(r);
      for (let i = 0; i < 6; i++) for (let j = 0; j < 6; j++) {
        let acc = 0;
        for (let k = 0; k < 6; k++) acc += n[i * 6 + k] * m[j * 6 + k];
        expect(Math.abs(acc - (i === j ? 1 : 0))).toBeLessThan(1e-12);
      }
    }), { numRuns: 100 });
  });
});

describe('plane groups: material_angle_deg', () => {
  const q = planeStressStiffness(orthotropicCompliance(PLY));
  const [Q11, Q12, Q22, Q66] = [q[0], q[1], q[4], q[8]];

  for (const c of STIFFNESS_CASES.filter((x) => x.quantity !== 'stiffness (MPa)')) {
    it(`${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }

  it('0 degrees is the identity and 90 degrees swaps E1 and E2', () => {
    const none = planeModel(ORTHO), zero = planeModel(ORTHO, 0), ninety = planeModel(ORTHO, 90);
    none.stiffness.forEach((v, i) => expect(zero.stiffness[i]).toBeCloseTo(v, 9));
    expect(Array.from(zero.hostAlpha)).toEqual(Array.from(none.hostAlpha));
    const tol = 1e-9 * Q11;
    expect(Math.abs(ninety.stiffness[0] - Q22)).toBeLessThan(tol);
    expect(Math.abs(ninety.stiffness[4] - Q11)).toBeLessThan(tol);
    expect(Math.abs(ninety.stiffness[1] - Q12)).toBeLessThan(tol);
    expect(Math.abs(ninety.stiffness[8] - Q66)).toBeLessThan(tol);
    expect(Math.abs(ninety.stiffness[2])).toBeLessThan(tol);
    expect(ninety.hostAlpha[0]).toBeCloseTo(ALPHA[1], 18);
    expect(ninety.hostAlpha[1]).toBeCloseTo(ALPHA[0], 18);
    expect(Math.abs(ninety.hostAlpha[2])).toBeLessThan(1e-20);
  });

  it('gives the same stresses as the same plate given as a full stiffness at that angle', () => {
    const theta = 35;
    const r = rotationFromAngles(theta * DEG, 0, 0);
    const full = asStiffnessMaterial(rotateByTensor(invertSquare(orthotropicCompliance(PLY), 6), r), rotateAlphaByTensor(ALPHA, r));
    const oriented = planeModel(ORTHO, theta), given = planeModel(full);
    for (const [readings, t] of [[[420, -130, 95, 610], 20], [[-300, 250, 40, -75], 47], [[0, 0, 0, 0], -5]] as Array<[number[], number]>) {
      const a = stresses(oriented, readings, t), b = stresses(given, readings, t);
      [0, 1, 5].forEach((k) => expect(Math.abs(a[k] - b[k])).toBeLessThan(1e-9 * (1 + Math.abs(b[k]))));
    }
    // The free plate heated by 27 degC carries no stress however it is oriented; the unrotated
    // expansion would leave a stress (the test can fail).
    const free = Array.from({ length: 4 }, (_, i) => {
      const a = [0, 45, 90, 135][i] * DEG;
      const al = rotateAlphaByTensor(ALPHA, r);
      return (Math.cos(a) ** 2 * al[0] + Math.sin(a) ** 2 * al[1] + Math.sin(a) * Math.cos(a) * al[5]) * 27 * 1e6;
    });
    stresses(oriented, free, T0 + 27).forEach((v, k) => { if (k === 0 || k === 1 || k === 5) expect(Math.abs(v)).toBeLessThan(1e-9); });
    const unrotated = stresses(planeModel(ORTHO), free, T0 + 27);
    expect(Math.abs(unrotated[0])).toBeGreaterThan(1);
  });

  it('refuses an orientation on an isotropic material, which it could not change', () => {
    const steel = { id: 'steel', kind: 'isotropic', E_MPa: 210000, nu: 0.3, alpha_per_degC: 12e-6 };
    const doc = baseDoc([{
      id: 'p', kind: 'plane_rosette', material: 'steel', zone: 'z', location: 'bench', material_angle_deg: 30,
      elements: [0, 45, 90].map((a, i) => ({ gauge: `g${i}`, angle_deg: a })),
    }], [0, 1, 2].map((i) => microGauge(`g${i}`, `c${i}`)), { materials: [steel] });
    const r = compileStructure(doc);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems).toContainEqual({ path: 'groups[0].material_angle_deg', reason: expect.stringMatching(/isotropic/) });
  });
});

describe('solid clusters: material_rotation_deg (intrinsic z, then y, then x)', () => {
  it('gives the same stresses as the same block given as a full stiffness in that orientation', () => {
    const rot = { about_z: 25, about_y: -40, about_x: 70 };
    const r = rotationFromAngles(rot.about_z * DEG, rot.about_y * DEG, rot.about_x * DEG);
    const full = asStiffnessMaterial(rotateByTensor(invertSquare(orthotropicCompliance(PLY), 6), r), rotateAlphaByTensor(ALPHA, r));
    const oriented = solidModel(ORTHO, rot), given = solidModel(full);
    const readings = [310, -120, 45, 88, -60, 150, 20];
    for (const t of [20, -3, 51]) {
      const a = stresses(oriented, readings, t), b = stresses(given, readings, t);
      for (let k = 0; k < 6; k++) expect(Math.abs(a[k] - b[k])).toBeLessThan(1e-9 * (1 + Math.abs(b[k])));
    }
  });

  it('a rotation about z alone by 90 degrees swaps E1 and E2; zero angles are the identity', () => {
    const c = invertSquare(orthotropicCompliance(PLY), 6);
    const swapped = solidModel(ORTHO, { about_z: 90 }).stiffness;
    expect(swapped[0]).toBeCloseTo(c[7], 6); // C11' = C22
    expect(swapped[7]).toBeCloseTo(c[0], 6);
    expect(swapped[14]).toBeCloseTo(c[14], 6);
    expect(swapped[21]).toBeCloseTo(c[28], 6); // C44' (yz) = C55 (13)
    const zero = solidModel(ORTHO, { about_z: 0, about_y: 0, about_x: 0 }).stiffness;
    c.forEach((v, i) => expect(zero[i]).toBeCloseTo(v, 6));
  });
});
