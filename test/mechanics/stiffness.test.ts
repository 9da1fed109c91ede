import { describe, expect, it } from 'vitest';
import {
  invertSquare, isotropicCompliance, isotropicStiffness, lameConstants, orthotropicCompliance,
  planeStressStiffness,
} from '../../src/mechanics/stiffness.js';

function product(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < n; k++) out[i * n + j] += a[i * n + k] * b[k * n + j];
  return out;
}

function expectIdentity(m: Float64Array, n: number, tol: number): void {
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(Math.abs(m[i * n + j] - (i === j ? 1 : 0))).toBeLessThan(tol);
}

// Round constants of the order of a carbon/epoxy ply (from memory): inputs of identities below, not check values.
const PLY = { E1: 140000, E2: 10000, E3: 10000, nu12: 0.3, nu13: 0.3, nu23: 0.45, G12: 5000, G13: 5000, G23: 3448 };

describe('stiffness and compliance', () => {
  it('gives the Lame constants of E = 200 GPa, nu = 0.3', () => {
    // lambda = E nu / ((1+nu)(1-2nu)), mu = E / (2(1+nu)): the standard isotropic relations (common practice),
    // worked by hand: lambda = 60 / (1.3 x 0.4) = 115.385 GPa, mu = 200 / 2.6 = 76.923 GPa.
    const { lambda, mu } = lameConstants(200, 0.3);
    expect(lambda).toBeCloseTo(115.38, 2);
    expect(mu).toBeCloseTo(76.92, 2);
  });

  it('C times S is the identity, isotropic and orthotropic', () => {
    expectIdentity(product(isotropicStiffness(210000, 0.3), isotropicCompliance(210000, 0.3), 6), 6, 1e-12);
    const s = orthotropicCompliance(PLY);
    expectIdentity(product(invertSquare(s, 6), s, 6), 6, 1e-10);
  });

  it('isotropic stiffness entries are lambda + 2 mu, lambda and mu', () => {
    const c = isotropicStiffness(200000, 0.3);
    expect(c[0]).toBeCloseTo(115384.615 + 2 * 76923.077, 2);
    expect(c[1]).toBeCloseTo(115384.615, 2);
    expect(c[35]).toBeCloseTo(76923.077, 2);
  });

  it('reduced plane-stress stiffness from the compliance matches the isotropic closed form', () => {
    // Q = E/(1-nu^2) [[1, nu, 0], [nu, 1, 0], [0, 0, (1-nu)/2]] (isotropic plane stress; any elasticity text, common practice).
    const E = 210000, nu = 0.3;
    const q = planeStressStiffness(isotropicCompliance(E, nu));
    const k = E / (1 - nu * nu);
    const expected = [k, k * nu, 0, k * nu, k, 0, 0, 0, (k * (1 - nu)) / 2];
    expected.forEach((v, i) => expect(q[i]).toBeCloseTo(v, 6));
  });

  it('reduced plane-stress stiffness of an orthotropic lamina matches Q11, Q12, Q22, Q66', () => {
    // Q11 = E1/(1-nu12 nu21), Q12 = nu12 E2/(1-nu12 nu21), Q22 = E2/(1-nu12 nu21), Q66 = G12
    // (reduced stiffness of an orthotropic lamina, R. M. Jones, Mechanics of Composite Materials, ch. 2; from memory).
    const q = planeStressStiffness(orthotropicCompliance(PLY));
    const nu21 = (PLY.nu12 * PLY.E2) / PLY.E1;
    const d = 1 - PLY.nu12 * nu21;
    expect(q[0]).toBeCloseTo(PLY.E1 / d, 4);
    expect(q[1]).toBeCloseTo((PLY.nu12 * PLY.E2) / d, 4);
    expect(q[4]).toBeCloseTo(PLY.E2 / d, 4);
    expect(q[8]).toBeCloseTo(PLY.G12, 6);
    expect(q[2]).toBeCloseTo(0, 9);
  });
});
