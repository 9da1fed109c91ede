import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { companionReading, readingsFromStress } from '../../src/mechanics/forward-model.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import { baseDoc, compileOrThrow, STEEL } from '../support/structures.js';

/**
 * Property: a random stress state and temperature, pushed forward through the compliance, the
 * gauge directions, transverse sensitivity, thermal output and bridge equations, then back through
 * the core, returns the stress. Tolerance 1e-6 MPa absolute + 1e-9 relative (double precision
 * through the bridge non-linearity and the pseudo-inverse).
 */
// Round constants of the order of a carbon/epoxy ply (from memory): a round trip needs no reference values.
const ORTHO = {
  id: 'ortho', kind: 'orthotropic', E1_MPa: 140000, E2_MPa: 10000, E3_MPa: 10000, nu12: 0.3, nu13: 0.3, nu23: 0.45,
  G12_MPa: 5000, G13_MPa: 5000, G23_MPa: 3448, alpha_per_degC: [-0.5e-6, 30e-6, 30e-6],
};
const CONCRETE = { id: 'concrete', kind: 'isotropic', E_MPa: 33000, nu: 0.2, alpha_per_degC: 10e-6, tensile_strength_MPa: 2.9 };

function bridgeGauge(id: string, ch: string, zero: number, gaugeFactor = 2.08) {
  return {
    id, kind: 'bonded_foil', channel: { logger: 'lg', channel: ch },
    signal: { unit: 'mV/V', gauge_factor: gaugeFactor, bridge: 'quarter', lead_resistance_ohm: 2.4, gauge_factor_temp_coeff_per_degC: 9e-5 },
    zero_reading: zero, zero_temperature_degC: 12, transverse_sensitivity: 0.012,
    thermal_output: { coefficients_micro: [-24, 1.8, -0.045, 0.00025], characterised_on_alpha_per_degC: 10.8e-6, gauge_factor: 2.0 },
  };
}

function vwGauge(id: string, ch: string, zero: number) {
  return {
    id, kind: 'vibrating_wire', channel: { logger: 'lg', channel: ch },
    // Invented wire constants (the demo wire's 3.0772 microstrain per digit; multiplier and expansion invented).
    signal: { unit: 'Hz', micro_per_digit: 3.0772, calibration_multiplier: 0.994, wire_alpha_per_degC: 11.7e-6 },
    zero_reading: zero, zero_temperature_degC: 12,
  };
}

function planeDoc(material: { id: string }, orientation: Record<string, unknown> = {}) {
  const angles = [0, 60, 120, 30];
  // Two gauge batches (different gauge factors): elements share temperature terms only within a batch.
  const gauges = angles.map((_, i) => bridgeGauge(`g${i}`, `c${i}`, 0.01 * i, i % 2 === 0 ? 2.08 : 2.13));
  return baseDoc([{
    id: 'p', kind: 'plane_rosette', material: material.id, zone: 'z', location: 'bench',
    elements: angles.map((a, i) => ({ gauge: `g${i}`, angle_deg: a })), ...orientation,
  }], gauges, { materials: [material] });
}

function solidDoc(material: { id: string }, withCompanion: boolean, orientation: Record<string, unknown> = {}) {
  const dirs = [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [1, 0, 1], [1, -1, 0.5]];
  const gauges: Record<string, unknown>[] = dirs.map((_, i) => vwGauge(`v${i}`, `c${i}`, 780 + 5 * i));
  // The companion's transverse sensitivity is part of its response to the free strain.
  if (withCompanion) gauges.push({ ...vwGauge('free', 'cf', 801), transverse_sensitivity: 0.02 });
  return baseDoc([{
    id: 's', kind: 'solid_cluster', material: material.id, zone: 'z', location: 'bench',
    elements: dirs.map((d, i) => ({ gauge: `v${i}`, direction: d })),
    ...(withCompanion ? { companion_gauge: 'free' } : {}), ...orientation,
  }], gauges, { materials: [material] });
}

const mpa = (limit: number) => fc.double({ min: -limit, max: limit, noNaN: true });
const tempC = fc.double({ min: -25, max: 55, noNaN: true });

function roundTrip(doc: unknown, stress: number[], t: number, free: number) {
  const g = compileOrThrow(doc).groups[0].model;
  const raw = readingsFromStress(g, stress, t, free, new Float64Array(g.m));
  const out = createGroupOutput(g.m);
  evaluateGroup(g, raw, t, g.companion ? companionReading(g, free, t) : Number.NaN, out);
  return out;
}

function expectStress(out: ReturnType<typeof createGroupOutput>, idx: number[], stress: number[]) {
  idx.forEach((k, i) => expect(Math.abs(out.stressMPa[k] - stress[i])).toBeLessThan(1e-6 + 1e-9 * Math.abs(stress[i])));
  expect(out.flags).toBe(0);
}

describe('round trip stress -> readings -> stress', () => {
  for (const material of [STEEL, ORTHO]) {
    it(`plane rosette with bridges, thermal output and transverse sensitivity (${material.id})`, () => {
      fc.assert(fc.property(mpa(300), mpa(300), mpa(150), tempC, (sx, sy, txy, t) => {
        expectStress(roundTrip(planeDoc(material), [sx, sy, txy], t, Number.NaN), [0, 1, 5], [sx, sy, txy]);
      }), { numRuns: 200 });
    });
    it(`solid cluster of vibrating-wire gauges (${material.id})`, () => {
      // Stress range kept inside the vibrating wire's reading range (the soft orthotropic axes strain more).
      const limit = material === STEEL ? 20 : 4;
      fc.assert(fc.property(fc.array(mpa(limit), { minLength: 6, maxLength: 6 }), tempC, (s, t) => {
        expectStress(roundTrip(solidDoc(material, false), s, t, Number.NaN), [0, 1, 2, 3, 4, 5], s);
      }), { numRuns: 200 });
    });
  }

  it('plane rosette on an orthotropic plate oriented at 35 degrees', () => {
    fc.assert(fc.property(mpa(300), mpa(300), mpa(150), tempC, (sx, sy, txy, t) => {
      expectStress(roundTrip(planeDoc(ORTHO, { material_angle_deg: 35 }), [sx, sy, txy], t, Number.NaN), [0, 1, 5], [sx, sy, txy]);
    }), { numRuns: 200 });
  });

  it('solid cluster in an orthotropic block rotated z 25, y -40, x 70 degrees', () => {
    fc.assert(fc.property(fc.array(mpa(4), { minLength: 6, maxLength: 6 }), tempC, (s, t) => {
      const doc = solidDoc(ORTHO, false, { material_rotation_deg: { about_z: 25, about_y: -40, about_x: 70 } });
      expectStress(roundTrip(doc, s, t, Number.NaN), [0, 1, 2, 3, 4, 5], s);
    }), { numRuns: 200 });
  });

  it('solid cluster with an unstressed companion gauge (free strain from shrinkage and temperature)', () => {
    fc.assert(fc.property(fc.array(mpa(15), { minLength: 6, maxLength: 6 }), tempC, fc.double({ min: -600, max: 300, noNaN: true }), (s, t, free) => {
      expectStress(roundTrip(solidDoc(CONCRETE, true), s, t, free), [0, 1, 2, 3, 4, 5], s);
    }), { numRuns: 200 });
  });
});
