import type { ValidationProblem } from '../validation/issues.js';
import { didYouMean } from '../validation/nearest.js';
import type { GaugeConfig } from './gauge-schema.js';
import type { StructureConfig } from './structure-schema.js';

/**
 * Checks that need the whole document: unique ids, references that resolve, one channel per
 * sensor, one group per gauge, gauge kind matching its signal. Returns every problem at once.
 */
export function crossCheck(c: StructureConfig): ValidationProblem[] {
  const problems: ValidationProblem[] = [];
  const add = (path: string, reason: string) => problems.push({ path, reason });
  const ids = (list: { id: string }[], name: string) => {
    const seen = new Map<string, number>();
    list.forEach((x, i) => {
      if (seen.has(x.id)) add(`${name}[${i}].id`, `duplicate id "${x.id}" (first used at ${name}[${seen.get(x.id)}])`);
      else seen.set(x.id, i);
    });
    return seen;
  };
  const materials = ids(c.materials, 'materials');
  const loggers = ids(c.loggers, 'loggers');
  const gauges = ids(c.gauges, 'gauges');
  const sensors = ids(c.temperature_sensors, 'temperature_sensors');
  ids(c.groups, 'groups');

  const channels = new Map<string, string>();
  const claimChannel = (ch: { logger: string; channel: string }, path: string) => {
    if (!loggers.has(ch.logger)) add(`${path}.logger`, `unknown logger "${ch.logger}"${didYouMean(ch.logger, loggers.keys())}`);
    const key = `${ch.logger}/${ch.channel}`;
    const owner = channels.get(key);
    if (owner) add(`${path}.channel`, `channel "${ch.channel}" of logger "${ch.logger}" is already used by ${owner}`);
    else channels.set(key, path.replace(/\.channel$/, ''));
  };
  c.gauges.forEach((g, i) => {
    claimChannel(g.channel, `gauges[${i}].channel`);
    const vw = g.signal.unit === 'Hz' || g.signal.unit === 'digits';
    if (g.kind === 'vibrating_wire' && !vw) add(`gauges[${i}].signal.unit`, 'a vibrating-wire gauge reads "Hz" or "digits"');
    if (g.kind !== 'vibrating_wire' && vw) add(`gauges[${i}].signal.unit`, `a ${g.kind} gauge reads "microstrain" or "mV/V", not "${g.signal.unit}"`);
    if (g.valid_range && g.valid_range[0] >= g.valid_range[1]) add(`gauges[${i}].valid_range`, 'the lower bound must be below the upper bound');
    problems.push(...keysThatWouldDoNothing(g, `gauges[${i}]`));
  });
  c.temperature_sensors.forEach((t, i) => claimChannel(t.channel, `temperature_sensors[${i}].channel`));

  const usedBy = new Map<string, string>();
  c.groups.forEach((grp, gi) => {
    const base = `groups[${gi}]`;
    if (!materials.has(grp.material)) add(`${base}.material`, `unknown material "${grp.material}"${didYouMean(grp.material, materials.keys())}`);
    const orientation = grp.kind === 'solid_cluster' ? 'material_rotation_deg' : 'material_angle_deg';
    const material = c.materials[materials.get(grp.material) ?? -1];
    if (material?.kind === 'isotropic' && (grp.kind === 'solid_cluster' ? grp.material_rotation_deg : grp.material_angle_deg) !== undefined) {
      add(`${base}.${orientation}`, `material "${grp.material}" is isotropic: it is the same in every orientation, so ${orientation} would change nothing (remove it)`);
    }
    grp.temperature_sensors.forEach((t, ti) => {
      if (!sensors.has(t)) add(`${base}.temperature_sensors[${ti}]`, `unknown temperature sensor "${t}"${didYouMean(t, sensors.keys())}`);
    });
    const claim = (gaugeId: string, path: string) => {
      if (!gauges.has(gaugeId)) return add(path, `unknown gauge "${gaugeId}"${didYouMean(gaugeId, gauges.keys())}`);
      const owner = usedBy.get(gaugeId);
      if (owner) add(path, `gauge "${gaugeId}" already belongs to ${owner}`);
      else usedBy.set(gaugeId, base);
    };
    const members = grp.elements.map((e, ei) => {
      claim(e.gauge, `${base}.elements[${ei}].gauge`);
      return c.gauges[gauges.get(e.gauge) ?? -1];
    });
    const companionId = 'companion_gauge' in grp ? grp.companion_gauge : undefined;
    if (companionId !== undefined) claim(companionId, `${base}.companion_gauge`);
    const companion = companionId !== undefined ? c.gauges[gauges.get(companionId) ?? -1] : undefined;
    const present = members.filter((g) => g !== undefined);
    const loggerIds = new Set(present.map((g) => g.channel.logger));
    if (loggerIds.size > 1) add(`${base}.elements`, `all elements of a group must be read by one logger (one scan = one strain state); found ${[...loggerIds].join(', ')}`);
    const zeros = new Set([...present, ...(companion ? [companion] : [])].map((g) => g.zero_temperature_degC));
    if (zeros.size > 1) add(`${base}.elements`, `all gauges of a group must share one zero_temperature_degC (they share one reference state); found ${[...zeros].join(', ')}`);
    const unknowns = grp.kind === 'solid_cluster' ? 6 : grp.kind === 'plane_rosette' ? 3 : 1;
    if (grp.fit_std_error_limit_micro !== undefined && grp.elements.length <= unknowns) {
      add(`${base}.fit_std_error_limit_micro`, `the group has ${grp.elements.length} element(s) for ${unknowns} unknown(s): no redundancy, so no residual to compare (remove the key, or add elements)`);
    }
    if (grp.temperature.mode === 'last' && grp.temperature.max_wait_s > 0) {
      add(`${base}.temperature.max_wait_s`, 'a wait for the next temperature reading applies to mode "interpolate" only; with mode "last" it would change nothing');
    }
    if (grp.kind === 'solid_cluster') {
      grp.elements.forEach((e, ei) => {
        const len = Math.hypot(...e.direction);
        if (!(len > 1e-9)) add(`${base}.elements[${ei}].direction`, 'the direction must not be the zero vector');
        const g = members[ei];
        if (g && g.transverse_sensitivity === 0 && e.transverse_direction) {
          add(`${base}.elements[${ei}].transverse_direction`, `gauge "${g.id}" has no transverse_sensitivity: its transverse direction would change nothing`);
        }
        if (g && g.transverse_sensitivity !== 0) {
          if (!e.transverse_direction) add(`${base}.elements[${ei}].transverse_direction`, 'required when the gauge has transverse_sensitivity');
          else {
            const tl = Math.hypot(...e.transverse_direction);
            const dot = e.direction.reduce((s, v, k) => s + v * e.transverse_direction![k], 0) / (len * tl);
            if (!(tl > 1e-9) || Math.abs(dot) > 1e-3) add(`${base}.elements[${ei}].transverse_direction`, 'must be a non-zero vector perpendicular to direction');
          }
        }
      });
    }
  });
  return problems;
}

/**
 * Keys of a gauge that its other settings make inert: refused, since an engineer who wrote them
 * expects them to act. Each message says why and what to do.
 */
function keysThatWouldDoNothing(g: GaugeConfig, at: string): ValidationProblem[] {
  const out: ValidationProblem[] = [];
  const add = (path: string, reason: string) => out.push({ path: `${at}.${path}`, reason });
  const sig = g.signal;
  if (g.kind === 'vibrating_wire' && g.thermal_output !== undefined) {
    add('thermal_output', 'a vibrating-wire gauge has no thermal-output curve: its temperature effect is the wire\'s own expansion, given by signal.wire_alpha_per_degC (remove thermal_output)');
  }
  if (sig.unit === 'microstrain' && g.thermal_output?.gauge_factor !== undefined) {
    add('thermal_output.gauge_factor', 'the logger reports microstrain with a gauge factor this file does not know, so the curve cannot be rescaled here: rescale it before entering it, or give the signal in mV/V');
  }
  if (sig.unit === 'mV/V') {
    if (sig.bridge !== 'quarter') {
      // Leads of a half or full bridge sit in the excitation and output lines, not in one arm: their
      // effect depends on the wiring (sense lines, shunt calibration) and is not modelled here.
      for (const k of ['lead_resistance_ohm', 'gauge_resistance_ohm'] as const) {
        if (sig[k] !== undefined) add(`signal.${k}`, `the lead-wire correction 1 + RL/Rg holds for a 2-wire quarter bridge only; for a ${sig.bridge} bridge correct the leads in the wiring (remote sense) or by shunt calibration, and remove the key`);
      }
    } else if (sig.gauge_resistance_ohm !== undefined && sig.lead_resistance_ohm === undefined) {
      add('signal.gauge_resistance_ohm', 'the gauge resistance is used only by the lead-wire correction: give signal.lead_resistance_ohm too, or remove it');
    }
    if (sig.gauge_factor_ref_temperature_degC !== undefined && sig.gauge_factor_temp_coeff_per_degC === 0) {
      add('signal.gauge_factor_ref_temperature_degC', 'without signal.gauge_factor_temp_coeff_per_degC the gauge factor does not change with temperature, so its reference temperature would change nothing');
    }
  }
  if (g.transverse_calibration_nu !== undefined && g.transverse_sensitivity === 0) {
    add('transverse_calibration_nu', 'used only with transverse_sensitivity (the calibration beam\'s Poisson ratio enters the Kt correction): give transverse_sensitivity too, or remove it');
  }
  return out;
}
