import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput, type GroupOutput } from '../../src/mechanics/group-model.js';
import { isotropicStiffness } from '../../src/mechanics/stiffness.js';
import { horner, tautWireMicroPerDigit, thermalOutputMicro, thermalStrainVector, vibratingWireDigits } from '../../src/mechanics/thermal.js';
import { baseDoc, compileOrThrow, STEEL } from '../support/structures.js';
import { digits, type ReferenceCase } from './case.js';

/** Thermal-output curve of the cases (microstrain, polynomial in degC) and the zero-reading temperature. */
export const TO = [-24, 1.8, -0.045, 0.00025];
export const T0 = 15;
export const to = (t: number) => thermalOutputMicro(Float64Array.from(TO), t, T0);

/** A single-gauge group on `material`, evaluated at (reading, degC). */
export function singleGroup(gauge: Record<string, unknown>, material: Record<string, unknown> = STEEL): (reading: number, t: number) => GroupOutput {
  const doc = baseDoc([{ id: 'one', kind: 'single', material: material.id, zone: 'z', location: 'bench', elements: [{ gauge: 'g' }] }],
    [{ id: 'g', channel: { logger: 'lg', channel: 'c' }, zero_temperature_degC: T0, ...gauge }], { materials: [material] });
  const model = compileOrThrow(doc).groups[0].model;
  return (reading, t) => {
    const out = createGroupOutput(1);
    evaluateGroup(model, Float64Array.of(reading), t, Number.NaN, out);
    return out;
  };
}

export const foil = (alphaRef: number) => ({
  kind: 'bonded_foil', signal: { unit: 'microstrain' }, zero_reading: 0,
  thermal_output: { coefficients_micro: TO, characterised_on_alpha_per_degC: alphaRef },
});
const CONCRETE = { id: 'c', kind: 'isotropic', E_MPa: 33000, nu: 0.2, alpha_per_degC: 10e-6 };
/** Quarter-bridge gauge whose curve was recorded at GF 2.0; its own factor 2.1 at 15 degC, +1e-3 per degC (exaggerated). */
export const RESCALED_GAUGE = {
  kind: 'bonded_foil', zero_reading: 0,
  signal: { unit: 'mV/V', gauge_factor: 2.1, bridge: 'quarter', gauge_factor_temp_coeff_per_degC: 1e-3 },
  thermal_output: { coefficients_micro: TO, characterised_on_alpha_per_degC: 12e-6, gauge_factor: 2.0 },
};

const THERMO = 'thermoelasticity (common practice)';
const APPARENT = 'thermal strain and apparent strain (microstrain)';
const PLANE = 'stress components, plane and single (MPa)';
const SOLID = 'stress components, solid (MPa)';
const steelFoil = singleGroup(foil(12e-6));
const mismatched = singleGroup(foil(10.8e-6));

export const THERMAL_CASES: ReferenceCase[] = [
  ...[0, 1, 2].map((k): ReferenceCase => ({ quantity: APPARENT, label: `free expansion 12e-6 x 25 degC, normal ${k}`, source: 'thermal strain alpha dT (common practice)', expected: 300, tolerance: digits(9),
    actual: () => thermalStrainVector([12e-6, 12e-6, 12e-6], 25, new Float64Array(6))[k] })),
  { quantity: APPARENT, label: 'free expansion: no shear', source: 'thermal strain alpha dT (common practice)', expected: 0, tolerance: 1e-12,
    actual: () => thermalStrainVector([12e-6, 12e-6, 12e-6], 25, new Float64Array(6))[5] },
  // Total strain zero, mechanical strain -alpha dT: sigma = C (0 - alpha dT) = -E alpha dT / (1 - 2 nu) = -189 MPa.
  { quantity: SOLID, label: 'fully restrained steel block heated by 30 degC: s_xx', source: THERMO, expected: (-210000 * 12e-6 * 30) / (1 - 2 * 0.3), tolerance: digits(9),
    actual: () => { const c = isotropicStiffness(210000, 0.3); const th = thermalStrainVector([12e-6, 12e-6, 12e-6], 30, new Float64Array(6)); return -(c[0] * th[0] + c[1] * th[1] + c[2] * th[2]) * 1e-6; } },
  { quantity: APPARENT, label: 'thermal-output polynomial at 10 degC', source: 'the curve written out: -24 + 18 - 4.5 + 0.25', expected: -24 + 18 - 4.5 + 0.25, tolerance: digits(12),
    actual: () => horner(Float64Array.from(TO), 10) },
  // Apparent strain on a mismatched substrate = thermal output + (alpha_host - alpha_ref) dT (strain-gauge literature; common practice).
  { quantity: APPARENT, label: 'gauge characterised on 10.8e-6 on steel at 40 degC: apparent strain', source: 'apparent strain on a mismatched substrate (strain-gauge literature; common practice)', expected: to(40) + (12e-6 - 10.8e-6) * 25 * 1e6, tolerance: digits(9),
    actual: () => mismatched(to(40) + (12e-6 - 10.8e-6) * 25 * 1e6, 40).elementApparentMicro[0] },
  // Vibrating wire in free concrete: the wire expands with the host, reads (alpha_c - alpha_wire) dT = -40 microstrain.
  { quantity: APPARENT, label: 'vibrating wire in free concrete at 35 degC: apparent strain', source: 'vibrating-wire temperature correction (common practice)', expected: -40, tolerance: digits(9),
    actual: () => singleGroup({ kind: 'vibrating_wire', signal: { unit: 'digits', micro_per_digit: 3.0772, wire_alpha_per_degC: 12e-6 }, zero_reading: 640 }, CONCRETE)(640 + -40 / 3.0772, 35).elementApparentMicro[0] },
  { quantity: 'vibrating wire (digits, microstrain per digit)', label: 'digits of 800 Hz', source: 'digits = f^2 / 1000 (common practice)', expected: 640, tolerance: 0.5e-12,
    actual: () => vibratingWireDigits(800) },
  // f = (1 / 2L) sqrt(sigma / rho), so strain = 4 L^2 rho f^2 / E: per digit 4 x 0.0196 x 7850 x 1000 / 200e9 (invented wire, inputs only).
  { quantity: 'vibrating wire (digits, microstrain per digit)', label: 'taut wire 0.14 m, 7850 kg/m3, 200 GPa: microstrain per digit', source: 'vibrating string f = (1/2L) sqrt(sigma/rho) (common practice)', expected: ((4 * 0.0196 * 7850 * 1000) / 200e9) * 1e6, tolerance: digits(12),
    actual: () => tautWireMicroPerDigit(0.14, 7850, 200e9) },
  // A free member has no stress whatever its temperature.
  ...[-10, 15, 42].map((t): ReferenceCase => ({ quantity: PLANE, label: `free steel member, steel-characterised gauge, ${t} degC`, source: THERMO, expected: 0, tolerance: digits(9),
    actual: () => steelFoil(to(t), t).axialStressMPa })),
  { quantity: PLANE, label: 'free steel member, gauge characterised on 10.8e-6, 40 degC', source: 'apparent strain on a mismatched substrate (common practice)', expected: 0, tolerance: digits(9),
    actual: () => mismatched(to(40) + (12e-6 - 10.8e-6) * 25 * 1e6, 40).axialStressMPa },
  // sigma = -E alpha dT for a bar restrained along its axis: -210000 x 12e-6 x 30 = -75.6 MPa.
  { quantity: PLANE, label: 'restrained steel bar heated by 30 degC', source: 'thermal stress of a restrained bar (common practice)', expected: -75.6, tolerance: digits(9),
    actual: () => steelFoil(-12e-6 * 30 * 1e6 + to(45), 45).axialStressMPa },
  { quantity: PLANE, label: 'vibrating wire in free concrete at 35 degC', source: 'vibrating-wire temperature correction (common practice)', expected: 0, tolerance: digits(9),
    actual: () => singleGroup({ kind: 'vibrating_wire', signal: { unit: 'digits', micro_per_digit: 3.0772, wire_alpha_per_degC: 12e-6 }, zero_reading: 640 }, CONCRETE)(640 + -40 / 3.0772, 35).axialStressMPa },
  // Quarter bridge, dR/R = 2.0 x (TO(T) - TO(T0)) purely thermal; vr = x / (4 + 2x) (Wheatstone divider).
  { quantity: PLANE, label: 'free steel member, quarter bridge, curve rescaled to GF(55 degC)', source: 'Wheatstone divider (Dally and Riley, from memory); thermoelasticity (common practice)', expected: 0, tolerance: digits(9),
    actual: () => { const x = 2.0 * to(55) * 1e-6; return singleGroup(RESCALED_GAUGE)((x / (4 + 2 * x)) * 1e3, 55).axialStressMPa; } },
];
