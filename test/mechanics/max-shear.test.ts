import { describe, expect, it } from 'vitest';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import { compileOrThrow, planeRosetteDoc } from '../support/structures.js';

const E = 210000, NU = 0.3;

/** Readings of a 0/45/90 rosette on steel under plane stress (sx, sy, txy) MPa, by Hooke's law (common practice). */
function rosetteUnder(sx: number, sy: number, txy: number) {
  const exx = ((sx - NU * sy) / E) * 1e6, eyy = ((sy - NU * sx) / E) * 1e6, gxy = ((2 * (1 + NU) * txy) / E) * 1e6;
  const s = compileOrThrow(planeRosetteDoc([0, 45, 90]));
  const out = createGroupOutput(3);
  evaluateGroup(s.groups[0].model, Float64Array.of(exx, (exx + eyy + gxy) / 2, eyy), 20, Number.NaN, out);
  return out;
}

describe('maximum shear stress: in the plane and on any plane', () => {
  // Mohr's circles (common practice; e.g. J. M. Gere, Mechanics of Materials, plane stress chapter, from memory):
  // in-plane tau_max = (s1 - s2) / 2; absolute tau_max = (s_max - s_min) / 2 over s1, s2 and the surface's s3 = 0.
  it('same-sign principal stresses: the absolute maximum is out of the plane', () => {
    const out = rosetteUnder(100, 40, 0);
    expect(out.maxShearInPlaneMPa).toBeCloseTo(30, 9);
    expect(out.maxShearAbsMPa).toBeCloseTo(50, 9);
    expect(out.trescaMPa).toBeCloseTo(100, 9);
  });

  it('opposite-sign principal stresses: both are (s1 - s2) / 2', () => {
    const out = rosetteUnder(100, -40, 0);
    expect(out.maxShearInPlaneMPa).toBeCloseTo(70, 9);
    expect(out.maxShearAbsMPa).toBeCloseTo(70, 9);
  });

  it('pure shear tau: both are tau', () => {
    const out = rosetteUnder(0, 0, 55);
    expect(out.maxShearInPlaneMPa).toBeCloseTo(55, 9);
    expect(out.maxShearAbsMPa).toBeCloseTo(55, 9);
  });

  it('a web panel in compression with shear: s1, s2 = -30 +- sqrt(30^2 + 20^2)', () => {
    // sx = -60, sy = 0, txy = 20: centre -30, radius sqrt(900 + 400) = 36.056; s1 = 6.056, s2 = -66.056.
    const out = rosetteUnder(-60, 0, 20);
    const radius = Math.sqrt(30 * 30 + 20 * 20);
    expect(out.maxShearInPlaneMPa).toBeCloseTo(radius, 9);
    expect(out.maxShearAbsMPa).toBeCloseTo(radius, 9);
    // Both principal stresses compressive: the absolute maximum is |s2| / 2.
    const c = rosetteUnder(-60, -20, 0);
    expect(c.maxShearInPlaneMPa).toBeCloseTo(20, 9);
    expect(c.maxShearAbsMPa).toBeCloseTo(30, 9);
  });
});
