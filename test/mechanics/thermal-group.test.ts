import { describe, expect, it } from 'vitest';
import { foil, singleGroup, THERMAL_CASES, to } from '../reference/thermal-cases.js';

// The hand-written cases (with their sources) are in test/reference/thermal-cases.ts, shared with
// `npm run check:references`.
describe('temperature compensation: hand-written reference cases', () => {
  for (const c of THERMAL_CASES) {
    it(`${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }
});

describe('temperature compensation at group level', () => {
  it('rescaling the curve with the nominal gauge factor would be far off the tolerance: the case can fail', () => {
    // Rescaling with the nominal 2.1 instead of GF(55) = 2.1 x 1.04 = 2.184 would leave
    // TO x 2.0 x (1/2.1 - 1/2.184) = -13.25 x 0.0366 = -0.485 microstrain, 0.10 MPa.
    const left = to(55) * 2.0 * (1 / 2.1 - 1 / 2.184);
    expect(left).toBeCloseTo(-0.485, 3);
  });

  it('flags a missing temperature and computes without thermal correction', () => {
    const out = singleGroup(foil(12e-6))(100, Number.NaN);
    expect(out.flags).toBe(0b10); // temperature_missing
    expect(out.axialStressMPa).toBeCloseTo(210000 * 100e-6, 9);
  });
});
