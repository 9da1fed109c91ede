import { describe, expect, it } from 'vitest';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import { thermalOutputMicro } from '../../src/mechanics/thermal.js';
import { baseDoc, compileOrThrow, STEEL } from '../support/structures.js';

const TO = [-24, 1.8, -0.045, 0.00025];
const T0 = 15;

function singleGroup(gauge: Record<string, unknown>, material: Record<string, unknown> = STEEL) {
  const doc = baseDoc([{ id: 'one', kind: 'single', material: material.id, zone: 'z', location: 'bench', elements: [{ gauge: 'g' }] }],
    [{ id: 'g', channel: { logger: 'lg', channel: 'c' }, zero_temperature_degC: T0, ...gauge }], { materials: [material] });
  const model = compileOrThrow(doc).groups[0].model;
  return (reading: number, t: number) => {
    const out = createGroupOutput(1);
    evaluateGroup(model, Float64Array.of(reading), t, Number.NaN, out);
    return out;
  };
}

const foil = (alphaRef: number) => ({
  kind: 'bonded_foil', signal: { unit: 'microstrain' }, zero_reading: 0,
  thermal_output: { coefficients_micro: TO, characterised_on_alpha_per_degC: alphaRef },
});

describe('temperature compensation at group level', () => {
  const to = (t: number) => thermalOutputMicro(Float64Array.from(TO), t, T0);

  it('a free steel member read by a steel-characterised gauge shows no stress', () => {
    // A free member has no stress whatever its temperature (thermoelasticity, common practice).
    const evalAt = singleGroup(foil(12e-6));
    for (const t of [-10, 15, 42]) expect(evalAt(to(t), t).axialStressMPa).toBeCloseTo(0, 9);
  });

  it('a gauge characterised on another material is corrected by (alpha_host - alpha_ref) dT', () => {
    // Apparent strain on a mismatched substrate = thermal output + (alpha_host - alpha_ref) dT (strain-gauge literature; common practice).
    const evalAt = singleGroup(foil(10.8e-6));
    const t = 40;
    const reading = to(t) + (12e-6 - 10.8e-6) * (t - T0) * 1e6;
    const out = evalAt(reading, t);
    expect(out.axialStressMPa).toBeCloseTo(0, 9);
    expect(out.elementApparentMicro[0]).toBeCloseTo(reading, 9);
  });

  it('a fully restrained bar heated by dT carries -E alpha dT: total strain zero is not zero stress', () => {
    // sigma = -E alpha dT for a bar restrained along its axis (thermal stress, common practice).
    const evalAt = singleGroup(foil(12e-6));
    const t = 45, dT = t - T0;
    // Mechanical strain along the bar is -alpha dT; the self-compensated gauge reads it plus its thermal output.
    const reading = -12e-6 * dT * 1e6 + to(t);
    const out = evalAt(reading, t);
    expect(out.axialStressMPa).toBeCloseTo(-210000 * 12e-6 * dT, 9); // -75.6 MPa
    expect(out.axialStressMPa).toBeCloseTo(-75.6, 9);
  });

  it('a vibrating-wire gauge in free concrete reads (alpha_concrete - alpha_wire) dT and shows no stress', () => {
    // Vibrating-wire temperature correction (common practice): the wire expands with the host.
    // Wire constants invented (3.0772 microstrain per digit, 12e-6 per degC).
    const concrete = { id: 'c', kind: 'isotropic', E_MPa: 33000, nu: 0.2, alpha_per_degC: 10e-6 };
    const evalAt = singleGroup({ kind: 'vibrating_wire', signal: { unit: 'digits', micro_per_digit: 3.0772, wire_alpha_per_degC: 12e-6 }, zero_reading: 640 }, concrete);
    const t = 35;
    const apparentMicro = (10e-6 - 12e-6) * (t - T0) * 1e6; // -40 microstrain
    const out = evalAt(640 + apparentMicro / 3.0772, t);
    expect(out.axialStressMPa).toBeCloseTo(0, 9);
    expect(out.elementApparentMicro[0]).toBeCloseTo(-40, 9);
  });

  it('rescales a bridge gauge\'s thermal-output curve by the gauge factor at the temperature', () => {
    // A free steel member, quarter bridge, curve recorded with the instrument at GF 2.0 on steel; the
    // gauge's own factor is 2.1 at 15 degC, +1e-3 per degC (exaggerated so that the effect is large).
    // Its relative resistance change since zero is purely thermal: dR/R = 2.0 x (TO(T) - TO(T0)).
    // Quarter bridge: vr = x / (4 + 2x) with x = dR/R (Wheatstone divider; Dally and Riley, from memory).
    const gauge = {
      kind: 'bonded_foil', zero_reading: 0,
      signal: { unit: 'mV/V', gauge_factor: 2.1, bridge: 'quarter', gauge_factor_temp_coeff_per_degC: 1e-3 },
      thermal_output: { coefficients_micro: TO, characterised_on_alpha_per_degC: 12e-6, gauge_factor: 2.0 },
    };
    const evalAt = singleGroup(gauge);
    const t = 55;
    const x = 2.0 * to(t) * 1e-6;
    const vrMilli = (x / (4 + 2 * x)) * 1e3;
    expect(evalAt(vrMilli, t).axialStressMPa).toBeCloseTo(0, 9);
    // Rescaling with the nominal 2.1 instead of GF(55) = 2.1 x 1.04 = 2.184 would leave
    // TO x 2.0 x (1/2.1 - 1/2.184) = -13.25 x 0.0366 = -0.485 microstrain, 0.10 MPa: far above the tolerance.
    const left = to(t) * 2.0 * (1 / 2.1 - 1 / 2.184);
    expect(left).toBeCloseTo(-0.485, 3);
  });

  it('flags a missing temperature and computes without thermal correction', () => {
    const evalAt = singleGroup(foil(12e-6));
    const out = evalAt(100, Number.NaN);
    expect(out.flags).toBe(0b10); // temperature_missing
    expect(out.axialStressMPa).toBeCloseTo(210000 * 100e-6, 9);
  });
});
