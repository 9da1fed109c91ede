import { readFileSync } from 'node:fs';
import { parse } from 'yaml';
import { describe, expect, it } from 'vitest';
import { bridgeOutputRatio, bridgeStrainMicro } from '../../src/mechanics/bridge.js';
import { tautWireMicroPerDigit, thermalOutputMicro, horner, vibratingWireDigits } from '../../src/mechanics/thermal.js';
import { BRIDGE_CASES, BRIDGE_GF, BRIDGE_R, bridgeFromArms, QUARTER_STRAINS } from '../reference/bridge-cases.js';

// The hand-written cases (with their sources) are in test/reference/bridge-cases.ts and
// thermal-cases.ts (the latter checked in thermal-group.test.ts), shared with `npm run check:references`.
describe('Wheatstone bridge equations: hand-written reference cases', () => {
  for (const c of BRIDGE_CASES) {
    it(`${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }

  it('the quarter bridge is not linear: 4 vr / GF is wrong by about GF eps / 2 relative', () => {
    for (const eps of QUARTER_STRAINS) {
      const vr = bridgeFromArms(BRIDGE_R * (1 + BRIDGE_GF * eps * 1e-6), BRIDGE_R, BRIDGE_R, BRIDGE_R);
      const linear = (4e6 * vr) / BRIDGE_GF;
      expect(Math.abs(linear - eps) / Math.abs(eps)).toBeCloseTo((BRIDGE_GF * Math.abs(eps) * 1e-6) / 2, 4);
    }
  });

  it('bridgeOutputRatio is the inverse of bridgeStrainMicro', () => {
    for (const code of [0, 1, 2]) expect(bridgeStrainMicro(bridgeOutputRatio(1234.5, BRIDGE_GF, code), BRIDGE_GF, code)).toBeCloseTo(1234.5, 8);
  });
});

describe('thermal effects', () => {
  it('thermal output is referenced to the zero-reading temperature', () => {
    const c = Float64Array.of(-24, 1.8, -0.045, 0.00025);
    expect(thermalOutputMicro(c, 14, 14)).toBe(0);
    expect(thermalOutputMicro(c, 30, 14)).toBeCloseTo(horner(c, 30) - horner(c, 14), 12);
  });

  it('a taut wire\'s digits times its microstrain per digit give its strain back; the demo constant is this one', () => {
    // Fundamental frequency of a taut string f = (1 / 2L) sqrt(sigma / rho) (vibrating string; common practice).
    // Wire length 0.140 m, steel density 7850 kg/m3 and modulus 200 GPa are INVENTED for the demo.
    const L = 0.14, rho = 7850, E = 200e9;
    const k = tautWireMicroPerDigit(L, rho, E);
    for (const strainMicro of [800, 2000, 3100]) {
      const f = (1 / (2 * L)) * Math.sqrt((E * strainMicro * 1e-6) / rho);
      expect(k * vibratingWireDigits(f)).toBeCloseTo(strainMicro, 9);
    }
    // The demo structure's constant is this one, rounded to five figures.
    const demo = parse(readFileSync('config/brannock-mere.yaml', 'utf8')).gauges.find((g: { id: string }) => g.id === 'ec-m1-1');
    expect(demo.signal.micro_per_digit).toBeCloseTo(k, 4);
  });
});
