import { describe, expect, it } from 'vitest';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import { compileOrThrow, planeRosetteDoc } from '../support/structures.js';
import { KT_CASE, OFFSET_READINGS, REDUNDANT_READINGS, ROSETTE_CASES, rosetteOutput } from '../reference/rosette-cases.js';

// The hand-written cases (closed forms with their sources) are in test/reference/rosette-cases.ts,
// shared with `npm run check:references`.
describe('rosette reduction against hand-written reference cases', () => {
  for (const c of ROSETTE_CASES) {
    it(`${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }
});

describe('transverse sensitivity', () => {
  it('the orthogonal-pair correction is far above the tolerance: the cases can fail', () => {
    const out = rosetteOutput([0, 45, 90], KT_CASE.readings, { transverse_sensitivity: KT_CASE.kt, transverse_calibration_nu: KT_CASE.nu0 });
    // The correction moves eps_x by about 4 microstrain and eps_y by about 35.
    expect(Math.abs(KT_CASE.readings[0] - out.strainMicro[0])).toBeGreaterThan(3);
    expect(Math.abs(KT_CASE.readings[2] - out.strainMicro[1])).toBeGreaterThan(30);
  });
});

describe('redundant rosettes', () => {
  const angles = [0, 45, 90, 135];

  it('a consistent 4-element rosette has zero residual and survives one missing element', () => {
    expect(rosetteOutput(angles, REDUNDANT_READINGS).residualRmsMicro).toBeLessThan(1e-9);
    const dropped = rosetteOutput(angles, [REDUNDANT_READINGS[0], Number.NaN, REDUNDANT_READINGS[2], REDUNDANT_READINGS[3]]);
    expect(dropped.flags & 0b100).toBe(0b100); // element_missing
    expect(Number.isNaN(dropped.residualRmsMicro)).toBe(true); // 3 left for 3 unknowns: no redundancy
    expect(Number.isNaN(dropped.fitStdErrorMicro)).toBe(true);
  });

  it('flags an inconsistent reading above the limit, the limit comparing the standard error', () => {
    const out = rosetteOutput(angles, OFFSET_READINGS);
    expect(out.flags & 0b10000).toBe(0b10000); // residual_high: the standard error 50 > default limit 30
    // The limit compares the standard error, not the RMS: a limit of 40 sits between the two (25 < 40 < 50).
    const s = compileOrThrow({ ...planeRosetteDoc(angles), groups: [{ ...(planeRosetteDoc(angles).groups as any[])[0], fit_std_error_limit_micro: 40 }] });
    const o40 = createGroupOutput(4);
    evaluateGroup(s.groups[0].model, Float64Array.from(OFFSET_READINGS), 20, Number.NaN, o40);
    expect(o40.flags & 0b10000).toBe(0b10000);
  });

  it('returns no stress and flags underdetermined when too few elements remain', () => {
    const out = rosetteOutput([0, 60, 120], [100, Number.NaN, 50]);
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
