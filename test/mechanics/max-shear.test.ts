import { describe, expect, it } from 'vitest';
import { STRESS_CASES } from '../reference/stress-cases.js';

// Hand-written cases of a 0/45/90 rosette on steel read under plane stress (test/reference/stress-cases.ts,
// shared with `npm run check:references`): max shear in the plane and on any plane, Tresca, and the
// stress components back from the readings.
describe('maximum shear stress: in the plane and on any plane', () => {
  for (const c of STRESS_CASES.filter((x) => /max shear|Tresca|stress components/.test(x.quantity) && !/principals 100, 0, -50/.test(x.label))) {
    it(`${c.quantity}: ${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }
  it('same-sign principal stresses: the absolute maximum is out of the plane, above the in-plane one', () => {
    const inPlane = STRESS_CASES.find((c) => c.quantity === 'max shear in plane (MPa)' && c.label === 'same-sign principals 100, 40')!;
    const abs = STRESS_CASES.find((c) => c.quantity === 'max shear absolute (MPa)' && c.label === 'same-sign principals 100, 40')!;
    expect(abs.actual() - inPlane.actual()).toBeGreaterThan(19);
  });
});
