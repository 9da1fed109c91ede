/**
 * Benchmark-only structure: one 32-channel logger on the invented Brannock Mere Crossing, reading
 * ten 3-element rectangular rosettes (ch01..ch30, microstrain) and two thermocouples (t1, t2).
 * Built in code so the benchmark needs no file of its own; never used outside bench/.
 */
import type { CompiledStructure } from '../../src/config/compile.js';
import { compileStructure } from '../../src/config/compile.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';

/** Logger id of the benchmark logger. */
export const BENCH_LOGGER = 'lg-bench-32';
export const ROSETTES = 10;
/** Channels per scan: 3 per rosette plus 2 thermocouples. */
export const CHANNELS_PER_FRAME = ROSETTES * 3 + 2;

const channel = (k: number) => `ch${String(k + 1).padStart(2, '0')}`;

/** The structure document (plain data, validated by the normal compiler). */
export function benchStructureDoc(): Record<string, unknown> {
  const gauges: unknown[] = [];
  const groups: unknown[] = [];
  for (let r = 0; r < ROSETTES; r++) {
    const ids = [0, 1, 2].map((e) => `bench-r${r}-${'abc'[e]}`);
    ids.forEach((id, e) => gauges.push({
      id, kind: 'bonded_foil', channel: { logger: BENCH_LOGGER, channel: channel(r * 3 + e) },
      signal: { unit: 'microstrain' }, zero_reading: 0, zero_temperature_degC: 14,
      transverse_sensitivity: 0.009,
      thermal_output: { coefficients_micro: [-24.0, 1.8, -0.045, 0.00025], characterised_on_alpha_per_degC: 10.8e-6 },
      valid_range: [-5000, 5000],
    }));
    groups.push({
      id: `bench-rosette-${r}`, kind: 'plane_rosette', material: 'steel-s355', zone: r < 5 ? 'span-1' : 'span-2',
      location: `Benchmark rosette ${r} (invented)`,
      elements: ids.map((gauge, e) => ({ gauge, angle_deg: 45 * e })),
      temperature_sensors: [r % 2 === 0 ? 'tc-bench-1' : 'tc-bench-2'],
      // `last`: the thermocouples ride in the same scan, so no frame waits for temperature.
      temperature: { mode: 'last', max_age_s: 30 },
    });
  }
  return {
    schema_version: 1,
    structure: { id: 'brannock-mere', name: 'Brannock Mere Crossing (benchmark logger)', location: 'Invented demo scenario' },
    materials: [{ id: 'steel-s355', kind: 'isotropic', E_MPa: 210000, nu: 0.3, alpha_per_degC: 12.0e-6, yield_strength_MPa: 355 }],
    loggers: [{ id: BENCH_LOGGER, description: 'Benchmark 32-channel logger', expected_interval_s: 0.01 }],
    temperature_sensors: [
      { id: 'tc-bench-1', kind: 'thermocouple', channel: { logger: BENCH_LOGGER, channel: 't1' } },
      { id: 'tc-bench-2', kind: 'thermocouple', channel: { logger: BENCH_LOGGER, channel: 't2' } },
    ],
    gauges,
    groups,
    // The benchmark measures the pipeline alone; the live job requires this to be said.
    alarms: { disabled: true },
  };
}

/**
 * The summary policy of the benchmark: every group summarised each second, the raw readings too,
 * event windows of 2 s before and 5 s after a trigger (the level is above anything the bench
 * scans reach, so the rings are filled and never emptied: their cost is in, a window's is not).
 */
export const BENCH_SUMMARY_STORAGE = {
  default: { results: 'summary', interval_s: 1 },
  raw: { store: 'summary' },
  event_windows: { before_s: 2, after_s: 5, triggers: [{ id: 'bench-level', kind: 'level', quantity: 'von_mises_MPa', above: 1000 }] },
} as const;

/** Compiles the benchmark structure (with a `storage` section when given); throws listing every problem. */
export function benchStructure(storage?: unknown): CompiledStructure {
  const r = compileStructure(storage === undefined ? benchStructureDoc() : { ...benchStructureDoc(), storage });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.reason}`).join('\n'));
  return r.structure;
}

/**
 * `count` different `values` objects of a scan, as JSON text: readings that a smooth invented
 * stress history would give (forward model), rounded as a logger reports them (0.01 microstrain,
 * 0.01 degC). The publisher puts `ts` and `seq` around them at publish time.
 */
export function scanValueBodies(structure: CompiledStructure, count: number): string[] {
  const groups = structure.groupsByLogger.get(BENCH_LOGGER)!;
  const bodies: string[] = [];
  for (let k = 0; k < count; k++) {
    const tempC = 12 + 3 * Math.sin(k / 40);
    const values: Record<string, number> = {};
    groups.forEach((g, r) => {
      const stress = [60 + 20 * Math.sin(k / 3 + r), -15 + 5 * Math.cos(k / 5 + r), 25 * Math.sin(k / 7 + r)];
      const raw = readingsFromStress(g.model, stress, tempC, Number.NaN, new Float64Array(g.model.m));
      g.elementChannels.forEach((ch, i) => { values[ch] = Math.round(raw[i] * 100) / 100; });
    });
    values.t1 = Math.round(tempC * 100) / 100;
    values.t2 = Math.round((tempC + 0.4) * 100) / 100;
    bodies.push(JSON.stringify(values));
  }
  return bodies;
}
