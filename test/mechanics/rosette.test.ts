import { describe, expect, it } from 'vitest';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import { compileOrThrow, planeRosetteDoc } from '../support/structures.js';

const E = 210000, NU = 0.3;

function evaluate(angles: number[], readings: number[], gaugeExtra: Record<string, unknown> = {}) {
  const s = compileOrThrow(planeRosetteDoc(angles, gaugeExtra));
  const g = s.groups[0].model;
  const out = createGroupOutput(g.m);
  evaluateGroup(g, Float64Array.from(readings), 20, Number.NaN, out);
  return out;
}

describe('rosette reduction against ASTM E1561 closed forms', () => {
  // ASTM E1561, Standard Practice for Analysis of Strain Gage Rosette Data: closed-form principal
  // strains and stresses for rectangular (0/45/90) and delta (0/60/120) rosettes.
  const cases = [[1000, 300, -200], [-450, 120, 800], [50, 50, 50], [1200, -800, 400]];

  for (const [e1, e2, e3] of cases) {
    it(`rectangular rosette ${e1}/${e2}/${e3} microstrain`, () => {
      const out = evaluate([0, 45, 90], [e1, e2, e3]);
      const mean = (e1 + e3) / 2;
      const rad = Math.SQRT1_2 * Math.hypot(e1 - e2, e2 - e3);
      // Principal stresses: E/2 [ (e1+e3)/(1-nu) +- sqrt(2)/(1+nu) sqrt((e1-e2)^2 + (e2-e3)^2) ]
      const sP = (E / 2) * ((e1 + e3) / (1 - NU) + (Math.SQRT2 / (1 + NU)) * Math.hypot(e1 - e2, e2 - e3)) * 1e-6;
      const sQ = (E / 2) * ((e1 + e3) / (1 - NU) - (Math.SQRT2 / (1 + NU)) * Math.hypot(e1 - e2, e2 - e3)) * 1e-6;
      expect(out.principalMPa[0]).toBeCloseTo(sP, 9);
      expect(out.principalMPa[1]).toBeCloseTo(sQ, 9);
      // Principal strains from the general path's strain state: centre +- radius of Mohr's circle.
      const [exx, eyy, gxy] = [out.strainMicro[0], out.strainMicro[1], out.strainMicro[5]];
      const r = Math.hypot((exx - eyy) / 2, gxy / 2);
      expect((exx + eyy) / 2 + r).toBeCloseTo(mean + rad, 9);
      expect((exx + eyy) / 2 - r).toBeCloseTo(mean - rad, 9);
      // Principal angle: tan 2 theta = (2 e2 - e1 - e3) / (e1 - e3), measured from gauge 1.
      if (Math.abs(e1 - e3) + Math.abs(2 * e2 - e1 - e3) > 0) {
        const theta = (0.5 * Math.atan2(2 * e2 - e1 - e3, e1 - e3) * 180) / Math.PI;
        expect(out.principalAngleDeg).toBeCloseTo(theta, 9);
      }
    });

    it(`delta rosette ${e1}/${e2}/${e3} microstrain`, () => {
      const out = evaluate([0, 60, 120], [e1, e2, e3]);
      const sum = e1 + e2 + e3;
      const root = Math.sqrt((e1 - e2) ** 2 + (e2 - e3) ** 2 + (e3 - e1) ** 2);
      // Principal stresses: E/3 [ sum/(1-nu) +- sqrt(2)/(1+nu) sqrt(...) ]
      const sP = (E / 3) * (sum / (1 - NU) + (Math.SQRT2 / (1 + NU)) * root) * 1e-6;
      const sQ = (E / 3) * (sum / (1 - NU) - (Math.SQRT2 / (1 + NU)) * root) * 1e-6;
      expect(out.principalMPa[0]).toBeCloseTo(sP, 9);
      expect(out.principalMPa[1]).toBeCloseTo(sQ, 9);
      const [exx, eyy, gxy] = [out.strainMicro[0], out.strainMicro[1], out.strainMicro[5]];
      const r = Math.hypot((exx - eyy) / 2, gxy / 2);
      expect((exx + eyy) / 2 + r).toBeCloseTo(sum / 3 + (Math.SQRT2 / 3) * root, 9);
      if (root > 0) {
        // tan 2 theta = sqrt(3) (e2 - e3) / (2 e1 - e2 - e3)
        const theta = (0.5 * Math.atan2(Math.sqrt(3) * (e2 - e3), 2 * e1 - e2 - e3) * 180) / Math.PI;
        expect(out.principalAngleDeg).toBeCloseTo(theta, 9);
      }
    });
  }
});

describe('transverse sensitivity', () => {
  it('matches the orthogonal-pair correction with calibration Poisson ratio 0.285', () => {
    // Orthogonal pair correction (Dally and Riley, Experimental Stress Analysis, transverse sensitivity; from memory):
    // eps_x = (1 - nu0 Kt)(e'_x - Kt e'_y)/(1 - Kt^2), eps_y = (1 - nu0 Kt)(e'_y - Kt e'_x)/(1 - Kt^2), nu0 = 0.285.
    const kt = 0.04, nu0 = 0.285;
    const [ex, e45, ey] = [850, 260, -310];
    const out = evaluate([0, 45, 90], [ex, e45, ey], { transverse_sensitivity: kt, transverse_calibration_nu: nu0 });
    const epsX = ((1 - nu0 * kt) * (ex - kt * ey)) / (1 - kt * kt);
    const epsY = ((1 - nu0 * kt) * (ey - kt * ex)) / (1 - kt * kt);
    expect(out.strainMicro[0]).toBeCloseTo(epsX, 9);
    expect(out.strainMicro[1]).toBeCloseTo(epsY, 9);
    // The correction moves eps_x by about 4 microstrain and eps_y by about 35: far above the tolerance.
    expect(Math.abs(ex - epsX)).toBeGreaterThan(3);
    expect(Math.abs(ey - epsY)).toBeGreaterThan(30);
  });
});

describe('redundant rosettes', () => {
  const exact = (exx: number, eyy: number, gxy: number, a: number) => {
    const c = Math.cos((a * Math.PI) / 180), s = Math.sin((a * Math.PI) / 180);
    return c * c * exx + s * s * eyy + s * c * gxy;
  };

  it('a consistent 4-element rosette has zero residual and survives one missing element', () => {
    const angles = [0, 45, 90, 135];
    const readings = angles.map((a) => exact(600, -150, 420, a));
    const full = evaluate(angles, readings);
    expect(full.residualRmsMicro).toBeLessThan(1e-9);
    expect(full.fitStdErrorMicro).toBeLessThan(1e-9);
    const dropped = evaluate(angles, [readings[0], Number.NaN, readings[2], readings[3]]);
    expect(dropped.flags & 0b100).toBe(0b100); // element_missing
    expect(dropped.strainMicro[5]).toBeCloseTo(420, 9);
    expect(Number.isNaN(dropped.residualRmsMicro)).toBe(true); // 3 left for 3 unknowns: no redundancy
    expect(Number.isNaN(dropped.fitStdErrorMicro)).toBe(true);
  });

  it('reports the residual of an inconsistent reading and flags it above the limit', () => {
    const angles = [0, 45, 90, 135];
    const readings = angles.map((a) => exact(600, -150, 420, a));
    readings[1] += 100; // one gauge off by 100 microstrain
    const out = evaluate(angles, readings);
    // Least squares with one degree of freedom: the residual vector is the offset projected on the
    // null space of A^T, spanned by u = (1, -1, 1, -1) / 2 for 0/45/90/135 (common practice: linear
    // least squares; each element has hat-matrix leverage 3/4). So r = (100 e2 . u) u: every element's
    // residual is 25 in magnitude, the residual norm 50.
    Array.from(out.elementResidualMicro).forEach((r, i) => expect(r).toBeCloseTo(i % 2 === 0 ? -25 : 25, 9));
    // RMS = sqrt(4 * 25^2 / 4) = 25; standard error of the fit = sqrt(4 * 25^2 / (4 - 3)) = 50.
    expect(out.residualRmsMicro).toBeCloseTo(25, 9);
    expect(out.fitStdErrorMicro).toBeCloseTo(50, 9);
    expect(out.flags & 0b10000).toBe(0b10000); // residual_high: the standard error 50 > default limit 30

    // The limit compares the standard error, not the RMS: a limit of 40 sits between the two (25 < 40 < 50).
    const s = compileOrThrow({ ...planeRosetteDoc(angles), groups: [{ ...(planeRosetteDoc(angles).groups as any[])[0], fit_std_error_limit_micro: 40 }] });
    const o40 = createGroupOutput(4);
    evaluateGroup(s.groups[0].model, Float64Array.from(readings), 20, Number.NaN, o40);
    expect(o40.flags & 0b10000).toBe(0b10000);
  });

  it('returns no stress and flags underdetermined when too few elements remain', () => {
    const out = evaluate([0, 60, 120], [100, Number.NaN, 50]);
    expect(out.flags & 0b1000000).toBe(0b1000000);
    expect(Number.isNaN(out.vonMisesMPa)).toBe(true);
  });
});

describe('precomputed pseudo-inverse', () => {
  it('gives the least-squares solution of ml-matrix SVD solved per sample (reference library)', async () => {
    const { buildReduction, applyPseudoInverse, solveLeastSquaresNaive } = await import('../../src/mechanics/reduction.js');
    const s = compileOrThrow(planeRosetteDoc([0, 30, 75, 120, 160]));
    const red = s.groups[0].model.reduction;
    const e = Float64Array.of(410, -120, 88, 305, -47);
    const fast = applyPseudoInverse(red.full!, e, 5, 3, new Float64Array(3));
    const naive = solveLeastSquaresNaive(red.obs, e, 5, 3);
    for (let j = 0; j < 3; j++) expect(fast[j]).toBeCloseTo(naive[j], 9);
    expect(buildReduction(red.obs, 5, 3).full).toEqual(red.full);
  });
});
