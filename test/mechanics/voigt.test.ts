import { describe, expect, it } from 'vitest';
import { normalStrainRow2, normalStrainRow3, PLANE_COMPONENTS, VOIGT_ORDER, XX, XY, XZ, YY, YZ, ZZ } from '../../src/mechanics/voigt.js';
import { isotropicStiffness } from '../../src/mechanics/stiffness.js';

describe('Voigt order and shear convention', () => {
  it('is xx, yy, zz, yz, xz, xy and the indices agree', () => {
    expect(VOIGT_ORDER).toEqual(['xx', 'yy', 'zz', 'yz', 'xz', 'xy']);
    expect([XX, YY, ZZ, YZ, XZ, XY]).toEqual([0, 1, 2, 3, 4, 5]);
    expect(PLANE_COMPONENTS).toEqual([0, 1, 5]);
  });

  it('carries engineering shear: pure shear gamma_xy = 2e reads e at 45 degrees', () => {
    // Mohr's circle of strain (common practice): under tensor shear eps_xy = e, the normal strain at 45 deg is e.
    const e = 500;
    const strain = new Float64Array([0, 0, 0, 0, 0, 2 * e]);
    const row = normalStrainRow3(Math.SQRT1_2, Math.SQRT1_2, 0, new Float64Array(6));
    const eps45 = row.reduce((s, r, i) => s + r * strain[i], 0);
    expect(eps45).toBeCloseTo(e, 10);
    const row2 = normalStrainRow2(Math.PI / 4, new Float64Array(3));
    expect(row2[0] * 0 + row2[1] * 0 + row2[2] * 2 * e).toBeCloseTo(e, 10);
  });

  it('puts the shear modulus G (not 2G) on the shear diagonal of the stiffness', () => {
    // Engineering shear strain pairs with tensor shear stress: tau = G gamma (common practice).
    const c = isotropicStiffness(210000, 0.3);
    const g = 210000 / (2 * 1.3);
    for (const i of [YZ, XZ, XY]) expect(c[i * 6 + i]).toBeCloseTo(g, 6);
    expect(c[YZ * 6 + XX]).toBe(0);
  });

  it('rows of the three axes pick the three normal components', () => {
    expect(Array.from(normalStrainRow3(0, 0, 1, new Float64Array(6)))).toEqual([0, 0, 1, 0, 0, 0]);
    const r = normalStrainRow3(0, Math.SQRT1_2, Math.SQRT1_2, new Float64Array(6));
    expect(r[YZ]).toBeCloseTo(0.5, 12);
  });
});
