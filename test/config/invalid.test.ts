import { describe, expect, it } from 'vitest';
import { compileStructure } from '../../src/config/compile.js';
import { baseDoc, microGauge, planeRosetteDoc } from '../support/structures.js';

/** Applies a change to a valid document and returns the rendered problems. */
function problems(mutate: (doc: any) => void, doc: any = planeRosetteDoc([0, 45, 90])): string[] {
  const copy = structuredClone(doc);
  mutate(copy);
  const r = compileStructure(copy);
  if (r.ok) return [];
  return r.problems.map((p) => `${p.path}: ${p.reason}`);
}

describe('invalid configurations name the path and the reason', () => {
  it('accepts the valid base document', () => {
    expect(problems(() => {})).toEqual([]);
  });

  const cases: Array<[string, (d: any) => void, string]> = [
    ['a wrong type', (d) => { d.groups[0].elements[1].angle_deg = '45'; }, 'groups[0].elements[1].angle_deg: expected a number, received string'],
    ['a missing field', (d) => { delete d.groups[0].zone; }, 'groups[0].zone: expected a string, received nothing (the field is missing)'],
    ['an unknown key', (d) => { d.gauges[0].gauge_factr = 2; }, 'gauges[0]: unknown key "gauge_factr"'],
    ['an impossible Poisson ratio', (d) => { d.materials[0].nu = 0.5; }, 'materials[0].nu: Poisson ratio must be < 0.5 (0.5 is incompressible: no finite stiffness)'],
    ['an unknown material', (d) => { d.groups[0].material = 'alu'; }, 'groups[0].material: unknown material "alu"'],
    ['a duplicate gauge id', (d) => { d.gauges[1].id = 'g0'; }, 'gauges[1].id: duplicate id "g0" (first used at gauges[0])'],
    ['a channel used twice', (d) => { d.gauges[2].channel.channel = 'ch0'; }, 'gauges[2].channel.channel: channel "ch0" of logger "lg" is already used by gauges[0]'],
    ['too few rosette elements', (d) => { d.groups[0].elements.pop(); }, 'groups[0].elements: needs at least 3 entries'],
    ['rosette directions that determine nothing', (d) => { d.groups[0].elements.forEach((e: any, i: number) => { e.angle_deg = i * 180; }); },
      'groups[0].elements: the element directions do not determine the strain state (plane rosettes need three distinct directions modulo 180 degrees; solid clusters six independent ones)'],
    ['a signal that does not fit the gauge kind', (d) => { d.gauges[0].kind = 'vibrating_wire'; }, 'gauges[0].signal.unit: a vibrating-wire gauge reads "Hz" or "digits"'],
    ['an unknown group kind', (d) => { d.groups[0].kind = 'triangle'; }, 'groups[0].kind: unknown kind, expected one of "plane_rosette", "solid_cluster", "single"'],
    ['an unknown bridge arrangement', (d) => { d.gauges[0].signal = { unit: 'mV/V', gauge_factor: 2, bridge: 'third' }; },
      'gauges[0].signal.bridge: expected one of "quarter", "half", "full", received "third"'],
    ['an unknown logger', (d) => { d.gauges[0].channel.logger = 'lg-x'; }, 'gauges[0].channel.logger: unknown logger "lg-x"'],
    ['gauges zeroed at different temperatures', (d) => { d.gauges[1].zero_temperature_degC = 25; },
      'groups[0].elements: all gauges of a group must share one zero_temperature_degC (they share one reference state); found 20, 25'],
    ['an asymmetric stiffness matrix', (d) => {
      const c = [[1, 0.1, 0.1, 0, 0, 0], [0.1, 1, 0.1, 0, 0, 0], [0.1, 0.1, 1, 0, 0, 0], [0, 0, 0, 0.4, 0, 0], [0, 0, 0, 0, 0.4, 0], [0.2, 0, 0, 0, 0, 0.4]];
      d.materials[0] = { id: 'steel', kind: 'stiffness_matrix', stiffness_MPa: c.map((r) => r.map((v) => v * 1e5)), alpha_per_degC: [1e-5, 1e-5, 1e-5] };
    }, 'materials[0].stiffness_MPa: the stiffness matrix must be symmetric'],
    ['a gauge in two groups', (d) => { d.groups.push({ ...d.groups[0], id: 'r2' }); }, 'groups[1].elements[0].gauge: gauge "g0" already belongs to groups[0]'],
    ['a wrong schema version', (d) => { d.schema_version = 2; }, 'schema_version: expected one of 1, received 2'],
    // Renamed keys name their successor.
    ['the old residual limit key', (d) => { d.groups[0].residual_limit_micro = 20; },
      'groups[0].residual_limit_micro: renamed to "fit_std_error_limit_micro": it compares the standard error of the fit (fit_std_error_micro), not the residual RMS'],
    ['a vibrating-wire gauge_factor', (d) => { d.gauges[0] = { ...d.gauges[0], kind: 'vibrating_wire', signal: { unit: 'Hz', gauge_factor: 3, wire_alpha_per_degC: 1e-5 } }; },
      'gauges[0].signal.gauge_factor: renamed to "micro_per_digit": microstrain per digit of the taut wire'],
    ['a vibrating-wire batch_factor', (d) => { d.gauges[0] = { ...d.gauges[0], kind: 'vibrating_wire', signal: { unit: 'Hz', micro_per_digit: 3, batch_factor: 0.9, wire_alpha_per_degC: 1e-5 } }; },
      'gauges[0].signal.batch_factor: renamed to "calibration_multiplier": the correction from the gauge\'s own calibration'],
    // Keys that their other settings would make inert are refused.
    ['a thermal-output curve on a vibrating-wire gauge', (d) => {
      d.gauges[0] = { ...d.gauges[0], kind: 'vibrating_wire', signal: { unit: 'Hz', micro_per_digit: 3, wire_alpha_per_degC: 1e-5 }, thermal_output: { coefficients_micro: [1], characterised_on_alpha_per_degC: 1e-5 } };
    }, 'gauges[0].thermal_output: a vibrating-wire gauge has no thermal-output curve: its temperature effect is the wire\'s own expansion, given by signal.wire_alpha_per_degC (remove thermal_output)'],
    ['lead resistance on a half bridge', (d) => { d.gauges[0].signal = { unit: 'mV/V', gauge_factor: 2, bridge: 'half', lead_resistance_ohm: 1.5 }; },
      'gauges[0].signal.lead_resistance_ohm: the lead-wire correction 1 + RL/Rg holds for a 2-wire quarter bridge only; for a half bridge correct the leads in the wiring (remote sense) or by shunt calibration, and remove the key'],
    ['a curve gauge factor on a microstrain signal', (d) => { d.gauges[0].thermal_output = { coefficients_micro: [1], characterised_on_alpha_per_degC: 1e-5, gauge_factor: 2 }; },
      'gauges[0].thermal_output.gauge_factor: the logger reports microstrain with a gauge factor this file does not know, so the curve cannot be rescaled here: rescale it before entering it, or give the signal in mV/V'],
    ['a residual limit on a group without redundancy', (d) => { d.groups[0].fit_std_error_limit_micro = 10; },
      'groups[0].fit_std_error_limit_micro: the group has 3 element(s) for 3 unknown(s): no redundancy, so no residual to compare (remove the key, or add elements)'],
  ];

  for (const [name, mutate, expected] of cases) {
    it(name, () => expect(problems(mutate)).toContain(expected));
  }

  it('an orthotropic set that no real material has', () => {
    const ortho = { id: 'steel', kind: 'orthotropic', E1_MPa: 1000, E2_MPa: 1000, E3_MPa: 1000, nu12: 1.5, nu13: 0.3, nu23: 0.3, G12_MPa: 400, G13_MPa: 400, G23_MPa: 400, alpha_per_degC: [1e-5, 1e-5, 1e-5] };
    const out = problems((d) => { d.materials[0] = ortho; });
    expect(out).toHaveLength(1);
    expect(out[0]).toMatch(/^materials\[0\]: the engineering constants give a compliance that is not positive definite/);
  });

  it('a solid element with a zero direction', () => {
    const gauges = [0, 1, 2, 3, 4, 5].map((i) => microGauge(`g${i}`, `c${i}`));
    const dirs = [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [0, 0, 0]];
    const doc = baseDoc([{ id: 's', kind: 'solid_cluster', material: 'steel', zone: 'z', location: 'x', elements: dirs.map((v, i) => ({ gauge: `g${i}`, direction: v })) }], gauges);
    expect(problems(() => {}, doc)).toContain('groups[0].elements[5].direction: the direction must not be the zero vector');
  });

  it('reports every problem at once', () => {
    const out = problems((d) => { d.materials[0].nu = 0.7; d.groups[0].elements[0].angle_deg = 'x'; d.gauges[0].extra = 1; });
    expect(out.length).toBeGreaterThanOrEqual(3);
  });
});
