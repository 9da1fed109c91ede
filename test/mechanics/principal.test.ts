import fc from 'fast-check';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { principal2, principal3, vonMises2, vonMises6 } from '../../src/mechanics/principal.js';
import { STRESS_CASES } from '../reference/stress-cases.js';

const stress = fc.float({ min: -400, max: 400, noNaN: true, noDefaultInfinity: true });

describe('principal values', () => {
  it('3D principal stresses and directions agree with ml-matrix symmetric eigen-decomposition', () => {
    // Reference library: ml-matrix EigenvalueDecomposition (symmetric case).
    fc.assert(fc.property(fc.array(stress, { minLength: 6, maxLength: 6 }), (v) => {
      const s = Float64Array.from(v);
      const values = new Float64Array(3), dirs = new Float64Array(9), work = new Float64Array(9);
      principal3(s, values, dirs, work);
      const t = new Matrix([[s[0], s[5], s[4]], [s[5], s[1], s[3]], [s[4], s[3], s[2]]]);
      const ref = new EigenvalueDecomposition(t, { assumeSymmetric: true }).realEigenvalues.sort((a, b) => b - a);
      const scale = 1 + Math.max(...v.map(Math.abs));
      for (let k = 0; k < 3; k++) expect(Math.abs(values[k] - ref[k])).toBeLessThan(1e-9 * scale);
      // Each direction is a unit eigenvector: T d = lambda d.
      for (let k = 0; k < 3; k++) {
        const d = [dirs[k * 3], dirs[k * 3 + 1], dirs[k * 3 + 2]];
        expect(Math.hypot(...d)).toBeCloseTo(1, 12);
        const td = t.mmul(Matrix.columnVector(d)).to1DArray();
        // Repeated eigenvalues leave the direction free within their eigenspace; the residual still vanishes.
        for (let i = 0; i < 3; i++) expect(Math.abs(td[i] - values[k] * d[i])).toBeLessThan(1e-8 * scale);
      }
    }), { numRuns: 300 });
  });

  it('plane principal values match the 3D path with zero out-of-plane stress', () => {
    fc.assert(fc.property(stress, stress, stress, (sx, sy, txy) => {
      const p2 = principal2(sx, sy, txy, new Float64Array(3));
      const values = new Float64Array(3);
      principal3(Float64Array.of(sx, sy, 0, 0, 0, txy), values, new Float64Array(9), new Float64Array(9));
      const inPlane = Array.from(values).sort((a, b) => b - a);
      const expected = [p2[0], p2[1], 0].sort((a, b) => b - a);
      inPlane.forEach((v, i) => expect(v).toBeCloseTo(expected[i], 8));
      expect(vonMises2(sx, sy, txy)).toBeCloseTo(vonMises6(Float64Array.of(sx, sy, 0, 0, 0, txy)), 9);
    }), { numRuns: 200 });
  });

  // Hand-written cases (test/reference/stress-cases.ts, shared with `npm run check:references`).
  for (const c of STRESS_CASES.filter((x) => /von Mises|Tresca|principal/.test(x.quantity) && !/same-sign/.test(x.label))) {
    it(`${c.quantity}: ${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }
});
