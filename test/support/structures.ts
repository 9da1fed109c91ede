import { compileStructure, type CompiledStructure } from '../../src/config/compile.js';

/** Builds small structure documents for tests; every field can be overridden. */
export const STEEL = { id: 'steel', kind: 'isotropic', E_MPa: 210000, nu: 0.3, alpha_per_degC: 12e-6, yield_strength_MPa: 355 };

export function microGauge(id: string, channel: string, extra: Record<string, unknown> = {}) {
  return {
    id, kind: 'bonded_foil', channel: { logger: 'lg', channel }, signal: { unit: 'microstrain' },
    zero_reading: 0, zero_temperature_degC: 20, ...extra,
  };
}

export function baseDoc(groups: unknown[], gauges: unknown[], extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    schema_version: 1,
    structure: { id: 'test-structure', name: 'Test structure', location: 'test bench' },
    materials: [STEEL],
    loggers: [{ id: 'lg', expected_interval_s: 1 }],
    temperature_sensors: [],
    gauges,
    groups,
    ...extra,
  };
}

/** A plane rosette of microstrain gauges at the given angles, no thermal output, no transverse sensitivity. */
export function planeRosetteDoc(angles: number[], gaugeExtra: Record<string, unknown> = {}, material: unknown = STEEL) {
  const gauges = angles.map((_, i) => microGauge(`g${i}`, `ch${i}`, gaugeExtra));
  const group = {
    id: 'r1', kind: 'plane_rosette', material: (material as { id: string }).id, zone: 'z', location: 'test',
    elements: angles.map((a, i) => ({ gauge: `g${i}`, angle_deg: a })),
  };
  return baseDoc([group], gauges, { materials: [material] });
}

export function compileOrThrow(doc: unknown): CompiledStructure {
  const r = compileStructure(doc);
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.reason}`).join('\n'));
  return r.structure;
}
