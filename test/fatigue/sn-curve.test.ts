import { describe, expect, it } from 'vitest';
import { cyclesToFailure, damageOf, rangeAtCycles, RATIO_D_TO_C, RATIO_L_TO_D, RATIO_SHEAR_L_TO_C, snCurve } from '../../src/fatigue/sn-curve.js';
import { FATIGUE_CASES } from '../reference/fatigue-cases.js';

describe('EN 1993-1-9 S-N curves', () => {
  // Hand-written cases (test/reference/fatigue-cases.ts, shared with `npm run check:references`).
  for (const c of FATIGUE_CASES.filter((x) => !/detail|rainflow/.test(`${x.label} ${x.quantity}`))) {
    it(`${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }

  it('the ratios of the limits are those of EN 1993-1-9 7.1 (0.737, 0.549; shear 0.457)', () => {
    // Source: EN 1993-1-9:2005, 7.1 (3), equations 7.1 and 7.2, and figure 7.2.
    expect(RATIO_D_TO_C).toBeCloseTo(0.737, 3);
    expect(RATIO_L_TO_D).toBeCloseTo(0.549, 3);
    expect(RATIO_SHEAR_L_TO_C).toBeCloseTo(0.457, 3);
    // The figures the standard prints for category 71 (7.1, figure 7.1): 52.3 and 28.7 MPa.
    expect(snCurve('direct', 71).limitDMPa).toBeCloseTo(52.3, 1);
    expect(snCurve('direct', 71).cutoffMPa).toBeCloseTo(28.7, 1);
  });

  it('the curve is continuous at both knees and flat below the cut-off', () => {
    // Source: EN 1993-1-9:2005 figure 7.1 (m = 3 to 5e6, m = 5 to 1e8, then cut-off).
    const c = snCurve('direct', 90);
    expect(cyclesToFailure(c, c.limitDMPa)).toBeCloseTo(5e6, 3);
    expect(cyclesToFailure(c, c.limitDMPa * 0.999999) / 5e6).toBeCloseTo(1, 4);
    expect(cyclesToFailure(c, c.cutoffMPa) / 1e8).toBeCloseTo(1, 9);
    expect(cyclesToFailure(c, c.cutoffMPa * 0.999)).toBe(Infinity);
    expect(rangeAtCycles(c, 2e6)).toBeCloseTo(90, 9);
    expect(rangeAtCycles(c, 1e8)).toBeCloseTo(c.cutoffMPa, 9);
    // Shear (figure 7.2): nothing below its cut-off of 36.6 MPa at category 80.
    expect(cyclesToFailure(snCurve('shear', 80), 36)).toBe(Infinity);
  });

  it('partial factors: gamma_Ff x gamma_Mf = 1.35 multiplies damage by 1.35^3 on the m = 3 branch', () => {
    // Source: EN 1993-1-9:2005 8 (1) and equation 8.2: gamma_Ff delta_sigma_E <= delta_sigma_C / gamma_Mf.
    const plain = snCurve('direct', 71);
    const factored = snCurve('direct', 71, 1.0, 1.35);
    expect(damageOf(factored, 100, 1000) / damageOf(plain, 100, 1000)).toBeCloseTo(1.35 ** 3, 10);
  });
});
