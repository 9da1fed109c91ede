import { describe, expect, it } from 'vitest';
import { alarmLookups } from '../../src/app/lookups.js';
import { compileStructure } from '../../src/config/compile.js';
import { StructureConfigSchema } from '../../src/config/structure-schema.js';
import type { LoggerFrame } from '../../src/model/raw-message.js';
import { FrameProcessor } from '../../src/pipeline/frame-processor.js';

/**
 * No key is accepted that does nothing. Every key of the structure schema (walked from the zod
 * schema itself, so a new key without an entry below fails the test) has a perturbation of the
 * document below that either changes an output (the results of a scripted run through the frame
 * processor, and what the alarm engine is told about channels and loggers) or is refused at
 * compilation with a problem naming the key. Free-text annotations are listed as such, with where
 * they are shown. The `alarms`, `fatigue`, `rezero` and `storage` sections are their modules' schemas, tested by their own tests.
 */

type Doc = any;

const PLY = {
  id: 'ply', kind: 'orthotropic', description: 'test ply', E1_MPa: 140000, E2_MPa: 10000, E3_MPa: 9000, nu12: 0.3, nu13: 0.28, nu23: 0.45,
  G12_MPa: 5000, G13_MPa: 4800, G23_MPa: 3448, alpha_per_degC: [-0.5e-6, 30e-6, 28e-6],
  yield_strength_MPa: 900, tensile_strength_MPa: 800, compressive_strength_MPa: 700,
};
const BLOCK_C = [
  [45000, 12000, 11000, 0, 0, 0], [12000, 40000, 10500, 0, 0, 0], [11000, 10500, 38000, 0, 0, 0],
  [0, 0, 0, 14000, 0, 0], [0, 0, 0, 0, 13500, 0], [0, 0, 0, 0, 0, 15000],
];

function baseDocument(): Doc {
  const vw = (id: string, ch: string, zero: number) => ({
    id, kind: 'vibrating_wire', channel: { logger: 'lg', channel: ch },
    signal: { unit: 'Hz', micro_per_digit: 3.0772, calibration_multiplier: 1.01, wire_alpha_per_degC: 11.7e-6 },
    zero_reading: zero, zero_temperature_degC: 20, valid_range: [400, 1400],
  });
  const curve = { coefficients_micro: [-5, 0.3, -0.004], characterised_on_alpha_per_degC: 11e-6 };
  const foil = (id: string, ch: string, signal: unknown) => ({
    id, kind: 'bonded_foil', channel: { logger: 'lg', channel: ch }, signal, zero_reading: 0.01, zero_temperature_degC: 20, thermal_output: curve,
  });
  return structuredClone({
    schema_version: 1,
    structure: { id: 'walk', name: 'Key walk bench', location: 'test bench', description: 'every key once' },
    materials: [
      { id: 'steel', kind: 'isotropic', description: 'test steel', E_MPa: 210000, nu: 0.3, alpha_per_degC: 12e-6, yield_strength_MPa: 355, tensile_strength_MPa: 500, compressive_strength_MPa: 450 },
      PLY,
      { id: 'block', kind: 'stiffness_matrix', description: 'test block', stiffness_MPa: BLOCK_C, alpha_per_degC: [9e-6, 10e-6, 11e-6, 0, 0, 1e-6], yield_strength_MPa: 40, tensile_strength_MPa: 3, compressive_strength_MPa: 35 },
    ],
    loggers: [
      { id: 'lg', description: 'strain logger', expected_interval_s: 1 },
      { id: 'lt', description: 'temperature logger', expected_interval_s: 30 },
    ],
    temperature_sensors: [
      { id: 'tA', kind: 'thermocouple', description: 'sensor A', channel: { logger: 'lt', channel: 't1' }, offset_degC: 0.5, valid_range_degC: [-40, 80] },
      { id: 'tB', kind: 'rtd', description: 'sensor B', channel: { logger: 'lt', channel: 't2' } },
    ],
    gauges: [
      {
        ...foil('p0', 'p0', {
          unit: 'mV/V', gauge_factor: 2.1, bridge: 'quarter', gauge_resistance_ohm: 120, lead_resistance_ohm: 2,
          gauge_factor_temp_coeff_per_degC: 1e-4, gauge_factor_ref_temperature_degC: 25,
        }),
        description: 'gauge p0', transverse_sensitivity: 0.02, transverse_calibration_nu: 0.3,
        thermal_output: { ...curve, gauge_factor: 2.0 }, valid_range: [-5, 5],
      },
      foil('p1', 'p1', { unit: 'mV/V', gauge_factor: 2.05, bridge: 'half' }),
      foil('p2', 'p2', { unit: 'mV/V', gauge_factor: 2.08, bridge: 'full' }),
      { ...foil('p3', 'p3', { unit: 'microstrain' }), zero_reading: 3, description: 'gauge p3' },
      ...[0, 1, 2, 3, 4, 5, 6].map((i) => vw(`s${i}`, `s${i}`, 800 + i)),
      { ...vw('cs', 'cs', 640), signal: { ...vw('cs', 'cs', 0).signal, unit: 'digits' }, transverse_sensitivity: 0.02, valid_range: [300, 1000] },
      // Transverse sensitivity on the single gauge: it sees -nu eps across its grid, so nu acts.
      { ...foil('u0', 'u0', { unit: 'microstrain' }), zero_reading: 0, transverse_sensitivity: 0.02 },
      { ...foil('cu', 'cu', { unit: 'microstrain' }), kind: 'embedded_resistance', zero_reading: 0 },
    ].map((g, i) => (i === 4 ? { ...g, transverse_sensitivity: 0.01 } : g)),
    groups: [
      {
        id: 'P', kind: 'plane_rosette', material: 'block', material_angle_deg: 20, zone: 'zp', location: 'web P', temperature_sensors: ['tA'],
        temperature: { mode: 'interpolate', max_age_s: 100, max_wait_s: 40, withhold_when_missing: true }, fit_std_error_limit_micro: 1e4,
        elements: [0, 45, 90, 135].map((a, i) => ({ gauge: `p${i}`, angle_deg: a })),
      },
      {
        id: 'S', kind: 'solid_cluster', material: 'ply', material_rotation_deg: { about_z: 10, about_y: 20, about_x: 30 }, zone: 'zs', location: 'slab S',
        temperature_sensors: ['tA', 'tB'], temperature: { mode: 'last', max_age_s: 100 }, fit_std_error_limit_micro: 1e4, companion_gauge: 'cs',
        elements: [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [1, 0, 1], [1, -1, 0.5]]
          .map((d, i) => ({ gauge: `s${i}`, direction: d, ...(i === 0 ? { transverse_direction: [0, 1, 0] } : {}) })),
      },
      {
        id: 'U', kind: 'single', material: 'steel', zone: 'zu', location: 'flange U', temperature_sensors: ['tB'],
        temperature: { mode: 'last', max_age_s: 100 }, companion_gauge: 'cu', elements: [{ gauge: 'u0' }],
      },
    ],
  });
}

const T = 1_800_000_000_000;
const strain = (k: number, companions: boolean): Array<[string, number | null]> => [
  ['p0', 0.2 + 0.01 * k], ['p1', -0.1 + 0.02 * k], ['p2', 0.15 - 0.01 * k], ['p3', 40 + 7 * k],
  ...[0, 1, 2, 3, 4, 5, 6].map((i): [string, number] => [`s${i}`, 801 + i + ((k * 3 + i * 5) % 7) - 3]),
  ['cs', companions ? 641 + k : null], ['u0', k % 2 === 0 ? 120 + k : -90 - k], ['cu', companions ? 30 + 5 * k : null],
];
/**
 * Strain before any temperature (missing: the wait of 40 s runs out first), temperatures at 40 and
 * 100 s, strain between them (last reading or interpolated) and long after (stale), without companions.
 */
const SCRIPT: LoggerFrame[] = [
  { t: -10, logger: 'lg', values: strain(0, true) },
  { t: 30, logger: 'lg', values: strain(1, true) },
  { t: 40, logger: 'lt', values: [['t1', 10], ['t2', 12]] as Array<[string, number]> },
  { t: 70, logger: 'lg', values: strain(2, true) },
  { t: 100, logger: 'lt', values: [['t1', 20], ['t2', 18]] as Array<[string, number]> },
  { t: 300, logger: 'lg', values: strain(3, false) },
].map((f) => ({
  structureId: 'walk', loggerId: f.logger, timeMs: T + f.t * 1000, seq: null, arrivalMs: T + f.t * 1000 + 500, values: new Map(f.values),
}));

const plain = (_k: string, v: unknown) => (v instanceof Map ? [...v.entries()] : v);

/** Everything downstream sees of a document: the processed results and the alarm engine's lookups; or the problems. */
function outputsOf(doc: Doc): { ok: true; text: string } | { ok: false; problems: string[] } {
  const r = compileStructure(doc);
  if (!r.ok) return { ok: false, problems: r.problems.map((p) => `${p.path}: ${p.reason}`) };
  const processor = new FrameProcessor<null>(r.structure);
  const done = SCRIPT.flatMap((f) => processor.onFrame({ ...f, structureId: r.structure.structureId }, null, f.arrivalMs));
  done.push(...processor.flush());
  const results = done.map((p) => ({ results: p.results, temperatures: p.temperatures }));
  return { ok: true, text: JSON.stringify({ results, lookups: alarmLookups(r.structure) }, plain) };
}

type Expect = 'changes' | 'refused' | { annotation: string } | { elsewhere: string };
/** `because`: what a refusal must say (default: it names the key). */
interface Entry { change: (d: Doc) => void; expect: Expect; because?: RegExp }

const gauge = (d: Doc, id: string) => d.gauges.find((g: Doc) => g.id === id);
const group = (d: Doc, id: string) => d.groups.find((g: Doc) => g.id === id);
const material = (d: Doc, id: string) => d.materials.find((m: Doc) => m.id === id);
const sensor = (d: Doc, id: string) => d.temperature_sensors.find((t: Doc) => t.id === id);
const changes = (change: (d: Doc) => void): Entry => ({ change, expect: 'changes' });
const refused = (change: (d: Doc) => void, because?: RegExp): Entry => ({ change, expect: 'refused', because });

/** The temperature join and the other keys every group kind shares, for group `id`. */
function commonGroupKeys(kind: string, id: string, extra: Record<string, Entry>): Record<string, Entry> {
  const at = `groups[]{${kind}}`;
  const entries: Record<string, Entry> = {
    [`${at}.id`]: changes((d) => { group(d, id).id = `${id}2`; }),
    // Another kind reads the group's keys otherwise: its own keys are unknown there, or too few elements.
    [`${at}.kind`]: refused((d) => { group(d, id).kind = kind === 'single' ? 'plane_rosette' : 'single'; }, /unknown key|needs at least|takes at most/),
    [`${at}.material`]: refused((d) => { group(d, id).material = 'nope'; }),
    [`${at}.zone`]: changes((d) => { group(d, id).zone = 'elsewhere'; }),
    [`${at}.location`]: changes((d) => { group(d, id).location = 'moved'; }),
    [`${at}.temperature_sensors`]: changes((d) => { group(d, id).temperature_sensors = []; }),
    [`${at}.temperature`]: changes((d) => { delete group(d, id).temperature; }),
    [`${at}.temperature.max_age_s`]: changes((d) => { group(d, id).temperature.max_age_s = 1000; }),
    [`${at}.temperature.withhold_when_missing`]: changes((d) => { group(d, id).temperature.withhold_when_missing = !group(d, id).temperature.withhold_when_missing; }),
    [`${at}.residual_limit_micro`]: refused((d) => { group(d, id).residual_limit_micro = 20; }),
  };
  return { ...entries, ...extra };
}

const TABLE: Record<string, Entry> = {
  schema_version: refused((d) => { d.schema_version = 2; }),
  structure: refused((d) => { delete d.structure; }),
  'structure.id': changes((d) => { d.structure.id = 'walk-2'; }),
  'structure.name': { change: (d) => { d.structure.name = 'Renamed'; }, expect: { annotation: 'shown on the live page (src/app/live-page)' } },
  'structure.location': { change: (d) => { d.structure.location = 'elsewhere'; }, expect: { annotation: 'for people reading the file' } },
  'structure.description': { change: (d) => { d.structure.description = 'other'; }, expect: { annotation: 'for people reading the file' } },
  materials: refused((d) => { d.materials = []; }),
  loggers: refused((d) => { d.loggers = []; }),
  'loggers[].id': refused((d) => { d.loggers[1].id = 'lt2'; }, /unknown logger "lt"/),
  'loggers[].description': changes((d) => { d.loggers[0].description = 'other cabinet'; }),
  'loggers[].expected_interval_s': changes((d) => { d.loggers[0].expected_interval_s = 5; }),
  temperature_sensors: refused((d) => { d.temperature_sensors = []; }),
  'temperature_sensors[].id': refused((d) => { sensor(d, 'tA').id = 'tZ'; }, /unknown temperature sensor "tA"/),
  'temperature_sensors[].kind': { change: (d) => { sensor(d, 'tA').kind = 'rtd'; }, expect: { annotation: 'the sensor type, for the crew; both report degC' } },
  'temperature_sensors[].description': changes((d) => { sensor(d, 'tA').description = 'moved sensor'; }),
  'temperature_sensors[].channel': changes((d) => { sensor(d, 'tA').channel = { logger: 'lt', channel: 't9' }; }),
  'temperature_sensors[].channel.logger': changes((d) => { sensor(d, 'tA').channel.logger = 'lg'; }),
  'temperature_sensors[].channel.channel': changes((d) => { sensor(d, 'tA').channel.channel = 't9'; }),
  'temperature_sensors[].offset_degC': changes((d) => { sensor(d, 'tA').offset_degC = 2; }),
  'temperature_sensors[].valid_range_degC': changes((d) => { sensor(d, 'tA').valid_range_degC = [30, 40]; }),
  gauges: refused((d) => { d.gauges = []; }),
  'gauges[].id': refused((d) => { gauge(d, 'p3').id = 'p9'; }, /unknown gauge "p3"/),
  'gauges[].kind': refused((d) => { gauge(d, 'p3').kind = 'vibrating_wire'; }, /vibrating-wire gauge/),
  'gauges[].description': changes((d) => { gauge(d, 'p3').description = 'relabelled'; }),
  'gauges[].channel': changes((d) => { gauge(d, 'p3').channel = { logger: 'lg', channel: 'p9' }; }),
  'gauges[].channel.logger': refused((d) => { gauge(d, 'p3').channel.logger = 'lt'; }),
  'gauges[].channel.channel': changes((d) => { gauge(d, 'p3').channel.channel = 'p9'; }),
  'gauges[].signal': changes((d) => { gauge(d, 'p3').signal = { unit: 'mV/V', gauge_factor: 2, bridge: 'quarter' }; }),
  'gauges[].signal{microstrain}.unit': refused((d) => { gauge(d, 'p3').signal.unit = 'mV/V'; }, /signal\.(bridge|gauge_factor)/),
  'gauges[].signal{mV/V}.unit': refused((d) => { gauge(d, 'p0').signal.unit = 'microstrain'; }, /unknown key/),
  'gauges[].signal{mV/V}.gauge_factor': changes((d) => { gauge(d, 'p0').signal.gauge_factor = 2.2; }),
  'gauges[].signal{mV/V}.bridge': changes((d) => { gauge(d, 'p1').signal.bridge = 'full'; }),
  'gauges[].signal{mV/V}.gauge_resistance_ohm': changes((d) => { gauge(d, 'p0').signal.gauge_resistance_ohm = 350; }),
  'gauges[].signal{mV/V}.lead_resistance_ohm': changes((d) => { gauge(d, 'p0').signal.lead_resistance_ohm = 0.5; }),
  'gauges[].signal{mV/V}.gauge_factor_temp_coeff_per_degC': changes((d) => { gauge(d, 'p0').signal.gauge_factor_temp_coeff_per_degC = 3e-4; }),
  'gauges[].signal{mV/V}.gauge_factor_ref_temperature_degC': changes((d) => { gauge(d, 'p0').signal.gauge_factor_ref_temperature_degC = 15; }),
  'gauges[].signal{Hz|digits}.unit': changes((d) => { gauge(d, 's1').signal.unit = 'digits'; }),
  'gauges[].signal{Hz|digits}.micro_per_digit': changes((d) => { gauge(d, 's1').signal.micro_per_digit = 3.2; }),
  'gauges[].signal{Hz|digits}.calibration_multiplier': changes((d) => { gauge(d, 's1').signal.calibration_multiplier = 0.98; }),
  'gauges[].signal{Hz|digits}.wire_alpha_per_degC': changes((d) => { gauge(d, 's1').signal.wire_alpha_per_degC = 12.5e-6; }),
  'gauges[].signal{Hz|digits}.gauge_factor': refused((d) => { gauge(d, 's1').signal.gauge_factor = 3.3; }),
  'gauges[].signal{Hz|digits}.batch_factor': refused((d) => { gauge(d, 's1').signal.batch_factor = 0.97; }),
  'gauges[].zero_reading': changes((d) => { gauge(d, 'p3').zero_reading = 10; }),
  'gauges[].zero_temperature_degC': refused((d) => { gauge(d, 'p3').zero_temperature_degC = 25; }),
  'gauges[].transverse_sensitivity': changes((d) => { gauge(d, 'p3').transverse_sensitivity = 0.03; }),
  'gauges[].transverse_calibration_nu': changes((d) => { gauge(d, 'p0').transverse_calibration_nu = 0.25; }),
  'gauges[].thermal_output': changes((d) => { delete gauge(d, 'p3').thermal_output; }),
  'gauges[].thermal_output.coefficients_micro': changes((d) => { gauge(d, 'p0').thermal_output.coefficients_micro = [-5, 0.4, -0.004]; }),
  'gauges[].thermal_output.characterised_on_alpha_per_degC': changes((d) => { gauge(d, 'p0').thermal_output.characterised_on_alpha_per_degC = 12e-6; }),
  'gauges[].thermal_output.gauge_factor': changes((d) => { gauge(d, 'p0').thermal_output.gauge_factor = 2.05; }),
  'gauges[].valid_range': changes((d) => { gauge(d, 'p0').valid_range = [0.205, 5]; }),
  groups: refused((d) => { d.groups = []; }),
  ...commonGroupKeys('plane_rosette', 'P', {
    'groups[]{plane_rosette}.temperature.mode': changes((d) => { group(d, 'P').temperature = { ...group(d, 'P').temperature, mode: 'last', max_wait_s: 0 }; }),
    'groups[]{plane_rosette}.temperature.max_wait_s': changes((d) => { group(d, 'P').temperature.max_wait_s = 0; }),
    'groups[]{plane_rosette}.fit_std_error_limit_micro': changes((d) => { group(d, 'P').fit_std_error_limit_micro = 1e-6; }),
    'groups[]{plane_rosette}.elements': changes((d) => { group(d, 'P').elements.pop(); delete group(d, 'P').fit_std_error_limit_micro; }),
    'groups[]{plane_rosette}.elements[].gauge': refused((d) => { group(d, 'P').elements[0].gauge = 'nope'; }),
    'groups[]{plane_rosette}.elements[].angle_deg': changes((d) => { group(d, 'P').elements[1].angle_deg = 50; }),
    'groups[]{plane_rosette}.material_angle_deg': changes((d) => { group(d, 'P').material_angle_deg = 35; }),
  }),
  ...commonGroupKeys('solid_cluster', 'S', {
    'groups[]{solid_cluster}.temperature.mode': changes((d) => { group(d, 'S').temperature = { ...group(d, 'S').temperature, mode: 'interpolate', max_wait_s: 40 }; }),
    'groups[]{solid_cluster}.temperature.max_wait_s': refused((d) => { group(d, 'S').temperature.max_wait_s = 40; }),
    'groups[]{solid_cluster}.fit_std_error_limit_micro': changes((d) => { group(d, 'S').fit_std_error_limit_micro = 1e-6; }),
    'groups[]{solid_cluster}.elements': changes((d) => { group(d, 'S').elements.pop(); delete group(d, 'S').fit_std_error_limit_micro; }),
    'groups[]{solid_cluster}.elements[].gauge': refused((d) => { group(d, 'S').elements[1].gauge = 'nope'; }),
    'groups[]{solid_cluster}.elements[].direction': changes((d) => { group(d, 'S').elements[6].direction = [1, -1, 0.7]; }),
    'groups[]{solid_cluster}.elements[].transverse_direction': changes((d) => { group(d, 'S').elements[0].transverse_direction = [0, 0, 1]; }),
    'groups[]{solid_cluster}.companion_gauge': changes((d) => { delete group(d, 'S').companion_gauge; }),
    'groups[]{solid_cluster}.material_rotation_deg': changes((d) => { delete group(d, 'S').material_rotation_deg; }),
    'groups[]{solid_cluster}.material_rotation_deg.about_z': changes((d) => { group(d, 'S').material_rotation_deg.about_z = 40; }),
    'groups[]{solid_cluster}.material_rotation_deg.about_y': changes((d) => { group(d, 'S').material_rotation_deg.about_y = 40; }),
    'groups[]{solid_cluster}.material_rotation_deg.about_x': changes((d) => { group(d, 'S').material_rotation_deg.about_x = 40; }),
  }),
  ...commonGroupKeys('single', 'U', {
    'groups[]{single}.temperature.mode': changes((d) => { group(d, 'U').temperature = { ...group(d, 'U').temperature, mode: 'interpolate', max_wait_s: 40 }; }),
    'groups[]{single}.temperature.max_wait_s': refused((d) => { group(d, 'U').temperature.max_wait_s = 40; }),
    'groups[]{single}.fit_std_error_limit_micro': refused((d) => { group(d, 'U').fit_std_error_limit_micro = 10; }),
    'groups[]{single}.elements': refused((d) => { group(d, 'U').elements = []; }),
    'groups[]{single}.elements[].gauge': refused((d) => { group(d, 'U').elements[0].gauge = 'nope'; }),
    'groups[]{single}.companion_gauge': changes((d) => { delete group(d, 'U').companion_gauge; }),
    'groups[]{single}.material_angle_deg': refused((d) => { group(d, 'U').material_angle_deg = 30; }), // the material is isotropic
  }),
  alarms: { change: () => {}, expect: { elsewhere: 'the alarm module\'s schema, with its own tests in test/alarms' } },
  fatigue: { change: () => {}, expect: { elsewhere: 'the fatigue section, compiled and tested in test/fatigue (it changes damage, not the results)' } },
  rezero: { change: () => {}, expect: { elsewhere: 'who may rezero which groups: the rezero module\'s schema, tested in test/rezero (it changes results only through a request)' } },
  storage: { change: () => {}, expect: { elsewhere: 'the storage section, compiled and tested in test/pipeline/storage-*.test.ts (it changes what is written, not the results)' } },
};

/** Material keys for material `id` of `kind`: the capacities and the shared keys, plus its constants. */
function materialKeys(kind: string, id: string, constants: Record<string, (d: Doc) => void>): Record<string, Entry> {
  const at = `materials[]{${kind}}`;
  const out: Record<string, Entry> = {
    [`${at}.id`]: refused((d) => { material(d, id).id = `${id}2`; }, new RegExp(`unknown material "${id}"`)),
    // Another kind reads the material's keys otherwise: its own constants are unknown or missing there.
    [`${at}.kind`]: refused((d) => { material(d, id).kind = kind === 'isotropic' ? 'orthotropic' : 'isotropic'; }, /unknown key|field is missing/),
    [`${at}.description`]: { change: (d) => { material(d, id).description = 'other'; }, expect: { annotation: 'for people reading the file (where the constants come from)' } },
    [`${at}.yield_strength_MPa`]: changes((d) => { material(d, id).yield_strength_MPa *= 1.1; }),
    [`${at}.tensile_strength_MPa`]: changes((d) => { material(d, id).tensile_strength_MPa *= 1.1; }),
    [`${at}.compressive_strength_MPa`]: changes((d) => { material(d, id).compressive_strength_MPa *= 1.1; }),
  };
  for (const [k, change] of Object.entries(constants)) out[`${at}.${k}`] = changes(change);
  return out;
}
Object.assign(TABLE,
  materialKeys('isotropic', 'steel', {
    E_MPa: (d) => { material(d, 'steel').E_MPa = 200000; },
    nu: (d) => { material(d, 'steel').nu = 0.28; },
    alpha_per_degC: (d) => { material(d, 'steel').alpha_per_degC = 11e-6; },
  }),
  materialKeys('orthotropic', 'ply', Object.fromEntries(
    ['E1_MPa', 'E2_MPa', 'E3_MPa', 'nu12', 'nu13', 'nu23', 'G12_MPa', 'G13_MPa', 'G23_MPa'].map((k) => [k, (d: Doc) => { material(d, 'ply')[k] *= 1.05; }])
      .concat([['alpha_per_degC', (d: Doc) => { material(d, 'ply').alpha_per_degC = [-0.5e-6, 31e-6, 28e-6]; }]]),
  )),
  materialKeys('stiffness_matrix', 'block', {
    stiffness_MPa: (d) => { material(d, 'block').stiffness_MPa[5][5] = 16000; },
    alpha_per_degC: (d) => { material(d, 'block').alpha_per_degC = [9e-6, 10e-6, 11e-6, 0, 0, 2e-6]; },
  }),
);

/** Every key path of a zod schema: `a.b`, `a[]` for array elements, `{value}` for a discriminated option. */
function schemaKeys(schema: any, path = '', out: string[] = []): string[] {
  const def = schema._zod.def;
  const object = (s: any, at: string) => {
    for (const [k, v] of Object.entries(s._zod.def.shape)) {
      const p = at === '' ? k : `${at}.${k}`;
      out.push(p);
      schemaKeys(v, p, out);
    }
  };
  if (['optional', 'default', 'prefault', 'nullable', 'readonly'].includes(def.type)) schemaKeys(def.innerType, path, out);
  else if (def.type === 'pipe') schemaKeys(def.in, path, out);
  else if (def.type === 'array') schemaKeys(def.element, `${path}[]`, out);
  else if (def.type === 'object') object(schema, path);
  else if (def.type === 'union' && def.discriminator) {
    for (const o of def.options) object(o, `${path}{${[...o._zod.def.shape[def.discriminator]._zod.values].join('|')}}`);
  }
  return out;
}

describe('every key of the structure schema changes an output or is refused', () => {
  // `alarms{true}.disabled` (alarms off on purpose) is tested where it acts: test/integration/run-alarms-decision.test.ts.
  const keys = schemaKeys(StructureConfigSchema).filter((k) => !/^alarms[.{]/.test(k) && !k.startsWith('fatigue.') && !k.startsWith('rezero.') && !k.startsWith('storage.'));
  const base = outputsOf(baseDocument());

  it('the base document compiles and runs', () => {
    expect(base.ok, base.ok ? '' : base.problems.join('\n')).toBe(true);
    expect(keys.length).toBeGreaterThan(100);
  });

  it('the table has exactly one entry per schema key (a new key needs an entry)', () => {
    expect(Object.keys(TABLE).sort()).toEqual([...keys].sort());
  });

  for (const key of keys) {
    const entry = TABLE[key];
    if (entry === undefined) continue; // reported by the test above
    const e = entry.expect;
    if (typeof e === 'object') {
      it(`${key}: ${'annotation' in e ? `annotation, ${e.annotation}` : `walked elsewhere: ${e.elsewhere}`}`, () => {
        // Free text (or the alarm section) only: a number or a switch may not hide here.
        const doc = baseDocument();
        entry.change(doc);
        expect(outputsOf(doc).ok).toBe(true);
      });
      continue;
    }
    it(`${key}: ${e}`, () => {
      const doc = baseDocument();
      entry.change(doc);
      expect(JSON.stringify(doc)).not.toBe(JSON.stringify(baseDocument()));
      const r = outputsOf(doc);
      if (e === 'refused') {
        expect(r.ok, 'expected a refusal').toBe(false);
        // The refusal is for this key, not for something else the change broke.
        const leaf = key.slice(key.lastIndexOf('.') + 1);
        const because = entry.because ?? new RegExp(`\\b${leaf}\\b`);
        if (!r.ok) expect(r.problems.some((p) => because.test(p)), r.problems.join('\n')).toBe(true);
      } else {
        expect(r.ok, r.ok ? '' : r.problems.join('\n')).toBe(true);
        if (r.ok && base.ok) expect(r.text).not.toBe(base.text);
      }
    });
  }
});
