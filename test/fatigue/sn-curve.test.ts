import { describe, expect, it } from 'vitest';
import { cyclesToFailure, damageOf, rangeAtCycles, RATIO_D_TO_C, RATIO_L_TO_D, RATIO_SHEAR_L_TO_C, snCurve } from '../../src/fatigue/sn-curve.js';

describe('EN 1993-1-9 S-N curves', () => {
  it('the ratios of the limits are those of EN 1993-1-9 7.1 (0.737, 0.549; shear 0.457)', () => {
    // Source: EN 1993-1-9:2005, 7.1 (3), equations 7.1 and 7.2, and figure 7.2.
    expect(RATIO_D_TO_C).toBeCloseTo(0.737, 3);
    expect(RATIO_L_TO_D).toBeCloseTo(0.549, 3);
    expect(RATIO_SHEAR_L_TO_C).toBeCloseTo(0.457, 3);
  });

  it('category 71: delta_sigma_D 52.3 MPa, delta_sigma_L 28.7 MPa, N = 715,822 at 100 MPa', () => {
    // Source: EN 1993-1-9:2005 7.1 and figure 7.1 (delta_sigma_D = 0.737 x 71, delta_sigma_L = 0.549 x delta_sigma_D),
    // equation 7.1: N = 2e6 (71/100)^3 = 715,822.
    const c = snCurve('direct', 71);
    expect(c.limitDMPa).toBeCloseTo(52.3, 1);
    expect(c.cutoffMPa).toBeCloseTo(28.7, 1);
    expect(cyclesToFailure(c, 100)).toBeCloseTo(715_822, 0);
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
  });

  it('shear category 80: m = 5, N = 2e6 at 80 MPa, cut-off 0.457 x 80 = 36.6 MPa', () => {
    // Source: EN 1993-1-9:2005 figure 7.2 and equation 7.3.
    const c = snCurve('shear', 80);
    expect(cyclesToFailure(c, 80)).toBeCloseTo(2e6, 3);
    expect(cyclesToFailure(c, 40)).toBeCloseTo(2e6 * 32, 0);
    expect(c.cutoffMPa).toBeCloseTo(36.6, 1);
    expect(cyclesToFailure(c, 36)).toBe(Infinity);
  });

  it("constant amplitude at the category range for 2e6 cycles gives Miner's damage 1.0", () => {
    // Source: EN 1993-1-9:2005 7.1 (delta_sigma_C is the strength at 2e6 cycles) and annex A (Miner's rule).
    for (const cat of [160, 71, 36]) {
      const c = snCurve('direct', cat);
      expect(damageOf(c, cat, 2e6)).toBeCloseTo(1, 12);
    }
  });

  it('partial factors: gamma_Ff x gamma_Mf = 1.35 multiplies damage by 1.35^3 on the m = 3 branch', () => {
    // Source: EN 1993-1-9:2005 8 (1) and equation 8.2: gamma_Ff delta_sigma_E <= delta_sigma_C / gamma_Mf.
    const plain = snCurve('direct', 71);
    const factored = snCurve('direct', 71, 1.0, 1.35);
    expect(damageOf(factored, 100, 1000) / damageOf(plain, 100, 1000)).toBeCloseTo(1.35 ** 3, 10);
    const both = snCurve('direct', 71, 1.1, 1.15);
    expect(cyclesToFailure(both, 100)).toBeCloseTo(2e6 * (71 / (100 * 1.1 * 1.15)) ** 3, 3);
  });
});
