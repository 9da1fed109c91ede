import { readFileSync } from 'node:fs';
import { parse } from 'yaml';
import { describe, expect, it } from 'vitest';
import { bridgeOutputRatio, bridgeStrainMicro, gaugeFactorAt, leadWireFactor } from '../../src/mechanics/bridge.js';
import { horner, tautWireMicroPerDigit, thermalOutputMicro, thermalStrainVector, vibratingWireDigits } from '../../src/mechanics/thermal.js';
import { isotropicStiffness } from '../../src/mechanics/stiffness.js';

/** Output ratio of a Wheatstone bridge from its four arm resistances (arms 1-2 and 4-3 as the two dividers). */
function bridgeFromArms(r1: number, r2: number, r3: number, r4: number): number {
  return r1 / (r1 + r2) - r4 / (r3 + r4);
}

describe('Wheatstone bridge equations', () => {
  // Source: the Wheatstone-bridge divider equations for quarter, half and full bridges
  // (J. W. Dally and W. F. Riley, Experimental Stress Analysis, strain-gauge circuits chapter; from memory).
  const R = 350, GF = 2.1;
  for (const eps of [-3000, -100, 10, 1000, 5000]) {
    it(`quarter bridge at ${eps} microstrain inverts the exact divider, non-linearity included`, () => {
      const x = GF * eps * 1e-6;
      const vr = bridgeFromArms(R * (1 + x), R, R, R);
      expect(bridgeStrainMicro(vr, GF, 0)).toBeCloseTo(eps, 9);
      // The linear formula 4 vr / GF is wrong by the non-linearity term, about GF eps / 2 relative.
      const linear = (4e6 * vr) / GF;
      expect(Math.abs(linear - eps) / Math.abs(eps)).toBeCloseTo((GF * Math.abs(eps) * 1e-6) / 2, 4);
    });
  }

  it('half bridge with opposite strains in adjacent arms is linear: eps = 2 vr / GF', () => {
    const x = GF * 800e-6;
    const vr = bridgeFromArms(R * (1 + x), R * (1 - x), R, R);
    expect(bridgeStrainMicro(vr, GF, 1)).toBeCloseTo(800, 9);
  });

  it('full bridge with four active arms is linear: eps = vr / GF', () => {
    const x = GF * -650e-6;
    const vr = bridgeFromArms(R * (1 + x), R * (1 - x), R * (1 + x), R * (1 - x));
    expect(bridgeStrainMicro(vr, GF, 2)).toBeCloseTo(-650, 9);
  });

  it('bridgeOutputRatio is the inverse of bridgeStrainMicro', () => {
    for (const code of [0, 1, 2]) expect(bridgeStrainMicro(bridgeOutputRatio(1234.5, GF, code), GF, code)).toBeCloseTo(1234.5, 8);
  });

  it('lead resistance in series desensitises by Rg / (Rg + RL)', () => {
    // 2-wire quarter bridge, lead resistance RL in the active arm (strain-gauge literature; from memory).
    const RL = 3.2, x = GF * 1000e-6;
    const vr = bridgeFromArms(R * (1 + x) + RL, R, R, R + 0); // dummy completion resistor has no lead
    const zero = bridgeFromArms(R + RL, R, R, R);
    // Relative resistance change seen by the bridge: R x / (R + RL); strain back with the lead factor.
    const seen = bridgeStrainMicro(vr - zero, GF, 0);
    expect(seen * leadWireFactor(RL, R)).toBeCloseTo(1000, 0);
    expect(leadWireFactor(RL, R)).toBeCloseTo(1 + 3.2 / 350, 12);
  });

  it('gauge factor changes linearly with temperature', () => {
    // Linear model GF(T) = GF_ref (1 + c (T - T_ref)), c the fractional change per degC (common practice).
    expect(gaugeFactorAt(2.0, 1e-4, 74, 24)).toBeCloseTo(2.01, 12);
  });
});

describe('thermal effects', () => {
  it('thermal strain is alpha dT on the normal components and zero on shear', () => {
    const out = thermalStrainVector([12e-6, 12e-6, 12e-6], 25, new Float64Array(6));
    expect(Array.from(out)).toEqual([300, 300, 300, 0, 0, 0].map((v) => expect.closeTo(v, 9)));
  });

  it('a fully restrained isotropic block heated by dT carries -E alpha dT / (1 - 2 nu) on each normal', () => {
    // Total strain zero, mechanical strain -alpha dT: sigma = C (0 - alpha dT) (thermoelasticity, common practice).
    const E = 210000, nu = 0.3, a = 12e-6, dT = 30;
    const c = isotropicStiffness(E, nu);
    const th = thermalStrainVector([a, a, a], dT, new Float64Array(6));
    const sxx = -(c[0] * th[0] + c[1] * th[1] + c[2] * th[2]) * 1e-6;
    expect(sxx).toBeCloseTo((-E * a * dT) / (1 - 2 * nu), 9); // -189 MPa
    expect(sxx).toBeCloseTo(-189, 6);
  });

  it('thermal output is referenced to the zero-reading temperature', () => {
    const c = Float64Array.of(-24, 1.8, -0.045, 0.00025);
    expect(thermalOutputMicro(c, 14, 14)).toBe(0);
    expect(thermalOutputMicro(c, 30, 14)).toBeCloseTo(horner(c, 30) - horner(c, 14), 12);
    expect(horner(c, 10)).toBeCloseTo(-24 + 18 - 4.5 + 0.25, 12);
  });

  it('vibrating-wire digits are f^2 / 1000', () => {
    // Linear "digits" unit of vibrating-wire readouts (common practice).
    expect(vibratingWireDigits(800)).toBe(640);
  });

  it('microstrain per digit of a taut wire from first principles, and the demo constant', () => {
    // Fundamental frequency of a taut string f = (1 / 2L) sqrt(sigma / rho) (vibrating string; common practice).
    // Wire length 0.140 m, steel density 7850 kg/m3 and modulus 200 GPa are INVENTED for the demo.
    const L = 0.14, rho = 7850, E = 200e9;
    const k = tautWireMicroPerDigit(L, rho, E);
    expect(k).toBeCloseTo((4 * 0.0196 * 7850 * 1000 / 200e9) * 1e6, 12); // = 3.0772 microstrain per digit
    // Physical check: a wire at strain eps vibrates at f; its digits times k give eps back.
    for (const strainMicro of [800, 2000, 3100]) {
      const f = (1 / (2 * L)) * Math.sqrt((E * strainMicro * 1e-6) / rho);
      expect(k * vibratingWireDigits(f)).toBeCloseTo(strainMicro, 9);
    }
    // The demo structure's constant is this one, rounded to five figures.
    const demo = parse(readFileSync('config/brannock-mere.yaml', 'utf8')).gauges.find((g: { id: string }) => g.id === 'ec-m1-1');
    expect(demo.signal.micro_per_digit).toBeCloseTo(k, 4);
  });
});
