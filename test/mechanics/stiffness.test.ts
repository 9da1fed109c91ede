import { describe, expect, it } from 'vitest';
import { invertSquare, isotropicCompliance, isotropicStiffness, lameConstants, orthotropicCompliance } from '../../src/mechanics/stiffness.js';
import { PLY, STIFFNESS_CASES } from '../reference/stiffness-cases.js';

function product(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < n; k++) out[i * n + j] += a[i * n + k] * b[k * n + j];
  return out;
}

function expectIdentity(m: Float64Array, n: number, tol: number): void {
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(Math.abs(m[i * n + j] - (i === j ? 1 : 0))).toBeLessThan(tol);
}


describe('stiffness and compliance', () => {
  // Hand-written cases (test/reference/stiffness-cases.ts, shared with `npm run check:references`).
  it('the Lame constants as worked by hand: 115.385 and 76.923 GPa', () => {
    expect(lameConstants(200, 0.3).lambda).toBeCloseTo(115.385, 3);
    expect(lameConstants(200, 0.3).mu).toBeCloseTo(76.923, 3);
  });

  for (const c of STIFFNESS_CASES.filter((x) => x.quantity === 'stiffness (MPa)')) {
    it(`${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }

  it('C times S is the identity, isotropic and orthotropic', () => {
    expectIdentity(product(isotropicStiffness(210000, 0.3), isotropicCompliance(210000, 0.3), 6), 6, 1e-12);
    const s = orthotropicCompliance(PLY);
    expectIdentity(product(invertSquare(s, 6), s, 6), 6, 1e-10);
  });
});
